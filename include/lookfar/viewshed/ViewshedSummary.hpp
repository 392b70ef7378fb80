#pragma once
// Summary statistics of one observer's viewshed (visible cells and true ground areas, the visible
// fraction of the evaluated area, the farthest visible distance and the visible area by distance
// band), and the no-data value of a many-site count grid. Here rather than in stats/ because the
// many-site engine takes each site's figures while its grid is at hand (no grid is kept per site):
// stats/ builds on viewshed/, never the other way round.
//
// Notation
//   evaluated   a cell within reach with data (the observer's own cell included: it is visible)
//   area        true ground area of a cell (GridGeometry::cellAreaM2: ellipsoidal on geographic
//               grids, so cells shrink with latitude; map area on projected grids)
//   distance    the engines' fast ground distance from the observer's cell (LocalFrame)
#include <array>
#include <cstdint>
#include <limits>
#include <string>
#include <vector>

#include "lookfar/core/Grid.hpp"
#include "lookfar/core/GridGeometry.hpp"
#include "lookfar/sightline/Observer.hpp"
#include "lookfar/viewshed/Viewshed.hpp"

namespace lookfar {

/// One distance band of the visible-area breakdown: cells whose centre lies more than `from_m`
/// and at most `to_m` from the observer's cell centre (the first band also holds 0). Upper
/// bounds are included, as the reach is (a cell exactly at a 10 km reach is in the band that
/// ends at 10 km).
struct DistanceBand {
    double from_m = 0;
    double to_m = std::numeric_limits<double>::infinity();  ///< infinite: no upper bound
    std::string label;                                      ///< "0-1 km", "5-7.5 km", ">50 km"
    double visible_area_m2 = 0;
};

/// The bands for a reach (metres, > 0; infinite when unlimited): edges at 1, 5, 10, 25 and
/// 50 km below the reach, the last band ending at the reach, or open (">50 km") when the reach
/// is unlimited.
std::vector<DistanceBand> distanceBands(double reach_m);

struct ViewshedStats {
    std::int64_t visible_cells = 0;
    std::int64_t evaluated_cells = 0;
    double visible_area_m2 = 0;       ///< true ground area of the visible cells, m²
    double evaluated_area_m2 = 0;     ///< true ground area of the evaluated cells, m²
    double visible_fraction = 0;      ///< visible_area_m2 / evaluated_area_m2, [0, 1]
    double farthest_visible_m = 0;    ///< distance of the farthest visible cell centre, metres
    std::vector<DistanceBand> bands;  ///< visible area by distance (distanceBands(reach))
};

/// Statistics of one observer's visibility grid, which covers `window` of the DEM whose
/// geometry is `geometry`. Identical for any number of threads.
ViewshedStats summarizeViewshed(const Grid<std::uint8_t>& visible, const CellWindow& window,
                                const GridGeometry& geometry, const Observer& observer,
                                double reach_m);

/// Value of a count grid where no site reached the cell or the DEM has no data.
inline constexpr std::uint16_t kNoCount = 65535;

}  // namespace lookfar
