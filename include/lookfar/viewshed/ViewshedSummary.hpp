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
#include <string>

#include "lookfar/core/Grid.hpp"
#include "lookfar/core/GridGeometry.hpp"
#include "lookfar/viewshed/Observer.hpp"
#include "lookfar/viewshed/Viewshed.hpp"

namespace lookfar {

/// Distance bands of the visible-area breakdown: [0, 1), [1, 5), [5, 10), [10, 25), [25, 50)
/// and [50, ∞) km from the observer.
inline constexpr int kDistanceBandCount = 6;
inline constexpr std::array<double, kDistanceBandCount> kDistanceBandStartM = {
    0.0, 1000.0, 5000.0, 10000.0, 25000.0, 50000.0};
/// Label of band `i` ("0-1 km", …, ">50 km").
std::string distanceBandLabel(int i);

struct ViewshedStats {
    std::int64_t visible_cells = 0;
    std::int64_t evaluated_cells = 0;
    double visible_area_m2 = 0;     ///< true ground area of the visible cells, m²
    double evaluated_area_m2 = 0;   ///< true ground area of the evaluated cells, m²
    double visible_fraction = 0;    ///< visible_area_m2 / evaluated_area_m2, [0, 1]
    double farthest_visible_m = 0;  ///< distance of the farthest visible cell centre, metres
    std::array<double, kDistanceBandCount> visible_area_by_band_m2{};  ///< m² per band
};

/// Statistics of one observer's visibility grid, which covers `window` of the DEM whose
/// geometry is `geometry`. Identical for any number of threads.
ViewshedStats summarizeViewshed(const Grid<std::uint8_t>& visible, const CellWindow& window,
                                const GridGeometry& geometry, const Observer& observer);

/// Value of a count grid where no site reached the cell or the DEM has no data.
inline constexpr std::uint16_t kNoCount = 65535;

}  // namespace lookfar
