// The fast horizon engine: upper convex hulls swept along parallel scan lines find where the far
// horizon of each cell lies; the cell's own ray is sampled exactly there and over its first steps.
// The method, its derivation and its measured agreement with the reference are in
// docs/horizon.md ("Fast engine"). This file runs the directions; the parts are:
//   HorizonKernels   the near-field kernels (vector code chosen at run time) and atan in degrees
//   ScanDirection    a direction's axes, lines and the exact crossings of a cell's ray
//   SlidingHull      the upper hull of a line's samples in a sliding window, and tangents to it
//   LineSweep        groups of scan lines: gathered, folded, swept; each cell's tangent point
//   FarRefiner       the exact samples of a cell's ray around its tangent point
//   HorizonTiles     the 128² output tiles: near fields first, angles and distances last
//
// Glossary
//   major axis   the grid axis along which the direction moves most (columns when |u_c| ≥ |u_r|)
//   a, p         major and minor index of a cell; A, B the grid's extents along those axes
//   m            minor cells per major step along the direction, |m| ≤ 1
//   j            index of a scan line: at major index a it passes minor position j + m·a
//   x_a, g_a     ⌈m·a⌉ and ⌈m·a⌉ − m·a ∈ [0, 1): line j meets major index a at minor j + x_a − g_a
//   s            coordinate along a line, metres, increasing towards the horizon
//   c            curvature after refraction along the azimuth: a point at distance d appears
//                c·d² lower
//   Z(s)         folded height z(s) − c·s² of the line's sample at s
//   E            an eye at s_E with height z_e (DEM + observer height); folded Z_E = z_e − c·s_E²
//   t            tangent of an elevation angle: (Z_P − Z_E)/(s_P − s_E) + 2c·s_E for sample P
//   K, r         HorizonOptions::exact_steps (the near field) and refine_steps (± around the
//                tangent point)
#include <algorithm>
#include <memory>
#include <vector>

#ifdef _OPENMP
#include <omp.h>
#endif

#include "FastHorizonCommon.hpp"
#include "HorizonInternal.hpp"
#include "HorizonKernels.hpp"
#include "HorizonTiles.hpp"
#include "LineSweep.hpp"
#include "ScanDirection.hpp"
#include "lookfar/core/Errors.hpp"
#include "lookfar/core/ParallelFor.hpp"

