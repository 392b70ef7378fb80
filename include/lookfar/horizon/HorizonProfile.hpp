#pragma once
// The 360° horizon of one spot (`lookfar horizon --at`): the reference engine's horizon in
// directions `step` degrees apart, and its summary.
//
// Notation
//   α_i = i·step      azimuth of direction i, degrees clockwise from grid north, [0, 360)
//   w_i               the sector direction i stands for: min(step, 360 − α_i) degrees (the last
//                     sector is shorter when step does not divide 360)
//   γ_i               horizon angle of direction i, degrees above the eye's local horizontal
//   SVF               1 − Σ w_i sin(max(γ_i, 0)) / Σ w_i over the directions with data
//   d_edge            ground distance to the DEM's edge along α_i (HorizonEdge.hpp), reported
//                     when at most the reach
//   sea-horizon dip   arccos(R′/(R′ + h)) for the eye's height h above the vertical datum and the
//                     effective radius R′ = R/(1 − k) at the spot (exact sphere formula)
#include <limits>
#include <vector>

#include "lookfar/core/Grid.hpp"
#include "lookfar/core/Progress.hpp"
#include "lookfar/core/GridGeometry.hpp"
#include "lookfar/earth/EarthModel.hpp"
#include "lookfar/horizon/HorizonScan.hpp"

namespace lookfar {

/// Smallest and largest azimuth step of a one-spot horizon, degrees.
inline constexpr double kMinHorizonStepDeg = 0.05;
inline constexpr double kMaxHorizonStepDeg = 90.0;

struct HorizonDirection {
    double azimuth_deg = 0;  ///< degrees clockwise from grid north, [0, 360)
    HorizonSample sample;    ///< found = false: no terrain with data in that direction
    /// Ground distance to where the DEM's edge is met in this direction (HorizonEdge.hpp),
    /// metres; NaN when the edge lies beyond the reach. Within the reach, the true horizon may
    /// lie beyond the DEM.
    double edge_distance_m = std::numeric_limits<double>::quiet_NaN();
};

/// A run of neighbouring directions whose horizon lies below the eye's local horizontal.
struct HorizonSector {
    double from_deg = 0;   ///< azimuth of its first direction, degrees
    double to_deg = 0;     ///< azimuth of its last direction (clockwise from from_deg)
    double width_deg = 0;  ///< the sectors its directions stand for, degrees, (0, 360]
};

struct HorizonProfile {
    int col = 0, row = 0;  ///< the eye's cell
    double ground_m = 0;   ///< DEM at the cell, metres
    double eye_m = 0;      ///< ground + observer height, metres
    double step_deg = 1;
    std::vector<HorizonDirection> directions;

    int directions_with_data = 0;
    // The extremes (NaN when no direction has data).
    double lowest_angle_deg, lowest_azimuth_deg, lowest_distance_m;
    double highest_angle_deg, highest_azimuth_deg, highest_distance_m;
    double mean_angle_deg;   ///< sector-weighted mean of γ_i
    double sky_view_factor;  ///< [0, 1]
    double dip_deg;          ///< largest depression, max(−γ_i) (docs/design.md's dip)
    std::vector<HorizonSector> open_sectors;  ///< horizon below the local horizontal
    // The DEM's edge within the reach.
    int directions_cut_by_edge = 0;  ///< directions whose edge_distance_m is finite
    double nearest_edge_m = std::numeric_limits<double>::quiet_NaN();  ///< least of them
    double nearest_edge_azimuth_deg = std::numeric_limits<double>::quiet_NaN();
    // The sea horizon for the eye's height (0 when the eye is at or below the datum or the Earth
    // is flat).
    double sea_horizon_dip_deg = 0;
    double sea_horizon_distance_m = 0;  ///< along the surface, metres (infinity when flat)
};

/// The horizon of cell (col, row) every `step_deg` degrees, with its summary. Uses the reference
/// engine (exact). Throws UsageError for a step outside [0.05, 90] and InputError when the cell is
/// outside the grid or on no data. `options` supplies the observer height, reach and latitude.
/// Reports its directions to `progress` (one stage) and stops with Interrupted when it is
/// cancelled.
HorizonProfile horizonProfile(const Grid<float>& dem, const GridGeometry& geometry,
                              const EarthModel& earth, int col, int row, double step_deg,
                              const HorizonOptions& options, Progress& progress = silentProgress());

/// A span of azimuths, degrees, from_deg < to_deg within [0, 360].
struct AzimuthSpan {
    double from_deg = 0, to_deg = 0;
};

/// The azimuths whose horizon the DEM's edge cuts within the reach, for shading a panorama:
/// each such direction α_i stands for [α_i − step/2, α_i + step/2], neighbours joined; a span
/// across north is split at 0°/360°. In increasing order; empty when no direction is cut.
std::vector<AzimuthSpan> edgeCutSpans(const HorizonProfile& profile);

}  // namespace lookfar
