// Azimuths (see Geodesy.hpp).
#include "lookfar/link/Geodesy.hpp"

#include <cmath>

namespace lookfar {

double wrap360(double az) {
    az = std::fmod(az, 360.0);
    if (az < 0)
        az += 360.0;
    return az >= 360.0 ? 0.0 : az;
}

}  // namespace lookfar
