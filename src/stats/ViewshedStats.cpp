// Coverage statistics of several sites. Sums are taken per row and the rows added in order, so
// the figures do not depend on the number of threads.
#include "lookfar/stats/ViewshedStats.hpp"

#include <algorithm>
#include <vector>

namespace lookfar {

CoverageStats summarizeCoverage(const Grid<std::uint16_t>& count, const GridGeometry& geometry,
                                int site_count) {
    const int h = count.height();
    const int bins = std::max(0, site_count) + 1;
    std::vector<std::vector<std::int64_t>> per_row(static_cast<std::size_t>(h));
#pragma omp parallel for schedule(static)
    for (int r = 0; r < h; ++r) {
        std::vector<std::int64_t> hist(static_cast<std::size_t>(bins), 0);
        const std::uint16_t* line = count.row(r);
        for (int c = 0; c < count.width(); ++c) {
            const std::uint16_t v = line[c];
            if (v == kNoCount)
                continue;
            ++hist[std::min<int>(v, bins - 1)];
        }
        per_row[r] = std::move(hist);
    }
    CoverageStats s;
    s.cells_by_count.assign(static_cast<std::size_t>(bins), 0);
    for (int r = 0; r < h; ++r) {
        const double cell_area = geometry.cellAreaM2(r);
        std::int64_t evaluated = 0;
        for (int b = 0; b < bins; ++b) {
            s.cells_by_count[b] += per_row[r][b];
            evaluated += per_row[r][b];
        }
        const std::int64_t seen = evaluated - per_row[r][0];
        s.evaluated_cells += evaluated;
        s.cells_seen_by_any += seen;
        s.evaluated_area_m2 += evaluated * cell_area;
        s.area_seen_by_any_m2 += seen * cell_area;
    }
    return s;
}

}  // namespace lookfar
