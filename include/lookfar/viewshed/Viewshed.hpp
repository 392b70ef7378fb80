#pragma once
// Viewshed of one observer over a DEM held in memory.
#include <cstdint>
#include <limits>

#include "lookfar/core/Grid.hpp"
#include "lookfar/core/GridGeometry.hpp"
#include "lookfar/core/Progress.hpp"
#include "lookfar/earth/EarthModel.hpp"
#include "lookfar/viewshed/Observer.hpp"

namespace lookfar {

enum class ViewshedMethod { Reference, Fast };

/// Values of the visibility grid (DESIGN.md).
inline constexpr std::uint8_t kHidden = 0;
inline constexpr std::uint8_t kVisible = 1;
inline constexpr std::uint8_t kNoVisibility = 255;  ///< outside reach, or DEM no-data

struct ViewshedOptions {
    double target_height_m = 0.0;  ///< target above the ground of each cell, metres, ≥ 0
    double reach_m = std::numeric_limits<double>::infinity();  ///< farthest distance, > 0
    ViewshedMethod method = ViewshedMethod::Fast;
    bool want_margin = false;  ///< fill ViewshedGrids::margin
    bool want_angle = false;   ///< fill ViewshedGrids::angle
};

struct ViewshedGrids {
    Grid<std::uint8_t> visible;  ///< kVisible / kHidden / kNoVisibility
    Grid<float> margin;          ///< metres (NaN = no data); empty unless asked
    Grid<float> angle;           ///< degrees (NaN = no data); empty unless asked
};

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

}  // namespace lookfar
