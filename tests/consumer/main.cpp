// A program that uses the installed lookfar package through its umbrella header: a viewshed over
// an in-memory grid whose answer is known exactly. Exits 0 on the right answer, 1 otherwise.
//
// The grid: a flat plain at 0 m, 41 × 41 cells of 10 m, with a wall 10 m high along column 25.
// The eye stands 1.7 m above cell (20, 20) on a flat Earth. By the sightline rule of
// docs/design.md (terrain sampled where the segment crosses row and column lines, interpolated
// between the neighbouring centres), every sightline to a cell beyond the wall (column > 25)
// crosses column line 25 where the terrain is 10 m, far above a line that runs from 1.7 m down to
// ground level: hidden. Every other cell has only 0 m terrain between it and the eye: visible.
// Worked out by hand from the rule (common practice, no outside source needed).
#include <cstdio>
#include <cstring>
#include <exception>

#include <lookfar/lookfar.hpp>

namespace {

int check(lookfar::ViewshedMethod method, const char* name) {
    const int n = 41;
    const int wall_col = 25;
    lookfar::Grid<float> dem(n, n, 0.0f);
    for (int row = 0; row < n; ++row)
        dem(wall_col, row) = 10.0f;
    const lookfar::GridGeometry geometry(n, n, {400000.0, 10.0, 0.0, 5600000.0, 0.0, -10.0}, false,
                                         1.0, lookfar::Ellipsoid::wgs84());
    const lookfar::EarthModel earth(lookfar::EarthShape::Flat);
    lookfar::Observer eye;
    eye.name = "consumer";
    eye.col = 20;
    eye.row = 20;
    eye.height_m = 1.7;
    lookfar::ViewshedOptions options;
    options.method = method;

    const lookfar::ViewshedGrids grids =
        lookfar::computeViewshed(dem, geometry, earth, eye, options);
    if (grids.visible.width() != n || grids.visible.height() != n) {
        std::fprintf(stderr, "%s engine: grid of %d x %d cells, expected %d x %d\n", name,
                     grids.visible.width(), grids.visible.height(), n, n);
        return 1;
    }
    int wrong = 0;
    int visible = 0;
    for (int row = 0; row < n; ++row) {
        for (int col = 0; col < n; ++col) {
            const std::uint8_t expected = col > wall_col ? lookfar::kHidden : lookfar::kVisible;
            const std::uint8_t got = grids.visible(col, row);
            visible += got == lookfar::kVisible;
            if (got != expected && wrong++ < 10)
                std::fprintf(stderr, "%s engine: cell (%d, %d) is %d, expected %d\n", name, col,
                             row, got, expected);
        }
    }
    std::printf("%s engine: %d visible cells of %d, %d wrong\n", name, visible, n * n, wrong);
    return wrong == 0 ? 0 : 1;
}

}  // namespace

int main() {
    try {
        std::printf("lookfar %s\n", lookfar::version());
        if (std::strcmp(lookfar::version(), lookfar::kVersion) != 0) {
            std::fprintf(stderr, "library version %s differs from the headers' %s\n",
                         lookfar::version(), lookfar::kVersion);
            return 1;
        }
        int status = check(lookfar::ViewshedMethod::Reference, "reference");
        status |= check(lookfar::ViewshedMethod::Fast, "fast");
        return status;
    } catch (const std::exception& e) {
        std::fprintf(stderr, "lookfar failed: %s\n", e.what());
        return 1;
    }
}
