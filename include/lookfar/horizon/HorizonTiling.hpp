#pragma once
// The horizon of every cell of a DEM larger than a memory budget, tile by tile: each tile's core
// (a rectangle of whole 128 × 128 blocks) is computed from a window of the DEM around it, the core
// widened by a halo that holds every sample within reach of its cells. The engines lay their scan
// lines out on the whole grid, so every cell gets the same bits as in one run over the whole DEM,
// whatever the tiles (docs/horizon.md "Large DEMs"). Without a reach every cell needs the whole
// DEM: a DEM over the budget is then refused before any work.
#include <cstdint>
#include <functional>
#include <limits>
#include <string>

#include "lookfar/core/Grid.hpp"
#include "lookfar/core/GridGeometry.hpp"
#include "lookfar/core/Progress.hpp"
#include "lookfar/earth/EarthModel.hpp"
#include "lookfar/horizon/HorizonScan.hpp"

namespace lookfar {

/// How a horizon run over a whole grid is cut into tiles.
struct HorizonTilePlan {
    int width = 0, height = 0;      ///< the whole grid, cells
    int core = 0;                   ///< side of a tile's core, cells (a multiple of 128)
    int halo = 0;                   ///< cells read around a core on every side (before alignment)
    int cols = 1, rows = 1;         ///< tiles across and down
    std::int64_t budget_bytes = 0;  ///< the budget the plan was made for
    std::int64_t peak_bytes = 0;    ///< the most the run holds at once by the plan's estimate
    bool tiled() const { return cols * rows > 1; }
    int tiles() const { return cols * rows; }
};

/// Bytes a horizon run holds for a window of `width` × `height` cells of a grid whose longer
/// side is `whole_side` cells, with `threads` worker threads: the elevations, the summary grids
/// asked for, the engine's tiles, lines and directions.
std::int64_t horizonRunBytes(int width, int height, int whole_side, const HorizonOptions& options,
                             int threads);

/// Plans the run over `whole` (a whole grid) within `budget_bytes`, of which `reserved_bytes` go
/// to others (the caller's GDAL cache and writers): one tile when it fits, else the largest
/// square cores whose windows fit. Throws UsageError (one sentence with the
/// DEM's size, the budget and what to do) when the DEM does not fit and the reach is unlimited,
/// and when even the smallest tile (one 128 × 128 block and its halo) does not fit, saying the
/// smallest budget that works. `dem_name` names the DEM in messages. `max_core` > 0 caps the
/// cores' side (a multiple of 128; tests and benchmarks) and tiles even a grid that would fit.
HorizonTilePlan planHorizonTiles(const GridGeometry& whole, const HorizonOptions& options,
                                 int threads, std::int64_t budget_bytes,
                                 const std::string& dem_name, std::int64_t reserved_bytes = 0,
                                 int max_core = 0);

/// Receives a tiled run's output, in cells of the whole grid. The directions come tile by tile:
/// beginDirection … endDirection once per tile and direction (a tile's directions in order).
class TiledHorizonSink : public HorizonSink {
  public:
    /// A finished tile core of the summary grids: `width` × `height` cells whose top-left cell
    /// is (col0, row0); value (c, r) is at [r · stride + c]; nullptr when not asked for.
    virtual void summary(int col0, int row0, int width, int height, int stride, const float* svf,
                         const float* dip) {
        (void)col0, (void)row0, (void)width, (void)height, (void)stride, (void)svf, (void)dip;
    }
};

/// Reads the cells of a window of the whole grid (cells of the whole grid), metres, NaN = no data.
using HorizonWindowReader = std::function<Grid<float>(int col0, int row0, int width, int height)>;

/// Runs the horizon over `whole` as `plan` says: reads each tile's window with `read`, runs the
/// engine of `options` on it and hands the cells of its core to `sink`. Progress goes from 0 to
/// the whole run once. Throws Interrupted when cancelled.
void runHorizonTiles(const GridGeometry& whole, const EarthModel& earth,
                     const HorizonOptions& options, const HorizonTilePlan& plan,
                     const HorizonWindowReader& read, TiledHorizonSink& sink,
                     Progress& progress = silentProgress());

}  // namespace lookfar
