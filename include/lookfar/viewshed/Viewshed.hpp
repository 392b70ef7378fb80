#pragma once
// Viewshed of one observer over a DEM held in memory.
//
// Two engines apply the sightline rule of SightlineRule.hpp:
//   - the reference engine judges every cell on its own (O(n) samples per cell, O(n^1.5) in all);
//   - the fast engine (FastViewshed.cpp) propagates interval bounds through a binary tree of
//     wedges around the observer and re-checks exactly only where the bounds do not decide.
//     Its verdicts, margins and angles are the reference's, bit for bit (tested).
#include <cstdint>
#include <limits>

#include "lookfar/core/Grid.hpp"
#include "lookfar/core/GridGeometry.hpp"
#include "lookfar/core/Progress.hpp"
#include "lookfar/earth/EarthModel.hpp"
#include "lookfar/sightline/Observer.hpp"

namespace lookfar {

enum class ViewshedMethod { Reference, Fast };

/// Values of the visibility grid (docs/design.md).
inline constexpr std::uint8_t kHidden = 0;
inline constexpr std::uint8_t kVisible = 1;
inline constexpr std::uint8_t kNoVisibility = 255;  ///< outside reach, or DEM no-data

struct ViewshedOptions {
    double target_height_m = 0.0;  ///< target above the ground of each cell, metres, ≥ 0
    double reach_m = std::numeric_limits<double>::infinity();  ///< farthest distance, > 0
    ViewshedMethod method = ViewshedMethod::Fast;
    bool want_margin = false;  ///< fill ViewshedGrids::margin
    bool want_angle = false;   ///< fill ViewshedGrids::angle
    /// Return grids that cover only the window of DEM cells within reach (ViewshedGrids::window
    /// says where it lies) instead of the whole DEM: less memory for many observers.
    bool crop_to_reach = false;
};

/// A rectangle of DEM cells: the first column and row and the size, cells.
struct CellWindow {
    int col0 = 0;
    int row0 = 0;
    int width = 0;
    int height = 0;
    bool contains(int col, int row) const {
        return col >= col0 && row >= row0 && col < col0 + width && row < row0 + height;
    }
};

struct ViewshedGrids {
    Grid<std::uint8_t> visible;  ///< kVisible / kHidden / kNoVisibility
    Grid<float> margin;          ///< metres (NaN = no data); empty unless asked
    Grid<float> angle;           ///< degrees (NaN = no data); empty unless asked
    /// DEM cells the grids cover: the whole DEM unless ViewshedOptions::crop_to_reach.
    CellWindow window;
};

/// The smallest window of DEM cells that holds every cell within `reach_m` (metres, > 0, may be
/// infinite) of the observer, by the engines' fast distance; the whole DEM when unlimited.
CellWindow reachWindow(const GridGeometry& geometry, const Observer& observer, double reach_m);

/// The exact sightline rule applied to every cell within reach (OpenMP over rows).
ViewshedGrids referenceViewshed(const Grid<float>& dem, const GridGeometry& geometry,
                                const EarthModel& earth, const Observer& observer,
                                const ViewshedOptions& options,
                                Progress& progress = silentProgress());

/// The fast engine (see FastViewshed.cpp for its method and error behaviour).
ViewshedGrids fastViewshed(const Grid<float>& dem, const GridGeometry& geometry,
                           const EarthModel& earth, const Observer& observer,
                           const ViewshedOptions& options, Progress& progress = silentProgress());

/// Runs the engine named in options.method.
ViewshedGrids computeViewshed(const Grid<float>& dem, const GridGeometry& geometry,
                              const EarthModel& earth, const Observer& observer,
                              const ViewshedOptions& options,
                              Progress& progress = silentProgress());

/// Checks what both engines need (NaN-safe): the observer inside the DEM and on data, its
/// height finite and ≥ 0, the target height finite and ≥ 0, reach > 0. Throws InputError for
/// the observer's cell and UsageError for the option values, each naming the value.
void validateViewshedInputs(const Grid<float>& dem, const Observer& observer,
                            const ViewshedOptions& options);

}  // namespace lookfar
