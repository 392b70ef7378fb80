#include <atomic>
#include <cmath>
#include <limits>

#include "lookfar/viewshed/SightlineRule.hpp"
#include "lookfar/viewshed/Viewshed.hpp"

namespace lookfar {

ViewshedGrids referenceViewshed(const Grid<float>& dem, const GridGeometry& geometry,
                                const EarthModel& earth, const Observer& observer,
                                const ViewshedOptions& options, Progress& progress) {
    const SightlineRule rule(dem, geometry, earth, observer);
    const int w = dem.width(), h = dem.height();
    ViewshedGrids out;
    out.visible = Grid<std::uint8_t>(w, h, kNoVisibility);
    const float nan = std::numeric_limits<float>::quiet_NaN();
    if (options.want_margin)
        out.margin = Grid<float>(w, h, nan);
    if (options.want_angle)
        out.angle = Grid<float>(w, h, nan);
    progress.begin("reference viewshed", h);
    std::atomic<std::int64_t> rows_done{0};
    std::atomic<bool> stop{false};
#pragma omp parallel for schedule(dynamic, 1)
    for (int r = 0; r < h; ++r) {
        if (stop.load(std::memory_order_relaxed))
            continue;
        for (int c = 0; c < w; ++c) {
            SightlineVerdict v = rule.judge(c, r, options.target_height_m);
            if (v.nodata || v.distance_m > options.reach_m)
                continue;
            out.visible(c, r) = v.visible ? kVisible : kHidden;
            if (options.want_margin)
                out.margin(c, r) = static_cast<float>(v.margin_m);
            if (options.want_angle)
                out.angle(c, r) = static_cast<float>(v.angle_deg);
        }
        std::int64_t done = ++rows_done;
        if (progress.cancelled())
            stop = true;
#pragma omp critical(lookfar_progress)
        progress.advance(done);
    }
    progress.end();
    throwIfCancelled(progress);
    return out;
}

}  // namespace lookfar
