#pragma once
// The memory budget of a run (--memory, docs/design.md "Memory"): how it is shared between GDAL's
// block cache, the raster writers and the work (DEM windows, tiles, engines), and the check that
// refuses a DEM window over it before any work.
#include <cstdint>
#include <string>

namespace lookfar {

/// The smallest budget a run accepts.
inline constexpr std::int64_t kMinMemoryBudget = std::int64_t(32) << 20;

struct MemoryShares {
    std::int64_t budget = 0;      ///< the whole budget, bytes
    std::int64_t gdal_cache = 0;  ///< GDAL's block cache: 1/16 of the budget, 8 MiB to 256 MiB
    std::int64_t writers = 0;     ///< queues and compression of the raster writers: 16 MiB
    std::int64_t work = 0;        ///< the rest: DEM windows, tiles, engines' grids and scratch
};

/// Splits `budget` (bytes). Throws UsageError naming --memory when it is below kMinMemoryBudget.
MemoryShares splitMemoryBudget(std::int64_t budget);

/// Sets GDAL's block cache to its share (GDALSetCacheMax64).
void applyGdalCacheShare(const MemoryShares& shares);

/// Throws UsageError (one sentence: the DEM, the window's size and memory, the budget, what to do)
/// when `width` × `height` cells at `bytes_per_cell` exceed the work share. `reach_limited`: the
/// window is already the reach's (then the advice is a shorter reach or more memory).
void requireWindowFits(const MemoryShares& shares, const std::string& dem_name, int width,
                       int height, int bytes_per_cell, bool reach_limited);

}  // namespace lookfar
