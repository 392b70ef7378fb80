// AntennaPattern: the parabolic sector pattern of AntennaPattern.hpp.
#include "lookfar/radio/AntennaPattern.hpp"

#include <algorithm>
#include <cmath>

namespace lookfar {

double AntennaPattern::relativeGainDb(double azimuth_deg, double elevation_deg) const {
    double a_h = 0, a_v = 0;
    if (std::isfinite(beamwidth_deg)) {
        // Off-boresight angle folded into [0, 180].
        double off = std::fmod(std::fabs(azimuth_deg - this->azimuth_deg), 360.0);
        if (off > 180.0)
            off = 360.0 - off;
        a_h = -std::min(12.0 * (off / beamwidth_deg) * (off / beamwidth_deg), front_to_back_db);
    }
    if (std::isfinite(vertical_beamwidth_deg)) {
        const double off = elevation_deg + tilt_deg;  // a downtilt points the beam below 0°
        a_v = -std::min(12.0 * (off / vertical_beamwidth_deg) * (off / vertical_beamwidth_deg),
                        front_to_back_db);
    }
    return -std::min(-(a_h + a_v), front_to_back_db);
}

double verticalBeamwidthDeg(double gain_dbi, double beamwidth_deg) {
    return 31000.0 * std::pow(10.0, -0.1 * gain_dbi) / beamwidth_deg;
}

}  // namespace lookfar
