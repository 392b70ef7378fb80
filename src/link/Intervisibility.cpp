// Intervisibility matrix: one SightlineRule per observing station, every other station judged.
//   n          number of stations; the matrix is n × n, row = observer
//   d_ij       fast distance between cell centres (LocalFrame of the observer), metres
#include "lookfar/link/Intervisibility.hpp"

#include <algorithm>
#include <cmath>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/ParallelFor.hpp"
#include "lookfar/sightline/SightlineRule.hpp"

namespace lookfar {

PairVerdict IntervisResult::at(int from, int to) const {
    const std::vector<PairVerdict>& row = judged.at(static_cast<std::size_t>(from));
    auto it = std::lower_bound(row.begin(), row.end(), to,
                               [](const PairVerdict& v, int j) { return v.to < j; });
    if (it != row.end() && it->to == to)
        return *it;
    PairVerdict none;
    none.to = to;
    return none;
}

std::int64_t IntervisResult::judgedCount() const {
    std::int64_t count = 0;
    for (const auto& row : judged)
        count += static_cast<std::int64_t>(row.size());
    return count;
}

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
    out.judged.resize(static_cast<std::size_t>(n));
    progress.begin("intervisibility", n);
    parallelFor(n, progress, [&](std::int64_t si) {
        const int i = static_cast<int>(si);
        const SightlineRule rule(dem, geometry, earth, stations[i]);
        const LocalFrame& frame = rule.frame();
        std::vector<PairVerdict>& row = out.judged[static_cast<std::size_t>(i)];
        for (int j = 0; j < n; ++j) {
            if (j == i)
                continue;
            const Observer& t = stations[j];
            const double d = std::hypot(frame.east(t.col, t.row), frame.north(t.row));
            if (!(d <= options.reach_m))
                continue;
            const SightlineVerdict sv = rule.judge(t.col, t.row, t.height_m);
            PairVerdict v;
            v.to = j;
            v.distance_m = d;
            v.judged = true;
            v.visible = sv.visible;
            v.margin_m = sv.margin_m;
            row.push_back(v);
        }
    });
    progress.end();
    return out;
}

}  // namespace lookfar
