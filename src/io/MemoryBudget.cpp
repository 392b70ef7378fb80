#include "lookfar/io/MemoryBudget.hpp"

#include <gdal.h>

#include <algorithm>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/MemorySize.hpp"

namespace lookfar {

MemoryShares splitMemoryBudget(std::int64_t budget) {
    if (budget < kMinMemoryBudget) {
        throw UsageError("--memory: " + formatMemorySize(budget) +
                         " is below the smallest budget lookfar works in, " +
                         formatMemorySize(kMinMemoryBudget));
    }
    constexpr std::int64_t kMiB = std::int64_t(1) << 20;
    MemoryShares s;
    s.budget = budget;
    s.gdal_cache = std::clamp<std::int64_t>(budget / 16, 8 * kMiB, 256 * kMiB);
    s.writers = 16 * kMiB;
    s.work = budget - s.gdal_cache - s.writers;
    return s;
}

void applyGdalCacheShare(const MemoryShares& shares) {
    GDALSetCacheMax64(shares.gdal_cache);
}

void requireWindowFits(const MemoryShares& shares, const std::string& dem_name, int width,
                       int height, int bytes_per_cell, bool reach_limited) {
    const std::int64_t need = static_cast<std::int64_t>(width) * height * bytes_per_cell;
    if (need <= shares.work)
        return;
    const std::int64_t total = need + shares.gdal_cache + shares.writers;  // as the budget counts
    const std::string cells = std::to_string(width) + " × " + std::to_string(height) + " cells";
    if (reach_limited) {
        throw UsageError("the cells within reach of " + dem_name + " (" + cells + ") need " +
                         formatMemorySize(total) + ", over the memory budget of " +
                         formatMemorySize(shares.budget) +
                         ": give a shorter --reach or raise --memory");
    }
    throw UsageError(
        dem_name + " (" + cells + ") needs " + formatMemorySize(total) +
        " in memory, over the memory budget of " + formatMemorySize(shares.budget) +
        ": give --reach (then only the cells within reach are read) or raise --memory");
}

}  // namespace lookfar
