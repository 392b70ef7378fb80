// Where the DEM ends for the horizon engines (see HorizonEdge.hpp for the notation).
#include "lookfar/horizon/HorizonEdge.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "HorizonInternal.hpp"

namespace lookfar {

namespace {

double distanceBetween(const horizon_detail::GridMetric& m, double c0, double r0, double c1,
                       double r1) {
    double e, n;
    m.offsets(c0, r0, c1, r1, e, n);
    return std::hypot(e, n);
}

}  // namespace

DemEdge::DemEdge(const GridGeometry& geometry)
    : col_off_(geometry.colOffset()),
      row_off_(geometry.rowOffset()),
      c_hi_(geometry.wholeWidth() - 1),
      r_hi_(geometry.wholeHeight() - 1),
      metric_(std::make_shared<const horizon_detail::GridMetric>(geometry.whole())) {}

double DemEdge::distanceM(int col, int row, double azimuth_deg) const {
    const horizon_detail::GridMetric& m = *metric_;
    const double c0 = col + col_off_, r0 = row + row_off_;
    double s, c;
    horizon_detail::sinCosDeg(azimuth_deg, s, c);
    const double dc = s / m.eastPerCol(r0);  // cells per metre, as marchRay
    const double dr = c / m.northPerRow(r0);
    double s_edge = std::numeric_limits<double>::infinity();
    if (dc > 0)
        s_edge = std::fmin(s_edge, (c_hi_ - c0) / dc);
    else if (dc < 0)
        s_edge = std::fmin(s_edge, -c0 / dc);
    if (dr > 0)
        s_edge = std::fmin(s_edge, (r_hi_ - r0) / dr);
    else if (dr < 0)
        s_edge = std::fmin(s_edge, -r0 / dr);
    s_edge = std::fmax(s_edge, 0.0);
    const double c1 = std::clamp(c0 + dc * s_edge, 0.0, c_hi_);  // rounding stays inside
    const double r1 = std::clamp(r0 + dr * s_edge, 0.0, r_hi_);
    return distanceBetween(m, c0, r0, c1, r1);
}

double DemEdge::nearestM(int col, int row) const {
    const horizon_detail::GridMetric& m = *metric_;
    const double c0 = col + col_off_, r0 = row + row_off_;
    return std::fmin(
        std::fmin(distanceBetween(m, c0, r0, 0, r0), distanceBetween(m, c0, r0, c_hi_, r0)),
        std::fmin(distanceBetween(m, c0, r0, c0, 0), distanceBetween(m, c0, r0, c0, r_hi_)));
}

std::int64_t cellsWithinReachOfEdge(const GridGeometry& geometry, double reach_m) {
    const GridGeometry whole = geometry.whole();
    const std::int64_t w = whole.width(), h = whole.height();
    if (!std::isfinite(reach_m))
        return w * h;
    const horizon_detail::GridMetric m(whole);
    std::int64_t cells = 0;
    for (int r = 0; r < h; ++r) {
        // Along the column: the whole row is within reach of the first or last row.
        if (distanceBetween(m, 0, r, 0, 0) <= reach_m ||
            distanceBetween(m, 0, r, 0, h - 1) <= reach_m) {
            cells += w;
            continue;
        }
        // Along the row: the columns 0 … k and W − 1 − k … W − 1 with k · |east per column| ≤
        // reach (DemEdge::nearestM's comparison, counted rather than looped over).
        const double per_col = std::fabs(m.eastPerCol(r));
        const double first_guess = std::floor(reach_m / per_col);
        std::int64_t k = first_guess >= w ? w - 1 : static_cast<std::int64_t>(first_guess);
        while (k + 1 < w && distanceBetween(m, 0, r, static_cast<double>(k + 1), r) <= reach_m)
            ++k;
        while (k >= 0 && distanceBetween(m, 0, r, static_cast<double>(k), r) > reach_m)
            --k;
        cells += std::min<std::int64_t>(w, 2 * (k + 1));
    }
    return cells;
}

}  // namespace lookfar
