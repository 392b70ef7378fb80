// The reference horizon engine: brute-force marching of every ray.
//
// Notation
//   O = (c0, r0)  the eye's cell; z_e = DEM(O) + observer height
//   t             tangent of the elevation angle of a sample: (z − drop − z_e)/d
//
// For every cell and direction the ray from the centre of O is followed across the grid; the
// terrain is sampled where it crosses each column line and each row line through cell centres
// (linear interpolation between the two neighbouring centres), exactly the samples of the
// sightline rule (docs/design.md). The horizon is the sample with the largest t; ties go to the
// nearer sample. Cost O(W + H) per cell and direction: it is the yardstick of the fast engine and
// the engine of `lookfar horizon --at`, not a production path for large grids.
//
// Output is streamed in strips of rows, one direction after another, so memory does not grow
// with the number of directions.
#include <algorithm>
#include <cmath>
#include <limits>
#include <vector>

#include "HorizonInternal.hpp"
#include "lookfar/core/Errors.hpp"
#include "lookfar/core/ParallelFor.hpp"
#include "lookfar/core/Units.hpp"

namespace lookfar::horizon_detail {

void referenceScan(const EngineInput& in, HorizonSink& sink, SummaryAccumulator& acc,
                   Progress& progress) {
    const Grid<float>& dem = in.dem;
    const int w = dem.width(), h = dem.height();
    const int n_dir = in.options.directions;
    // Strips of 128 rows handed over as 128 × 128 rectangles: the block size of the horizon
    // rasters, so that they can be written block by block.
    constexpr int kStripRows = 128;
    constexpr int kRectCols = 128;
    const int strips = (h + kStripRows - 1) / kStripRows;
    const float nan = std::numeric_limits<float>::quiet_NaN();
    std::vector<float> angle(static_cast<std::size_t>(w) * kStripRows);
    std::vector<float> distance(angle.size());

    progress.begin("horizon (reference)", static_cast<std::int64_t>(n_dir) * strips);
    std::int64_t done = 0;
    for (int i = 0; i < n_dir; ++i) {
        const double az = horizonAzimuthDeg(i, n_dir);
        double sin_a, cos_a;
        sinCosDeg(az, sin_a, cos_a);
        sink.beginDirection(i, az);
        for (int s = 0; s < strips; ++s) {
            const int row0 = s * kStripRows;
            const int rows = std::min(kStripRows, h - row0);
            ParallelForOptions rows_loop;
            rows_loop.report = false;  // progress counts strips, below
            parallelFor(
                rows, progress,
                [&](std::int64_t ri) {
                    const int rr = static_cast<int>(ri);
                    const int r = row0 + rr;
                    for (int c = 0; c < w; ++c) {
                        const std::size_t k = static_cast<std::size_t>(rr) * w + c;
                        const float ground = dem(c, r);
                        if (std::isnan(ground)) {
                            angle[k] = distance[k] = nan;
                            continue;
                        }
                        RayResult ray = marchRay(dem, in.metric, in.curvature, c, r,
                                                 ground + in.options.observer_height_m, sin_a,
                                                 cos_a, in.options.reach_m);
                        if (!ray.found) {
                            angle[k] = distance[k] = nan;
                            continue;
                        }
                        angle[k] = static_cast<float>(std::atan(ray.t) * kRadToDeg);
                        distance[k] = static_cast<float>(ray.distance_m);
                        acc.add(dem.index(c, r), angle[k], ray.t);
                    }
                },
                rows_loop);
            if (sink.wantsRectangles()) {
                for (int c0 = 0; c0 < w; c0 += kRectCols) {
                    sink.rectangle(i, c0, row0, std::min(kRectCols, w - c0), rows, w,
                                   angle.data() + c0, distance.data() + c0);
                }
            }
            progress.advance(++done);
        }
        sink.endDirection(i);
    }
    progress.end();
}

}  // namespace lookfar::horizon_detail
