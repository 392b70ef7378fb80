#pragma once
// Viewsheds of many observers at once: how many of them see each cell, the best margin over
// them, and each one's statistics. Sites run in parallel, each on the window within its reach;
// no grid is kept per site.
#include <cstddef>
#include <cstdint>
#include <functional>
#include <vector>

#include "lookfar/core/Grid.hpp"
#include "lookfar/core/GridGeometry.hpp"
#include "lookfar/core/Progress.hpp"
#include "lookfar/earth/EarthModel.hpp"
#include "lookfar/viewshed/ViewshedSummary.hpp"
#include "lookfar/sightline/Observer.hpp"
#include "lookfar/viewshed/Viewshed.hpp"

namespace lookfar {

struct MultiViewshedResult {
    /// Number of sites that see each cell (the DEM's size); kNoCount where no site reaches the
    /// cell or the DEM has no data.
    Grid<std::uint16_t> count;
    /// Largest margin over the sites that reach the cell, metres (NaN = no data); empty unless
    /// options.want_margin.
    Grid<float> best_margin;
    std::vector<ViewshedStats> sites;  ///< one per observer, in the order given
};

/// Runs the engine of options.method for every observer (at most 65 534) and combines the
/// results. options.want_angle must be false (an angle has no meaning over several sites) and
/// options.crop_to_reach is implied. Identical for any number of threads.
MultiViewshedResult multiViewshed(const Grid<float>& dem, const GridGeometry& geometry,
                                  const EarthModel& earth, const std::vector<Observer>& observers,
                                  const ViewshedOptions& options,
                                  Progress& progress = silentProgress());

/// Receives each site's own grids as soon as its engine is done (`site` indexes `observers`):
/// the visibility over the window within the site's reach (ViewshedGrids::window, cells of
/// `dem`), and its margin when options.want_margin. Called once per site, in no fixed order and,
/// when the sites run in parallel, from several threads at once: it must be thread-safe. Its
/// first exception stops the run and is rethrown. The grids are freed after the call, so no
/// more than one site's grids per thread are held at once.
using SiteGridsReceiver = std::function<void(std::size_t site, const ViewshedGrids& grids)>;

/// multiViewshed, handing every site's grids to `each_site` as well (lookfar viewshed
/// --per-site).
MultiViewshedResult multiViewshed(const Grid<float>& dem, const GridGeometry& geometry,
                                  const EarthModel& earth, const std::vector<Observer>& observers,
                                  const ViewshedOptions& options,
                                  const SiteGridsReceiver& each_site,
                                  Progress& progress = silentProgress());

}  // namespace lookfar
