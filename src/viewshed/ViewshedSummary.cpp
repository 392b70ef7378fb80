// Summary statistics of one observer's viewshed (see ViewshedSummary.hpp for the notation). Sums
// are taken per row and the rows added in order, so the figures do not depend on the number of
// threads.
#include "lookfar/viewshed/ViewshedSummary.hpp"

#include <algorithm>
#include <cmath>
#include <vector>

namespace lookfar {

namespace {
const char* const kBandLabels[kDistanceBandCount] = {"0-1 km",   "1-5 km",   "5-10 km",
                                                     "10-25 km", "25-50 km", ">50 km"};
}  // namespace

std::string distanceBandLabel(int i) {
    return (i >= 0 && i < kDistanceBandCount) ? kBandLabels[i] : "?";
}

namespace {
int bandOf(double d_m) {
    int band = 0;
    while (band + 1 < kDistanceBandCount && d_m >= kDistanceBandStartM[band + 1])
        ++band;
    return band;
}
}  // namespace

ViewshedStats summarizeViewshed(const Grid<std::uint8_t>& visible, const CellWindow& window,
                                const GridGeometry& geometry, const Observer& observer) {
    const LocalFrame frame = geometry.localFrame(observer.col, observer.row);
    const int h = window.height;
    struct RowSums {
        std::int64_t visible = 0, evaluated = 0;
        double farthest = 0;
        std::array<std::int64_t, kDistanceBandCount> band_cells{};
    };
    std::vector<RowSums> rows(static_cast<std::size_t>(h));
#pragma omp parallel for schedule(static)
    for (int wr = 0; wr < h; ++wr) {
        const int r = window.row0 + wr;
        const std::uint8_t* line = visible.row(wr);
        RowSums sums;
        const double north = frame.north(r);
        for (int wc = 0; wc < window.width; ++wc) {
            const std::uint8_t v = line[wc];
            if (v == kNoVisibility)
                continue;
            ++sums.evaluated;
            if (v != kVisible)
                continue;
            ++sums.visible;
            const double east = frame.east(window.col0 + wc, r);
            const double d = std::sqrt(east * east + north * north);
            sums.farthest = std::max(sums.farthest, d);
            ++sums.band_cells[bandOf(d)];
        }
        rows[wr] = sums;
    }
    ViewshedStats s;
    for (int wr = 0; wr < h; ++wr) {
        const RowSums& rs = rows[wr];
        const double cell_area = geometry.cellAreaM2(window.row0 + wr);
        s.visible_cells += rs.visible;
        s.evaluated_cells += rs.evaluated;
        s.visible_area_m2 += rs.visible * cell_area;
        s.evaluated_area_m2 += rs.evaluated * cell_area;
        s.farthest_visible_m = std::max(s.farthest_visible_m, rs.farthest);
        for (int b = 0; b < kDistanceBandCount; ++b)
            s.visible_area_by_band_m2[b] += rs.band_cells[b] * cell_area;
    }
    s.visible_fraction = s.evaluated_area_m2 > 0 ? s.visible_area_m2 / s.evaluated_area_m2 : 0.0;
    return s;
}

}  // namespace lookfar
