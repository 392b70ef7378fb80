// Intervisibility matrix: one SightlineRule per observing station, every other station judged.
//   n          number of stations; the matrix is n × n, row = observer
//   d_ij       fast distance between cell centres (LocalFrame of the observer), metres
#include "lookfar/link/Intervisibility.hpp"

#include <cmath>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/ParallelFor.hpp"
#include "lookfar/viewshed/SightlineRule.hpp"

namespace lookfar {

IntervisResult computeIntervisibility(const Grid<float>& dem, const GridGeometry& geometry,
                                      const EarthModel& earth,
                                      const std::vector<Observer>& stations,
                                      const IntervisOptions& options, Progress& progress) {
    if (!(options.reach_m > 0))
        throw InternalError("intervisibility: the reach must be positive");
    const int n = static_cast<int>(stations.size());
    for (const Observer& s : stations) {
        if (!dem.contains(s.col, s.row))
            throw InputError("the station '" + s.name + "' is outside the DEM");
        if (std::isnan(dem(s.col, s.row)))
            throw InputError("the station '" + s.name + "' stands on a no-data cell");
    }
    IntervisResult out;
    out.stations = n;
    out.pairs.resize(static_cast<std::size_t>(n) * n);
    progress.begin("intervisibility", n);
    parallelFor(n, progress, [&](std::int64_t si) {
        const int i = static_cast<int>(si);
        const SightlineRule rule(dem, geometry, earth, stations[i]);
        const LocalFrame& frame = rule.frame();
        PairVerdict* row = out.pairs.data() + static_cast<std::size_t>(i) * n;
        for (int j = 0; j < n; ++j) {
            if (j == i)
                continue;
            const Observer& t = stations[j];
            PairVerdict& v = row[j];
            v.distance_m = std::hypot(frame.east(t.col, t.row), frame.north(t.row));
            if (!(v.distance_m <= options.reach_m))
                continue;
            const SightlineVerdict sv = rule.judge(t.col, t.row, t.height_m);
            v.judged = true;
            v.visible = sv.visible;
            v.margin_m = sv.margin_m;
        }
    });
    progress.end();
    return out;
}

}  // namespace lookfar
