#pragma once
// Coverage statistics of several sites (the count grid of the many-site viewshed). The figures of
// one observer's viewshed (ViewshedStats, summarizeViewshed, the distance bands, kNoCount) are in
// viewshed/ViewshedSummary.hpp, included here: stats/ builds on viewshed/.
#include <cstdint>
#include <vector>

#include "lookfar/core/Grid.hpp"
#include "lookfar/core/GridGeometry.hpp"
#include "lookfar/viewshed/ViewshedSummary.hpp"

namespace lookfar {

struct CoverageStats {
    std::int64_t evaluated_cells = 0;  ///< cells within reach of at least one site, with data
    double evaluated_area_m2 = 0;
    std::int64_t cells_seen_by_any = 0;
    double area_seen_by_any_m2 = 0;
    std::vector<std::int64_t> cells_by_count;  ///< index = number of sites that see the cell
};

/// Coverage of a count grid (the DEM's size) for `site_count` sites.
CoverageStats summarizeCoverage(const Grid<std::uint16_t>& count, const GridGeometry& geometry,
                                int site_count);

}  // namespace lookfar
