#pragma once
// A reference ellipsoid and its principal radii of curvature.
//   a  semi-major axis (m)        f  flattening          e² = f(2 − f)
//   M  meridian radius of curvature  M = a(1 − e²) / (1 − e² sin²φ)^{3/2}
//   N  prime-vertical radius         N = a / (1 − e² sin²φ)^{1/2}
namespace lookfar {

struct Ellipsoid {
    double a = 6378137.0;            ///< semi-major axis, metres
    double f = 1.0 / 298.257223563;  ///< flattening (0 for a sphere)

    static Ellipsoid wgs84() { return {}; }
    static Ellipsoid sphere(double radius_m) { return {radius_m, 0.0}; }

    double e2() const { return f * (2.0 - f); }
    double b() const { return a * (1.0 - f); }
    /// Meridian radius of curvature at geodetic latitude `lat_deg`, metres.
    double meridianRadius(double lat_deg) const;
    /// Prime-vertical radius of curvature at geodetic latitude `lat_deg`, metres.
    double primeVerticalRadius(double lat_deg) const;
    /// Area between the equator and latitude `lat_deg`, per radian of longitude, m² (signed).
    double zoneAreaPerRadian(double lat_deg) const;
};

}  // namespace lookfar
