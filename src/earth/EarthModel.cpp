#include "lookfar/earth/EarthModel.hpp"

#include <cmath>
#include <limits>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Units.hpp"

namespace lookfar {

EarthShape parseEarthShape(const std::string& text) {
    if (text == "ellipsoid")
        return EarthShape::Ellipsoid;
    if (text == "sphere")
        return EarthShape::Sphere;
    if (text == "flat")
        return EarthShape::Flat;
    throw InvalidOption("earth_model", "'" + text + "' is not one of ellipsoid, sphere, flat");
}

std::string toString(EarthShape shape) {
    switch (shape) {
        case EarthShape::Ellipsoid:
            return "ellipsoid";
        case EarthShape::Sphere:
            return "sphere";
        case EarthShape::Flat:
            return "flat";
    }
    return "?";
}

EarthModel::EarthModel(EarthShape shape, Ellipsoid ellipsoid, double sphere_radius_m,
                       double refraction)
    : shape_(shape), ellipsoid_(ellipsoid), sphere_radius_m_(sphere_radius_m), k_(refraction) {
    if (!std::isfinite(refraction)) {
        throw InvalidOption("refraction", "the refraction coefficient must be a finite number");
    }
    if (refraction >= 1.0) {
        throw InvalidOption(
            "refraction",
            "k = " + std::to_string(refraction) +
                " would bend sightlines at least as much as the Earth curves (ducting); "
                "lookfar needs k < 1");
    }
    if (refraction < -1.0) {
        throw InvalidOption(
            "refraction", "k = " + std::to_string(refraction) + " is outside the range −1 ≤ k < 1");
    }
    if (!(sphere_radius_m > 0) || !std::isfinite(sphere_radius_m)) {
        throw InvalidOption("earth_radius_m", "the radius must be a positive number of metres");
    }
    if (!(ellipsoid.a > 0) || !(ellipsoid.f >= 0 && ellipsoid.f < 1)) {
        throw InputError("the CRS's ellipsoid has an invalid semi-major axis or flattening");
    }
}

double EarthModel::radiusAlong(double lat_deg, double azimuth_deg) const {
    switch (shape_) {
        case EarthShape::Flat:
            return std::numeric_limits<double>::infinity();
        case EarthShape::Sphere:
            return sphere_radius_m_;
        case EarthShape::Ellipsoid:
            break;
    }
    double m = ellipsoid_.meridianRadius(lat_deg);
    double n = ellipsoid_.primeVerticalRadius(lat_deg);
    double s = std::sin(azimuth_deg * kDegToRad);
    double c = std::cos(azimuth_deg * kDegToRad);
    return m * n / (m * s * s + n * c * c);
}

double EarthModel::effectiveRadius(double lat_deg, double azimuth_deg) const {
    return radiusAlong(lat_deg, azimuth_deg) / (1.0 - k_);
}

double EarthModel::nominalRadius(double lat_deg) const {
    switch (shape_) {
        case EarthShape::Flat:
            return std::numeric_limits<double>::infinity();
        case EarthShape::Sphere:
            return sphere_radius_m_;
        case EarthShape::Ellipsoid:
            break;
    }
    return std::sqrt(ellipsoid_.meridianRadius(lat_deg) * ellipsoid_.primeVerticalRadius(lat_deg));
}

Curvature EarthModel::curvatureAt(double lat_deg) const {
    Curvature c;
    switch (shape_) {
        case EarthShape::Flat:
            return c;
        case EarthShape::Sphere:
            c.c_north = c.c_east = (1.0 - k_) / (2.0 * sphere_radius_m_);
            return c;
        case EarthShape::Ellipsoid:
            c.c_north = (1.0 - k_) / (2.0 * ellipsoid_.meridianRadius(lat_deg));
            c.c_east = (1.0 - k_) / (2.0 * ellipsoid_.primeVerticalRadius(lat_deg));
            return c;
    }
    return c;
}

double EarthModel::drop(double d_m, double lat_deg, double azimuth_deg) const {
    if (shape_ == EarthShape::Flat)
        return 0.0;
    return d_m * d_m / (2.0 * effectiveRadius(lat_deg, azimuth_deg));
}

double EarthModel::sphereElevationAngleDeg(double h1_m, double h2_m, double d_m, double r_eff_m) {
    if (!std::isfinite(r_eff_m))
        return std::atan2(h2_m - h1_m, d_m) * kRadToDeg;
    double theta = d_m / r_eff_m;
    double x = (r_eff_m + h2_m) * std::sin(theta);
    double y = (r_eff_m + h2_m) * std::cos(theta) - (r_eff_m + h1_m);
    return std::atan2(y, x) * kRadToDeg;
}

double EarthModel::sphereChordM(double h1_m, double h2_m, double d_m, double r_m) {
    if (!std::isfinite(r_m))
        return std::hypot(d_m, h2_m - h1_m);
    // 1 − cos θ = 2 sin²(θ/2): no loss of precision for short lines.
    const double a = r_m + h1_m, b = r_m + h2_m, half = std::sin(d_m / (2.0 * r_m));
    return std::sqrt((a - b) * (a - b) + 4.0 * a * b * half * half);
}

double EarthModel::sphereDipDeg(double h_m, double r_eff_m) {
    if (!std::isfinite(r_eff_m) || h_m <= 0)
        return 0.0;
    // acos loses precision for small angles; atan2 form of the same angle.
    return std::atan2(std::sqrt(h_m * (2.0 * r_eff_m + h_m)), r_eff_m) * kRadToDeg;
}

double EarthModel::sphereHorizonArcM(double h_m, double r_eff_m) {
    if (!std::isfinite(r_eff_m))
        return std::numeric_limits<double>::infinity();
    return r_eff_m * sphereDipDeg(h_m, r_eff_m) * kDegToRad;
}

double EarthModel::sphereHorizonTangentM(double h_m, double r_eff_m) {
    if (!std::isfinite(r_eff_m))
        return std::numeric_limits<double>::infinity();
    return std::sqrt(2.0 * r_eff_m * h_m + h_m * h_m);
}

double EarthModel::sphereDropExact(double d_m, double r_eff_m) {
    if (!std::isfinite(r_eff_m))
        return 0.0;
    return r_eff_m * (1.0 / std::cos(d_m / r_eff_m) - 1.0);
}

double EarthModel::sphereBulgeM(double d1_m, double d2_m, double r_eff_m) {
    if (!std::isfinite(r_eff_m))
        return 0.0;
    // The chord between the two ends passes at radius R′cos β / cos γ below the surface point,
    // β = (d1 + d2)/2R′ the half angle of the chord, γ = (d1 − d2)/2R′ the point's offset.
    return r_eff_m * (1.0 - std::cos((d1_m + d2_m) / (2.0 * r_eff_m)) /
                                std::cos((d1_m - d2_m) / (2.0 * r_eff_m)));
}

double EarthModel::radiusFromDip(double h_m, double dip_deg) {
    double c = std::cos(dip_deg * kDegToRad);
    return h_m * c / (1.0 - c);
}

}  // namespace lookfar
