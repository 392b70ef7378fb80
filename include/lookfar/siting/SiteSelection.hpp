#pragma once
// SiteSelection: choose, from candidate sites, the few that together see the most ground (or
// the most weight), by lazy greedy maximum coverage over their viewsheds (GreedyCoverage.hpp).
//
// Notation
//   S_i      cells candidate i sees within reach (its viewshed, computeViewshed)
//   E        evaluated cells: cells with data within reach of at least one candidate
//   v(c)     cell value: ground area of c (m², GridGeometry::cellAreaM2), or the weight of c
//   V        total value Σ v(c) over E; percentages are of V
//
// Each candidate's viewshed is computed on the window of the DEM that holds its reach (the whole
// DEM without a reach; ViewshedOptions::crop_to_reach) and kept as a bit per window cell. The
// greedy choice is within (1 − 1/e) ≈ 63.2 % of the best possible set of the same size, and usually
// equal to it.
#include <cstdint>
#include <limits>
#include <vector>

#include "lookfar/core/Grid.hpp"
#include "lookfar/core/GridGeometry.hpp"
#include "lookfar/core/Progress.hpp"
#include "lookfar/earth/EarthModel.hpp"
#include "lookfar/siting/GreedyCoverage.hpp"
#include "lookfar/sightline/Observer.hpp"
#include "lookfar/viewshed/Viewshed.hpp"

namespace lookfar {

/// No-data value of the coverage count grid (as the multi-site viewshed count).
inline constexpr std::uint16_t kCountNoData = 65535;

struct SiteSelectionOptions {
    int max_sites = 1;  ///< choose at most this many sites, [1, number of candidates]
    /// Stop once the chosen sites cover this share of V, percent, (0, 100]; NaN = no target.
    double coverage_percent = std::numeric_limits<double>::quiet_NaN();
    double target_height_m = 0.0;  ///< target above the ground of each cell, metres, ≥ 0
    double reach_m = std::numeric_limits<double>::infinity();  ///< farthest distance, > 0
    ViewshedMethod method = ViewshedMethod::Fast;
    /// Per-cell weights of the DEM's size (NaN = 0, no negative values); null = ground area.
    const Grid<float>* weight = nullptr;
};

struct SelectedSite {
    int candidate = 0;              ///< index into the candidates
    double marginal_area_m2 = 0;    ///< ground newly seen by this site, m²
    double cumulative_area_m2 = 0;  ///< ground seen by the sites so far, m²
    std::int64_t marginal_cells = 0;
    double marginal_weight = 0;     ///< Δ in the value used for the choice (= area unweighted)
    double cumulative_weight = 0;   ///< f so far (= cumulative area unweighted)
    double cumulative_percent = 0;  ///< 100 · cumulative_weight / V
};

struct SiteSelectionResult {
    std::vector<SelectedSite> ranked;   ///< in the order chosen
    Grid<std::uint16_t> count;          ///< chosen sites seeing each cell; kCountNoData off E
    std::vector<double> alone_area_m2;  ///< ground each candidate sees on its own, m²
    std::vector<double> alone_weight;   ///< value each candidate covers on its own
    std::int64_t evaluated_cells = 0;   ///< |E|
    double evaluated_area_m2 = 0;       ///< area of E, m²
    double total_weight = 0;            ///< V (= evaluated_area_m2 unweighted)
    bool weighted = false;
    CoverageStop stop = CoverageStop::ReachedCount;
    bool coverage_reached = false;  ///< coverage_percent was given and reached
    std::int64_t gain_evaluations = 0;
    std::size_t viewshed_bytes = 0;  ///< memory held by the candidates' viewsheds
};

/// Computes every candidate's viewshed (each with its own observer height) and makes the greedy
/// choice. Throws InputError for a candidate outside the DEM or on no-data, or bad weights;
/// InternalError for options out of range; Interrupted when cancelled.
SiteSelectionResult selectSites(const Grid<float>& dem, const GridGeometry& geometry,
                                const EarthModel& earth, const std::vector<Observer>& candidates,
                                const SiteSelectionOptions& options,
                                Progress& progress = silentProgress());

}  // namespace lookfar
