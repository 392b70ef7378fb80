// Viewshed API shared by both engines: input checks, the window within reach, dispatch.
//
// Notation
//   (c0, r0)   observer cell
//   e_r        metres east per column step on row r, from the observer's LocalFrame
//   n_r        metres north of the observer of row r
#include "lookfar/viewshed/Viewshed.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <string>

#include "lookfar/core/Errors.hpp"

namespace lookfar {

namespace {
std::string number(double v) {
    char buf[64];
    std::snprintf(buf, sizeof buf, "%.10g", v);
    return buf;
}
}  // namespace

void validateViewshedInputs(const Grid<float>& dem, const Observer& observer,
                            const ViewshedOptions& options) {
    if (!dem.contains(observer.col, observer.row)) {
        throw InputError("the observer '" + observer.name + "' is outside the DEM");
    }
    if (std::isnan(dem(observer.col, observer.row))) {
        throw InputError("the observer '" + observer.name + "' stands on a no-data cell");
    }
    if (!(observer.height_m >= 0) || !std::isfinite(observer.height_m)) {
        throw UsageError("the observer height of '" + observer.name + "' (" +
                         number(observer.height_m) + " m) must be a finite number ≥ 0");
    }
    if (!(options.target_height_m >= 0) || !std::isfinite(options.target_height_m)) {
        throw InvalidOption("target_height_m",
                            number(options.target_height_m) + " m must be a finite number ≥ 0");
    }
    if (!(options.reach_m > 0)) {
        throw InvalidOption("reach_m", number(options.reach_m) + " m must be a positive distance");
    }
}

CellWindow reachWindow(const GridGeometry& geometry, const Observer& observer, double reach_m) {
    CellWindow all{0, 0, geometry.width(), geometry.height()};
    if (!std::isfinite(reach_m))
        return all;
    const LocalFrame frame = geometry.localFrame(observer.col, observer.row);
    // Rows: |n_r| ≤ reach. Columns: the distance is at least |dc|·e_r on every row, so
    // |dc| ≤ reach / min |e_r| (one cell of slack against rounding).
    int row_lo = observer.row, row_hi = observer.row;
    double min_east = std::numeric_limits<double>::infinity();
    for (int r = 0; r < geometry.height(); ++r) {
        if (std::fabs(frame.north(r)) <= reach_m) {
            row_lo = std::min(row_lo, r);
            row_hi = std::max(row_hi, r);
            min_east = std::min(min_east, std::fabs(frame.east_per_col[r]));
        }
    }
    row_lo = std::max(0, row_lo - 1);
    row_hi = std::min(geometry.height() - 1, row_hi + 1);
    double cols = min_east > 0 ? std::floor(reach_m / min_east) + 1.0 : geometry.width();
    int span = static_cast<int>(std::min<double>(cols, geometry.width()));
    int col_lo = std::max(0, observer.col - span);
    int col_hi = std::min(geometry.width() - 1, observer.col + span);
    return {col_lo, row_lo, col_hi - col_lo + 1, row_hi - row_lo + 1};
}

ViewshedGrids computeViewshed(const Grid<float>& dem, const GridGeometry& geometry,
                              const EarthModel& earth, const Observer& observer,
                              const ViewshedOptions& options, Progress& progress) {
    if (options.method == ViewshedMethod::Reference) {
        return referenceViewshed(dem, geometry, earth, observer, options, progress);
    }
    return fastViewshed(dem, geometry, earth, observer, options, progress);
}

}  // namespace lookfar
