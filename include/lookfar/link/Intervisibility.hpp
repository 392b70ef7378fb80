#pragma once
// Intervisibility of a network of stations: every ordered pair judged by the sightline rule of
// docs/design.md (SightlineRule), from the eye of one station to the antenna or target of the
// other.
//
// Notation
//   i, j        stations (index in the input order); i → j is "j seen from i"
//   h_i         height of station i above the ground of its cell, metres
//   margin_ij   SightlineRule margin of the point h_j above j's cell seen from i's eye (h_i):
//               metres by which it clears (≥ 0) or misses (< 0) the limiting sightline at j
//   d_ij        the engines' fast ground distance between the two cell centres, metres
//
// Stations stand at the centres of the cells that hold them (as observers of a viewshed do).
// The two verdicts of a pair agree except for a margin within rounding of zero: the rule's
// sightline condition z(t) + t(1 − t)Δ ≤ (1 − t) z_i + t z_j is symmetric in i and j, only the
// curvature Δ is taken at the observer's latitude.
#include <cstdint>
#include <limits>
#include <vector>

#include "lookfar/core/Grid.hpp"
#include "lookfar/core/GridGeometry.hpp"
#include "lookfar/core/Progress.hpp"
#include "lookfar/earth/EarthModel.hpp"
#include "lookfar/sightline/Observer.hpp"

namespace lookfar {

struct IntervisOptions {
    /// Pairs farther apart than this (fast distance between cell centres) are not judged,
    /// metres, > 0 (infinity = every pair).
    double reach_m = std::numeric_limits<double>::infinity();
};

struct PairVerdict {
    int to = -1;           ///< the station seen (index)
    bool judged = false;   ///< within reach (always false on the diagonal)
    bool visible = false;  ///< margin ≥ 0
    double margin_m = std::numeric_limits<double>::quiet_NaN();  ///< see header; NaN if not judged
    double distance_m = std::numeric_limits<double>::quiet_NaN();  ///< d_ij, metres (judged)
};

/// The judged pairs only: memory follows the pairs within reach, not stations².
struct IntervisResult {
    int stations = 0;
    /// judged[i]: the pairs i → j within reach, by increasing j.
    std::vector<std::vector<PairVerdict>> judged;
    /// The verdict of i → j; a pair not judged (beyond reach, or i = j) has judged = false, a NaN
    /// margin and a NaN distance.
    PairVerdict at(int from, int to) const;
    /// Number of ordered pairs judged.
    std::int64_t judgedCount() const;
};

/// Judges every ordered pair within reach (OpenMP over observing stations; identical for any
/// thread count).
/// Each station's `height_m` is its eye when it observes and its target when it is observed.
/// Throws InputError when a station is outside the DEM or on no-data, Interrupted when the
/// progress sink is cancelled.
IntervisResult computeIntervisibility(const Grid<float>& dem, const GridGeometry& geometry,
                                      const EarthModel& earth,
                                      const std::vector<Observer>& stations,
                                      const IntervisOptions& options,
                                      Progress& progress = silentProgress());

}  // namespace lookfar
