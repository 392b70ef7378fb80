// Placeholder: the fast engine lands with the viewshed issue; until then it is the reference.
#include "lookfar/viewshed/Viewshed.hpp"

namespace lookfar {

ViewshedGrids fastViewshed(const Grid<float>& dem, const GridGeometry& geometry,
                           const EarthModel& earth, const Observer& observer,
                           const ViewshedOptions& options, Progress& progress) {
    return referenceViewshed(dem, geometry, earth, observer, options, progress);
}

ViewshedGrids computeViewshed(const Grid<float>& dem, const GridGeometry& geometry,
                              const EarthModel& earth, const Observer& observer,
                              const ViewshedOptions& options, Progress& progress) {
    if (options.method == ViewshedMethod::Reference) {
        return referenceViewshed(dem, geometry, earth, observer, options, progress);
    }
    return fastViewshed(dem, geometry, earth, observer, options, progress);
}

}  // namespace lookfar