namespace lookfar::horizon_detail {

using namespace fast;

namespace {

int threadIndex() {
#ifdef _OPENMP
    return omp_get_thread_num();
#else
    return 0;
#endif
}

struct TileInfo {
    int id;
    long jmin, jmax;  // the lines that answer for the tile's cells
};

}  // namespace

void fastScan(const EngineInput& in, HorizonSink& sink, SummaryAccumulator& acc,
              Progress& progress) {
    const int w = in.dem.width(), h = in.dem.height();
    const int n_dir = in.options.directions;
    const bool rectangles = sink.wantsRectangles();
    const Kernels kernels = chooseKernels();
    Tiles tiles;
    tiles.ntx = (w + kTile - 1) / kTile;
    tiles.nty = (h + kTile - 1) / kTile;
    tiles.ptr.assign(static_cast<std::size_t>(tiles.ntx) * tiles.nty, nullptr);
    int threads = 1;
#ifdef _OPENMP
    threads = omp_get_max_threads();
#endif
    std::vector<Scratch> scratch(threads);
    for (auto& s : scratch)
        s.reserve(std::max(w, h) + 1);
    std::vector<std::unique_ptr<TileScratch>> tile_scratch;
    for (int t = 0; t < threads; ++t)
        tile_scratch.emplace_back(new TileScratch);
    constexpr std::int64_t kPerDirection = 1000;
    progress.begin("horizon", n_dir * kPerDirection);
    Direction d;
    std::vector<TileInfo> by_start, by_end, ready, fresh;

    for (int i = 0; i < n_dir; ++i) {
        setUp(in, i, d);
        sink.beginDirection(i, d.azimuth_deg);
        // The lines that answer for each tile's cells: the lower and upper lines of its cells
        // (x_a is monotone: the extremes are at the tile's ends).
        by_start.clear();
        for (int ty = 0; ty < tiles.nty; ++ty) {
            for (int tx = 0; tx < tiles.ntx; ++tx) {
                const int c0 = tx * kTile, c1 = std::min(w, c0 + kTile) - 1;
                const int r0 = ty * kTile, r1 = std::min(h, r0 + kTile) - 1;
                const int a0 = d.major_cols ? c0 : r0, a1 = d.major_cols ? c1 : r1;
                const int p0 = d.major_cols ? r0 : c0, p1 = d.major_cols ? r1 : c1;
                const int x_max = std::max(d.xi[a0], d.xi[a1]);
                const int x_min = std::min(d.xi[a0], d.xi[a1]);
                by_start.push_back({ty * tiles.ntx + tx, p0 - x_max, p1 - x_min + 1});
            }
        }
        by_end = by_start;
        std::sort(by_start.begin(), by_start.end(),
                  [](const TileInfo& x, const TileInfo& y) { return x.jmin < y.jmin; });
        std::sort(by_end.begin(), by_end.end(), [](const TileInfo& x, const TileInfo& y) {
            return x.jmax < y.jmax || (x.jmax == y.jmax && x.id < y.id);
        });
        std::size_t next_start = 0, next_end = 0;
        const LineWorker lines(in, d, tiles);
        const TileWorker finisher(in, d, acc, kernels);
        const long span = d.jmax - d.jmin + 1;
        const long batch_lines = static_cast<long>(kGroupLines) * kBatchGroups;
        // The tiles that the lines of the batch ending at line j1 reach first: taken into
        // `fresh`, their near field still to be sampled.
        auto acquireFor = [&](long j1) {
            fresh.clear();
            const bool last = j1 >= d.jmax;
            while (next_start < by_start.size() && (by_start[next_start].jmin <= j1 || last)) {
                tiles.ptr[by_start[next_start].id] = tiles.acquire();
                fresh.push_back(by_start[next_start]);
                ++next_start;
            }
        };
        auto tileWork = [&](const TileInfo& info, bool near) {
            const int c0 = (info.id % tiles.ntx) * kTile, r0 = (info.id / tiles.ntx) * kTile;
            const int tw = std::min(kTile, w - c0), th = std::min(kTile, h - r0);
            TileScratch& ts = *tile_scratch[threadIndex()];
            if (near)
                finisher.near(tiles.ptr[info.id], c0, r0, tw, th, ts);
            else
                finisher.finish(tiles.ptr[info.id], c0, r0, tw, th, ts);
        };
        // The near field of the first batch's tiles.
        acquireFor(std::min(d.jmin + batch_lines - 1, d.jmax));
        ParallelForOptions loop;
        loop.report = false;  // progress counts lines, below
        parallelFor(
            static_cast<std::int64_t>(fresh.size()), progress,
            [&](std::int64_t item) { tileWork(fresh[item], true); }, loop);
        // One parallel loop a batch: the line groups of this batch, the tiles that the previous
        // batch completed (no line of this batch touches them) and the near field of the tiles
        // the next batch reaches first, so the threads meet once a batch and the tiles fill the
        // gaps the lines leave.
        ready.clear();
        for (long j0 = d.jmin;; j0 += batch_lines) {
            const bool more_lines = j0 <= d.jmax;
            const long j1 = more_lines ? std::min(j0 + batch_lines - 1, d.jmax) : j0 - 1;
            const bool last = j1 >= d.jmax;
            if (more_lines && !last)
                acquireFor(std::min(j1 + batch_lines, d.jmax));
            else
                fresh.clear();
            const int groups = more_lines ? static_cast<int>((j1 - j0) / kGroupLines + 1) : 0;
            const int n_ready = static_cast<int>(ready.size());
            const int n_fresh = static_cast<int>(fresh.size());
            parallelFor(
                groups + n_ready + n_fresh, progress,
                [&](std::int64_t item) {
                    if (item < groups) {
                        lines.run(j0 + static_cast<long>(item) * kGroupLines, j1,
                                  scratch[threadIndex()]);
                    } else if (item < groups + n_ready) {
                        tileWork(ready[item - groups], false);
                    } else {
                        tileWork(fresh[item - groups - n_ready], true);
                    }
                },
                loop);
            for (const TileInfo& info : ready) {
                const int c0 = (info.id % tiles.ntx) * kTile, r0 = (info.id / tiles.ntx) * kTile;
                const float* buf = tiles.ptr[info.id];
                if (rectangles) {
                    sink.rectangle(i, c0, r0, std::min(kTile, w - c0), std::min(kTile, h - r0),
                                   kTile, buf, buf + kTileCells);
                }
                tiles.release(info.id);
            }
            ready.clear();
            if (!more_lines)
                break;
            while (next_end < by_end.size() && (by_end[next_end].jmax <= j1 || last)) {
                ready.push_back(by_end[next_end]);
                ++next_end;
            }
            throwIfCancelled(progress);
            const long done_lines = std::min(span, j1 - d.jmin + 1);
            progress.advance(i * kPerDirection +
                             (span > 0 ? done_lines * kPerDirection / span : kPerDirection));
        }
        sink.endDirection(i);
    }
    progress.end();
}

}  // namespace lookfar::horizon_detail
