// Site selection: candidate viewsheds on reach windows, then lazy greedy maximum coverage.
//   W          reach window of a candidate (ViewshedGrids::window), cells of the full grid
//   S_i, E     visible cells of candidate i, evaluated cells (see SiteSelection.hpp)
//   v(c), V    cell value and total value over E
#include "lookfar/siting/SiteSelection.hpp"

#include <cmath>
#include <mutex>

#ifdef _OPENMP
#include <omp.h>
#endif

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/ParallelFor.hpp"

namespace lookfar {

namespace {}  // namespace

SiteSelectionResult selectSites(const Grid<float>& dem, const GridGeometry& geometry,
                                const EarthModel& earth, const std::vector<Observer>& candidates,
                                const SiteSelectionOptions& options, Progress& progress) {
    const int n = static_cast<int>(candidates.size());
    const int w = dem.width(), h = dem.height();
    if (n == 0 || options.max_sites < 1 || options.max_sites > n)
        throw InternalError("site selection: max_sites must lie in [1, number of candidates]");
    if (!std::isnan(options.coverage_percent) &&
        !(options.coverage_percent > 0 && options.coverage_percent <= 100))
        throw InternalError("site selection: coverage_percent must lie in (0, 100]");
    if (!(options.reach_m > 0))
        throw InternalError("site selection: the reach must be positive");
    if (w != geometry.width() || h != geometry.height())
        throw InternalError("site selection: the DEM and its geometry differ in size");
    SiteSelectionResult out;
    out.weighted = options.weight != nullptr;
    if (out.weighted) {
        const Grid<float>& wg = *options.weight;
        if (wg.width() != w || wg.height() != h)
            throw InputError("the weight grid is not the size of the DEM");
        for (float v : wg.cells()) {
            if (v < 0)
                throw InputError("the weight grid holds a negative weight");
        }
    }
    for (const Observer& c : candidates) {
        if (!dem.contains(c.col, c.row))
            throw InputError("the candidate '" + c.name + "' is outside the DEM");
        if (std::isnan(dem(c.col, c.row)))
            throw InputError("the candidate '" + c.name + "' stands on a no-data cell");
    }
    // Weights without NaN (no data counts nothing).
    Grid<float> weights;
    if (out.weighted) {
        weights = *options.weight;
        for (float& v : weights.cells()) {
            if (std::isnan(v))
                v = 0.0f;
        }
    }

    // 1. The candidates' viewsheds, each on its reach window.
    std::vector<CoverageSet> seen(n);
    CoverageSet evaluated = CoverageSet::wholeGrid(w, h);
    ViewshedOptions vopt;
    vopt.target_height_m = options.target_height_m;
    vopt.reach_m = options.reach_m;
    vopt.method = options.method;
    vopt.crop_to_reach = true;
    progress.begin("candidate viewsheds", n);
    std::mutex merge;
    ParallelForOptions loop;
#ifdef _OPENMP
    // Few candidates: let each viewshed use the threads instead.
    loop.parallel = n >= omp_get_max_threads();
#endif
    CancelOnlyProgress cancel(progress);
    parallelFor(
        n, progress,
        [&](std::int64_t i) {
            const ViewshedGrids vs =
                computeViewshed(dem, geometry, earth, candidates[i], vopt, cancel);
            const CellWindow& win = vs.window;
            const int c_hi = win.col0 + win.width - 1, r_hi = win.row0 + win.height - 1;
            CoverageSet visible(w, h, win.col0, c_hi, win.row0, r_hi);
            CoverageSet inside(w, h, win.col0, c_hi, win.row0, r_hi);
            for (int r = 0; r < win.height; ++r) {
                const std::uint8_t* v = vs.visible.row(r);
                for (int c = 0; c < win.width; ++c) {
                    if (v[c] == kNoVisibility)
                        continue;
                    inside.insert(win.col0 + c, win.row0 + r);
                    if (v[c] == kVisible)
                        visible.insert(win.col0 + c, win.row0 + r);
                }
            }
            seen[i] = std::move(visible);
            std::lock_guard<std::mutex> lock(merge);
            evaluated.unite(inside);
        },
        loop);
    progress.end();

    // 2. Values: cell areas by row, or the weights.
    CellValues values;
    values.row_value.resize(h);
    for (int r = 0; r < h; ++r)
        values.row_value[r] = geometry.cellAreaM2(r);
    if (out.weighted)
        values.weight = &weights;
    const CoverageSet none;
    out.evaluated_cells = evaluated.count();
    out.evaluated_area_m2 = values.newRowValue(evaluated, none);
    out.total_weight = values.newValue(evaluated, none);
    out.alone_area_m2.resize(n);
    out.alone_weight.resize(n);
    for (int i = 0; i < n; ++i) {
        out.alone_area_m2[i] = values.newRowValue(seen[i], none);
        out.alone_weight[i] = values.newValue(seen[i], none);
        out.viewshed_bytes += seen[i].memoryBytes();
    }
    if (out.weighted && !(out.total_weight > 0))
        throw InputError("the weight grid holds no positive weight within reach of the candidates");

    // 3. The greedy choice.
    CoverageGoal goal;
    goal.max_sets = options.max_sites;
    if (!std::isnan(options.coverage_percent))
        goal.target_value = options.coverage_percent / 100.0 * out.total_weight;
    CoverageSet covered = CoverageSet::wholeGrid(w, h);
    CoverageSet so_far = CoverageSet::wholeGrid(w, h);  // rebuilt pick by pick for the areas
    const CoverageChoice choice = lazyGreedyCoverage(seen, values, goal, covered, progress);
    out.stop = choice.stop;
    out.gain_evaluations = choice.evaluations;
    out.coverage_reached =
        choice.stop == CoverageStop::ReachedTarget ||
        (!std::isnan(options.coverage_percent) && !choice.picks.empty() &&
         choice.picks.back().cumulative_value >= goal.target_value * (1.0 - 1e-12));
    double area = 0;
    for (const CoveragePick& p : choice.picks) {
        SelectedSite s;
        s.candidate = p.set;
        s.marginal_cells = CellValues::newCells(seen[p.set], so_far);
        s.marginal_area_m2 = values.newRowValue(seen[p.set], so_far);
        area += s.marginal_area_m2;
        s.cumulative_area_m2 = area;
        s.marginal_weight = p.marginal_value;
        s.cumulative_weight = p.cumulative_value;
        s.cumulative_percent = 100.0 * p.cumulative_value / out.total_weight;
        so_far.unite(seen[p.set]);
        out.ranked.push_back(s);
    }

    // 4. The count grid.
    out.count = Grid<std::uint16_t>(w, h, kCountNoData);
    evaluated.forEachCell([&](int c, int r) { out.count(c, r) = 0; });
    for (const SelectedSite& s : out.ranked)
        seen[s.candidate].forEachCell([&](int c, int r) { ++out.count(c, r); });
    return out;
}

}  // namespace lookfar
