#pragma once
// PathProfile: the terrain between two points and the straight sightline joining them, over a
// curved, refracting Earth, with the first Fresnel zone of a radio link.
//
// Notation
//   A, B        the two ends ("from", "to"); D the ground length of the path A→B, metres
//   d           ground distance of a sample from A; d1 = d, d2 = D − d
//   R′          effective radius R_α/(1 − k) along the path (EarthModel::effectiveRadius)
//   θ = d/R′    angle at the Earth's centre between A and the sample; Θ = D/R′ for B
//   z(d)        terrain height (bilinear in the DEM), metres above the DEM's datum
//   z_A, z_B    the antennas (or eyes): ground + height above ground at each end
//   s(d)        sightline height above the datum surface, measured along the vertical at d
//   F1(d)       first Fresnel zone radius √(λ d1 d2 / D), λ = c/f
//
// The path is drawn in the plane of the Earth's centre, A and B, on a sphere of radius R′
// (refraction folded into the radius). With r_A = R′ + z_A and r_B = R′ + z_B, the straight
// chord from A to B crosses the vertical at angle θ at radius
//   r(θ) = r_A r_B sin Θ / (r_A sin θ + r_B sin(Θ − θ))
// so s(d) = r(θ) − R′ exactly (no parabolic approximation). The clearance is s(d) − z(d):
// positive where the sightline passes above the terrain. The Earth bulge b(d) is the height of
// the datum surface above the chord joining its points under A and B,
// R′(1 − cos(Θ/2)/cos(Θ/2 − θ)), ≈ d1 d2/(2R′); a profile plot raises terrain and sightline by b.
// Elevation angles at the ends are EarthModel::sphereElevationAngleDeg, whose sum is −Θ:
// the central angle D/R minus the refraction k·D/R.
#include <cstdint>
#include <limits>
#include <vector>

#include "lookfar/core/Grid.hpp"
#include "lookfar/core/Units.hpp"
#include "lookfar/earth/EarthModel.hpp"

namespace lookfar {

/// First Fresnel zone radius at distances d1, d2 (metres, ≥ 0) from the two ends of a path,
/// for a frequency in MHz (> 0): √(λ d1 d2 / (d1 + d2)), metres; 0 at either end.
double firstFresnelRadiusM(double d1_m, double d2_m, double frequency_mhz);

/// One place along the path where the terrain is sampled.
struct PathSample {
    double col = 0;         ///< continuous cell coordinate (cell centres are integers)
    double row = 0;         ///< continuous cell coordinate
    double distance_m = 0;  ///< ground distance from A, metres, non-decreasing, [0, D]
};

struct PathProfileInput {
    /// Samples from A (first, distance 0) to B (last, distance D = the path length), at most
    /// half a cell apart; built by the caller along the geodesic or the straight map line.
    std::vector<PathSample> samples;
    double from_height_m = 1.7;  ///< antenna (or eye) at A above the ground, metres, ≥ 0
    double to_height_m = 1.7;    ///< antenna (or eye) at B above the ground, metres, ≥ 0
    /// Radio frequency, MHz (> 0), or NaN for no Fresnel zone.
    double frequency_mhz = std::numeric_limits<double>::quiet_NaN();
    double latitude_deg = 45.0;  ///< latitude of the path's middle, degrees, for R_α
    double azimuth_deg = 0.0;    ///< true azimuth of the path at its middle, degrees, [0, 360)
};

/// The profile at one sample (NaN where the DEM has no data or there is no Fresnel zone).
struct ProfilePoint {
    double distance_m = 0;        ///< from A, metres
    double terrain_m = 0;         ///< z(d), metres (NaN = no data)
    double earth_bulge_m = 0;     ///< b(d), metres, ≥ 0
    double sightline_m = 0;       ///< s(d), metres above the datum
    double clearance_m = 0;       ///< s(d) − z(d), metres (NaN = no data)
    double fresnel_radius_m = 0;  ///< F1(d), metres (NaN without a frequency)
    double fresnel_fraction = 0;  ///< clearance / F1 (NaN at the ends or without a frequency)
};

struct PathProfileResult {
    std::vector<ProfilePoint> points;
    double path_length_m = 0;                     ///< D, metres
    double effective_radius_m = 0;                ///< R′, metres (infinity for a flat Earth)
    double from_ground_m = 0, to_ground_m = 0;    ///< bilinear terrain at A and B, metres
    double from_antenna_m = 0, to_antenna_m = 0;  ///< z_A, z_B, metres above the datum
    double from_elevation_deg = 0;  ///< elevation angle at A towards B, degrees (− below)
    double to_elevation_deg = 0;    ///< elevation angle at B towards A, degrees
    bool line_of_sight = true;      ///< no terrain sample between the ends above the sightline
    double blocked_at_m = std::numeric_limits<double>::quiet_NaN();  ///< first blocking sample
    std::int64_t blocked_samples = 0;                                ///< samples with clearance < 0
    /// Smallest clearance between the ends (excluded) and where, metres; NaN if no sample.
    double min_clearance_m = std::numeric_limits<double>::quiet_NaN();
    double min_clearance_at_m = std::numeric_limits<double>::quiet_NaN();
    /// Smallest clearance / F1 between the ends and where (NaN without a frequency).
    double min_fresnel_fraction = std::numeric_limits<double>::quiet_NaN();
    double min_fresnel_at_m = std::numeric_limits<double>::quiet_NaN();
    bool fresnel_60_clear = false;  ///< min_fresnel_fraction ≥ 0.6 (docs/references.md row 7)
};

/// Terrain height at a continuous cell coordinate: bilinear between the four surrounding cell
/// centres (clamped to the edge cells in the outer half cell). Neighbours without data are left
/// out and the others' weights renormalised; NaN when the point's own cell has no data or the
/// point is outside the raster.
double bilinearHeight(const Grid<float>& dem, double col, double row);

/// Computes the profile. Throws InputError when an end has no terrain (outside the DEM or on
/// no-data) and InternalError when the samples are malformed (fewer than 2, D ≤ 0).
PathProfileResult computePathProfile(const Grid<float>& dem, const EarthModel& earth,
                                     const PathProfileInput& input);

/// The antenna heights above the ground at each end, the other end fixed, that give every
/// sample between the ends (with terrain) a clearance of at least `fraction` × F1, metres ≥ 0;
/// NaN where raising that end alone cannot reach it (the far end's side of the Earth's bulge).
struct RequiredHeights {
    double from_m = std::numeric_limits<double>::quiet_NaN();
    double to_m = std::numeric_limits<double>::quiet_NaN();
};

/// Solves the heights exactly, sample by sample: the sightline at a sample rises monotonically
/// with either end's antenna, so each sample asks for one least antenna radius, in closed form
/// on the chord r(θ) above (a straight line on a flat Earth), and the end needs the greatest.
/// `r` is a profile computed with a frequency (InternalError otherwise); `fraction` ≥ 0.
RequiredHeights requiredEndHeights(const PathProfileResult& r, double fraction);

}  // namespace lookfar
