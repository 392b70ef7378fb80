#pragma once
// EarthModel: the curved, refracting Earth the sightlines travel over.
//
// Notation
//   d      ground distance from the eye, metres
//   α      azimuth of the sightline, clockwise from north
//   φ      geodetic latitude of the eye
//   M, N   meridian and prime-vertical radii of curvature at φ (see Ellipsoid)
//   R_α    radius of curvature along α (Euler):  1/R_α = cos²α / M + sin²α / N
//   k      refraction coefficient, 0 ≤ k < 1 (0.13 light over land, 0.25 the 4/3-Earth of radio)
//   R′     effective radius R/(1 − k): refraction bends sightlines down, the Earth looks larger
//   drop   height of the surface below the eye's tangent plane, parabolic form d²/(2R′)
//
// With east/north offsets (e, n) and d² = e² + n², Euler's formula gives
//   drop = (1 − k)/2 · (n²/M + e²/N)
// which the engines evaluate without any trigonometry (Curvature::drop).
//
// The exact sphere formulas (sphere*) are for the path profile and for checks; they differ from
// the parabolic drop by 5d⁴/(24R′³): below 0.1 m at 100 km.
#include <string>

#include "lookfar/core/Ellipsoid.hpp"

namespace lookfar {

enum class EarthShape { Ellipsoid, Sphere, Flat };

/// Parses "ellipsoid", "sphere" or "flat"; throws UsageError otherwise.
EarthShape parseEarthShape(const std::string& text);
std::string toString(EarthShape shape);

/// Curvature of the Earth seen from one eye: drop of the surface with (east, north) offsets.
struct Curvature {
    double c_north = 0;  ///< (1 − k) / (2M), 1/m
    double c_east = 0;   ///< (1 − k) / (2N), 1/m
    /// Drop below the eye's tangent plane, after refraction, metres.
    double drop(double east_m, double north_m) const {
        return c_north * north_m * north_m + c_east * east_m * east_m;
    }
    /// Drop at distance d along azimuth given as unit components (sin α, cos α).
    double dropAlong(double d_m, double sin_az, double cos_az) const {
        return d_m * d_m * (c_north * cos_az * cos_az + c_east * sin_az * sin_az);
    }
};

class EarthModel {
  public:
    /// Mean Earth radius R₁ of the IUGG, metres.
    static constexpr double kMeanRadiusM = 6371008.8;
    /// Refraction coefficient of light over land (docs/design.md default).
    static constexpr double kDefaultRefraction = 0.13;

    /// Throws UsageError when k ≥ 1 (ducting), k is not finite, k < −1 or the radius ≤ 0.
    EarthModel(EarthShape shape = EarthShape::Ellipsoid, Ellipsoid ellipsoid = Ellipsoid::wgs84(),
               double sphere_radius_m = kMeanRadiusM, double refraction = kDefaultRefraction);

    EarthShape shape() const { return shape_; }
    double refraction() const { return k_; }
    double sphereRadiusM() const { return sphere_radius_m_; }
    const Ellipsoid& ellipsoid() const { return ellipsoid_; }

    /// Radius of curvature of the surface along azimuth `azimuth_deg` at latitude `lat_deg`,
    /// metres (Euler's formula; the sphere's radius; infinity when flat).
    double radiusAlong(double lat_deg, double azimuth_deg) const;
    /// Effective radius R_α / (1 − k) along that azimuth, metres (infinity when flat).
    double effectiveRadius(double lat_deg, double azimuth_deg) const;
    /// The radius reported in summaries: the sphere's, or the mean of M and N at lat_deg.
    double nominalRadius(double lat_deg) const;
    /// Curvature seen from an eye at `lat_deg`, with refraction.
    Curvature curvatureAt(double lat_deg) const;
    /// Parabolic drop d²(1 − k)/(2 R_α), metres.
    double drop(double d_m, double lat_deg, double azimuth_deg) const;

    // Exact formulas on a sphere of effective radius `r_eff_m` (use effectiveRadius()).
    /// Elevation angle (degrees) from a point at height h1 to one at height h2, `d_m` apart
    /// along the surface: atan2((R′+h2)cos θ − (R′+h1), (R′+h2) sin θ), θ = d/R′.
    static double sphereElevationAngleDeg(double h1_m, double h2_m, double d_m, double r_eff_m);
    /// Straight-line (slope) distance between a point at height h1 and one at height h2, `d_m`
    /// apart along a sphere of radius `r_m` (the true radius: the chord, as an instrument
    /// measures it): √((R+h1)² + (R+h2)² − 2(R+h1)(R+h2)cos θ), θ = d/R; √(d² + (h2−h1)²) when
    /// flat.
    static double sphereChordM(double h1_m, double h2_m, double d_m, double r_m);
    /// Dip of the sea horizon from height h: arccos(R′/(R′+h)), degrees.
    static double sphereDipDeg(double h_m, double r_eff_m);
    /// Distance along the surface to the sea horizon from height h: R′·arccos(R′/(R′+h)), m.
    static double sphereHorizonArcM(double h_m, double r_eff_m);
    /// Straight-line distance from height h to the tangent point: √(2R′h + h²), metres.
    static double sphereHorizonTangentM(double h_m, double r_eff_m);
    /// Height of the tangent plane above the surface at arc distance d: R′(1/cos θ − 1), m.
    static double sphereDropExact(double d_m, double r_eff_m);
    /// Bulge of the surface above the chord between two points d1 and d2 from either end:
    /// exact R′(1 − cos((d1 + d2)/2R′)/cos((d1 − d2)/2R′)) ≈ d1·d2/(2R′), metres.
    static double sphereBulgeM(double d1_m, double d2_m, double r_eff_m);
    /// Effective radius recovered from a measured dip θ at height h (Al-Biruni's relation):
    /// R = h cos θ / (1 − cos θ), metres.
    static double radiusFromDip(double h_m, double dip_deg);

  private:
    EarthShape shape_;
    Ellipsoid ellipsoid_;
    double sphere_radius_m_;
    double k_;
};

}  // namespace lookfar
