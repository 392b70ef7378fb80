// The reference viewshed: the sightline rule of SightlineRule.hpp applied to every cell within
// reach on its own, O(distance) samples per cell. It is the oracle the fast engine, the tests
// and the benchmark are measured against. OpenMP over rows; each cell is judged independently,
// so the result is the same for any number of threads.
#include <cmath>
#include <limits>

#include "lookfar/core/ParallelFor.hpp"
#include "lookfar/sightline/SightlineRule.hpp"
#include "lookfar/viewshed/Viewshed.hpp"

namespace lookfar {

ViewshedGrids referenceViewshed(const Grid<float>& dem, const GridGeometry& geometry,
                                const EarthModel& earth, const Observer& observer,
                                const ViewshedOptions& options, Progress& progress) {
    validateViewshedInputs(dem, observer, options);
    const SightlineRule rule(dem, geometry, earth, observer);
    const LocalFrame& frame = rule.frame();
    ViewshedGrids out;
    out.window = options.crop_to_reach ? reachWindow(geometry, observer, options.reach_m)
                                       : CellWindow{0, 0, dem.width(), dem.height()};
    const CellWindow win = out.window;
    out.visible = Grid<std::uint8_t>(win.width, win.height, kNoVisibility);
    const float nan = std::numeric_limits<float>::quiet_NaN();
    if (options.want_margin)
        out.margin = Grid<float>(win.width, win.height, nan);
    if (options.want_angle)
        out.angle = Grid<float>(win.width, win.height, nan);
    progress.begin("reference viewshed", win.height);
    parallelFor(win.height, progress, [&](std::int64_t i) {
        const int r = win.row0 + static_cast<int>(i);
        for (int c = win.col0; c < win.col0 + win.width; ++c) {
            // Cells beyond reach are skipped before their sightline is walked; the distance is
            // the one judge() reports.
            if (std::hypot(frame.east(c, r), frame.north(r)) > options.reach_m)
                continue;
            SightlineVerdict v = rule.judge(c, r, options.target_height_m);
            if (v.nodata)
                continue;
            const int oc = c - win.col0, orow = r - win.row0;
            out.visible(oc, orow) = v.visible ? kVisible : kHidden;
            if (options.want_margin)
                out.margin(oc, orow) = static_cast<float>(v.margin_m);
            if (options.want_angle)
                out.angle(oc, orow) = static_cast<float>(v.angle_deg);
        }
    });
    progress.end();
    return out;
}

}  // namespace lookfar
