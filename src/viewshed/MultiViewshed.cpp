// Viewsheds of many observers (see MultiViewshed.hpp). With at least as many sites as threads,
// the sites run in parallel, each engine on one thread over the window within its reach; with
// fewer, one site after the other, each engine on every thread. Counts are sums and margins
// maxima, so the order in which sites finish does not change the result.
#include "lookfar/viewshed/MultiViewshed.hpp"

#include <cmath>
#include <limits>
#include <string>

#ifdef _OPENMP
#include <omp.h>
#endif

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/ParallelFor.hpp"

namespace lookfar {

namespace {

void merge(MultiViewshedResult& out, const ViewshedGrids& g) {
    const CellWindow& w = g.window;
    const int dem_width = out.count.width();
    for (int wr = 0; wr < w.height; ++wr) {
        const std::uint8_t* vis = g.visible.row(wr);
        std::uint16_t* count = out.count.data() + static_cast<std::size_t>(w.row0 + wr) * dem_width;
        float* best =
            out.best_margin.empty()
                ? nullptr
                : out.best_margin.data() + static_cast<std::size_t>(w.row0 + wr) * dem_width;
        const float* margin = g.margin.empty() ? nullptr : g.margin.row(wr);
        for (int wc = 0; wc < w.width; ++wc) {
            const std::uint8_t v = vis[wc];
            if (v == kNoVisibility)
                continue;
            const int c = w.col0 + wc;
            std::uint16_t n = count[c] == kNoCount ? 0 : count[c];
            count[c] = static_cast<std::uint16_t>(n + (v == kVisible ? 1 : 0));
            if (best && margin && !(best[c] >= margin[wc]))
                best[c] = margin[wc];  // NaN in best (nothing yet) is replaced
        }
    }
}

}  // namespace

MultiViewshedResult multiViewshed(const Grid<float>& dem, const GridGeometry& geometry,
                                  const EarthModel& earth, const std::vector<Observer>& observers,
                                  const ViewshedOptions& options, Progress& progress) {
    return multiViewshed(dem, geometry, earth, observers, options, SiteGridsReceiver(), progress);
}

MultiViewshedResult multiViewshed(const Grid<float>& dem, const GridGeometry& geometry,
                                  const EarthModel& earth, const std::vector<Observer>& observers,
                                  const ViewshedOptions& options,
                                  const SiteGridsReceiver& each_site, Progress& progress) {
    if (observers.empty())
        throw UsageError("no sites were given");
    if (observers.size() >= kNoCount) {
        throw UsageError(std::to_string(observers.size()) +
                         " sites are more than a count raster can hold (at most 65534)");
    }
    if (options.want_angle)
        throw UsageError("an elevation-angle layer needs a single observer, not several sites");
    for (const Observer& o : observers)
        validateViewshedInputs(dem, o, options);

    MultiViewshedResult out;
    out.count = Grid<std::uint16_t>(dem.width(), dem.height(), kNoCount);
    if (options.want_margin) {
        out.best_margin =
            Grid<float>(dem.width(), dem.height(), std::numeric_limits<float>::quiet_NaN());
    }
    out.sites.resize(observers.size());
    ViewshedOptions site_options = options;
    site_options.crop_to_reach = true;

    const int n = static_cast<int>(observers.size());
    int threads = 1;
#ifdef _OPENMP
    threads = omp_get_max_threads();
#endif
    progress.begin(n == 1 ? "viewshed" : "viewsheds of " + std::to_string(n) + " sites", n);
    CancelOnlyProgress inner(progress);
    ParallelForOptions loop;
    // With fewer sites than threads, the sites run one after the other, each engine's own
    // parallel loop on every thread.
    loop.parallel = n >= threads && threads > 1;
    parallelFor(
        n, progress,
        [&](std::int64_t i) {
            ViewshedGrids g =
                computeViewshed(dem, geometry, earth, observers[i], site_options, inner);
            out.sites[i] =
                summarizeViewshed(g.visible, g.window, geometry, observers[i], options.reach_m);
#pragma omp critical(lookfar_multiviewshed_merge)
            merge(out, g);
            if (each_site)
                each_site(static_cast<std::size_t>(i), g);
        },
        loop);
    progress.end();
    return out;
}

}  // namespace lookfar
