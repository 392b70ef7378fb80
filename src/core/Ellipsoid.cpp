#include "lookfar/core/Ellipsoid.hpp"

#include <cmath>

#include "lookfar/core/Units.hpp"

namespace lookfar {

double Ellipsoid::meridianRadius(double lat_deg) const {
    double s = std::sin(lat_deg * kDegToRad);
    double w2 = 1.0 - e2() * s * s;
    return a * (1.0 - e2()) / (w2 * std::sqrt(w2));
}

double Ellipsoid::primeVerticalRadius(double lat_deg) const {
    double s = std::sin(lat_deg * kDegToRad);
    return a / std::sqrt(1.0 - e2() * s * s);
}

double Ellipsoid::zoneAreaPerRadian(double lat_deg) const {
    // Area of the ellipsoid between the equator and φ over one radian of longitude:
    // b² [ sinφ / (2(1 − e² sin²φ)) + ln((1 + e sinφ)/(1 − e sinφ)) / (4e) ]; a sphere when e → 0.
    double s = std::sin(lat_deg * kDegToRad);
    double bb = b() * b();
    double ee = e2();
    if (ee < 1e-15)
        return a * a * s;
    double e = std::sqrt(ee);
    return bb *
           (s / (2.0 * (1.0 - ee * s * s)) + std::log((1.0 + e * s) / (1.0 - e * s)) / (4.0 * e));
}

}  // namespace lookfar
