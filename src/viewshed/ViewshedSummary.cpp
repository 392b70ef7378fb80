// Summary statistics of one observer's viewshed (see ViewshedSummary.hpp for the notation). Sums
// are taken per row and the rows added in order, so the figures do not depend on the number of
// threads.
#include "lookfar/viewshed/ViewshedSummary.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <string>
#include <vector>

namespace lookfar {

namespace {

/// Kilometres as a band label writes them: whole numbers bare, others to the metre.
std::string kmText(double m) {
    char buf[32];
    std::snprintf(buf, sizeof buf, "%.3f", m / 1000.0);
    std::string t = buf;
    while (t.back() == '0')
        t.pop_back();
    if (t.back() == '.')
        t.pop_back();
    return t;
}

/// The band of a distance: the first whose upper bound holds it (the last one past every bound).
int bandOf(const std::vector<DistanceBand>& bands, double d_m) {
    int band = 0;
    const int last = static_cast<int>(bands.size()) - 1;
    while (band < last && d_m > bands[band].to_m)
        ++band;
    return band;
}

}  // namespace

std::vector<DistanceBand> distanceBands(double reach_m) {
    static const double kEdgesM[] = {1000.0, 5000.0, 10000.0, 25000.0, 50000.0};
    std::vector<DistanceBand> bands;
    double from = 0;
    for (double edge : kEdgesM) {
        if (!(edge < reach_m))
            break;
        bands.push_back({from, edge, kmText(from) + "-" + kmText(edge) + " km", 0.0});
        from = edge;
    }
    if (std::isfinite(reach_m))
        bands.push_back({from, reach_m, kmText(from) + "-" + kmText(reach_m) + " km", 0.0});
    else
        bands.push_back({from, reach_m, ">" + kmText(from) + " km", 0.0});
    return bands;
}

ViewshedStats summarizeViewshed(const Grid<std::uint8_t>& visible, const CellWindow& window,
                                const GridGeometry& geometry, const Observer& observer,
                                double reach_m) {
    ViewshedStats s;
    s.bands = distanceBands(reach_m);
    const int band_count = static_cast<int>(s.bands.size());
    const LocalFrame frame = geometry.localFrame(observer.col, observer.row);
    const int h = window.height;
    struct RowSums {
        std::int64_t visible = 0, evaluated = 0;
        double farthest = 0;
        std::vector<std::int64_t> band_cells;
    };
    std::vector<RowSums> rows(static_cast<std::size_t>(h));
#pragma omp parallel for schedule(static)
    for (int wr = 0; wr < h; ++wr) {
        const int r = window.row0 + wr;
        const std::uint8_t* line = visible.row(wr);
        RowSums sums;
        sums.band_cells.assign(band_count, 0);
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
            ++sums.band_cells[bandOf(s.bands, d)];
        }
        rows[wr] = std::move(sums);
    }
    for (int wr = 0; wr < h; ++wr) {
        const RowSums& rs = rows[wr];
        const double cell_area = geometry.cellAreaM2(window.row0 + wr);
        s.visible_cells += rs.visible;
        s.evaluated_cells += rs.evaluated;
        s.visible_area_m2 += rs.visible * cell_area;
        s.evaluated_area_m2 += rs.evaluated * cell_area;
        s.farthest_visible_m = std::max(s.farthest_visible_m, rs.farthest);
        for (int b = 0; b < band_count; ++b)
            s.bands[b].visible_area_m2 += rs.band_cells[b] * cell_area;
    }
    s.visible_fraction = s.evaluated_area_m2 > 0 ? s.visible_area_m2 / s.evaluated_area_m2 : 0.0;
    return s;
}

}  // namespace lookfar
