// The horizon of a large DEM tile by tile (see HorizonTiling.hpp).
#include "lookfar/horizon/HorizonTiling.hpp"

#include <algorithm>
#include <cmath>
#include <string>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/MemorySize.hpp"

namespace lookfar {

namespace {

constexpr int kBlock = 128;  // the engines' output tile and the rasters' block

std::int64_t alignDown(std::int64_t v) {
    return v / kBlock * kBlock;
}

/// Cells around a core that hold every sample within reach of its cells: the reach in the
/// smallest cell side of the grid, and a margin for the interpolated neighbours and the lines
/// passing half a cell beside a ray.
int haloCells(const GridGeometry& g, double reach_m) {
    if (!std::isfinite(reach_m))
        return std::max(g.width(), g.height());
    double side = std::numeric_limits<double>::infinity();
    for (int r = 0; r < g.height(); r += std::max(1, g.height() / 4096)) {
        side = std::min({side, g.cellWidthM(r), g.cellHeightM(r)});
    }
    side = std::min({side, g.cellWidthM(g.height() - 1), g.cellHeightM(g.height() - 1)});
    const double cells = std::ceil(reach_m / side) + 3;
    return static_cast<int>(std::min<double>(cells, 1e9));
}

/// The window read for the core [c0, c1) × [r0, r1): the halo around it, its top-left corner
/// moved out to a block boundary (so the engine's tiles are the whole grid's blocks).
void windowOf(const HorizonTilePlan& p, int c0, int r0, int c1, int r1, int& wc0, int& wr0,
              int& wc1, int& wr1) {
    wc0 = static_cast<int>(alignDown(std::max(0, c0 - p.halo)));
    wr0 = static_cast<int>(alignDown(std::max(0, r0 - p.halo)));
    wc1 = std::min(p.width, c1 + p.halo);
    wr1 = std::min(p.height, r1 + p.halo);
}

/// Passes an engine's progress on as part of the whole run's.
class TileProgress final : public Progress {
  public:
    TileProgress(Progress& outer, int tile, std::int64_t per_tile)
        : outer_(outer), base_(tile * per_tile), per_tile_(per_tile) {}
    void begin(const std::string&, std::int64_t total) override { total_ = total; }
    void advance(std::int64_t done) override {
        if (total_ > 0)
            outer_.advance(base_ + std::min(done, total_) * per_tile_ / total_);
    }
    bool cancelled() const override { return outer_.cancelled(); }

  private:
    Progress& outer_;
    std::int64_t base_, per_tile_, total_ = 0;
};

/// Hands the cells of one tile's core on to the run's sink, in cells of the whole grid.
class CoreSink final : public HorizonSink {
  public:
    CoreSink(TiledHorizonSink& out, int wc0, int wr0, int c0, int r0, int c1, int r1)
        : out_(out), wc0_(wc0), wr0_(wr0), c0_(c0), r0_(r0), c1_(c1), r1_(r1) {}
    void beginDirection(int index, double azimuth_deg) override {
        out_.beginDirection(index, azimuth_deg);
    }
    void endDirection(int index) override { out_.endDirection(index); }
    bool wantsRectangles() const override { return out_.wantsRectangles(); }
    void rectangle(int index, int col0, int row0, int width, int height, int stride,
                   const float* angle, const float* distance) override {
        const int x0 = std::max(col0 + wc0_, c0_), x1 = std::min(col0 + wc0_ + width, c1_);
        const int y0 = std::max(row0 + wr0_, r0_), y1 = std::min(row0 + wr0_ + height, r1_);
        if (x0 >= x1 || y0 >= y1)
            return;  // in the halo
        const std::size_t skip = static_cast<std::size_t>(y0 - row0 - wr0_) * stride +
                                 static_cast<std::size_t>(x0 - col0 - wc0_);
        out_.rectangle(index, x0, y0, x1 - x0, y1 - y0, stride, angle ? angle + skip : nullptr,
                       distance ? distance + skip : nullptr);
    }

  private:
    TiledHorizonSink& out_;
    int wc0_, wr0_, c0_, r0_, c1_, r1_;
};

}  // namespace

std::int64_t horizonRunBytes(int width, int height, int whole_side, const HorizonOptions& o,
                             int threads) {
    const std::int64_t cells = static_cast<std::int64_t>(width) * height;
    std::int64_t per_cell = 4;  // the elevations
    if (o.want_svf)
        per_cell += 4 + (o.directions > 255 ? 2 : 1);  // sums and the directions with data
    if (o.want_dip)
        per_cell += 4;
    const std::int64_t side = std::max(width, height);
    // The fast engine: output tiles along the current lines (128² angles and distances each),
    // each thread's line buffers and hulls, the direction's tables (whole grid).
    const std::int64_t blocks = (width + kBlock - 1) / kBlock + (height + kBlock - 1) / kBlock;
    const std::int64_t tiles = 3 * (blocks + 2) * 2 * kBlock * kBlock * 4;
    const std::int64_t lines = std::int64_t(std::max(threads, 1)) * 700 * (side + 1);
    const std::int64_t direction = 250 * std::int64_t(std::max<std::int64_t>(whole_side, side));
    return cells * per_cell + tiles + lines + direction;
}

HorizonTilePlan planHorizonTiles(const GridGeometry& whole, const HorizonOptions& options,
                                 int threads, std::int64_t budget_bytes,
                                 const std::string& dem_name, std::int64_t reserved, int max_core) {
    const std::int64_t budget = budget_bytes - reserved;  // for this run's own memory
    HorizonTilePlan p;
    p.width = whole.width();
    p.height = whole.height();
    p.budget_bytes = budget_bytes;
    const int side = std::max(p.width, p.height);
    const std::int64_t whole_bytes = horizonRunBytes(p.width, p.height, side, options, threads);
    const std::string size = std::to_string(p.width) + " × " + std::to_string(p.height);
    if (whole_bytes <= budget && max_core <= 0) {
        p.core = static_cast<int>((side + kBlock - 1) / kBlock * kBlock);
        p.halo = 0;
        p.peak_bytes = whole_bytes + reserved;
        return p;
    }
    if (!std::isfinite(options.reach_m)) {
        if (whole_bytes <= budget) {
            p.core = static_cast<int>((side + kBlock - 1) / kBlock * kBlock);
            p.peak_bytes = whole_bytes + reserved;
            return p;
        }
        throw UsageError("the horizon of every cell of " + dem_name + " (" + size +
                         " cells) needs " + formatMemorySize(whole_bytes + reserved) +
                         " with an unlimited reach, over the memory budget of " +
                         formatMemorySize(budget_bytes) +
                         ": give --reach (then the DEM is worked tile by tile) or raise --memory");
    }
    p.halo = haloCells(whole, options.reach_m);
    auto tileBytes = [&](std::int64_t core) {
        // The largest window: the core, a halo each side and the alignment of its corner.
        const std::int64_t w = std::min<std::int64_t>(p.width, core + 2 * p.halo + kBlock - 1);
        const std::int64_t h = std::min<std::int64_t>(p.height, core + 2 * p.halo + kBlock - 1);
        return horizonRunBytes(static_cast<int>(w), static_cast<int>(h), side, options, threads);
    };
    const std::int64_t smallest = tileBytes(kBlock);
    if (smallest > budget) {
        throw UsageError("--memory: " + formatMemorySize(budget_bytes) +
                         " is below what one tile of " + dem_name + " needs with a reach of " +
                         std::to_string(p.halo) + " cells: give at least " +
                         formatMemorySize(smallest + reserved) + " (or a shorter --reach)");
    }
    std::int64_t lo = kBlock, hi = alignDown(side) + kBlock;  // lo fits; find the largest
    while (hi - lo > kBlock) {
        const std::int64_t mid = alignDown((lo + hi) / 2);
        if (mid > lo && tileBytes(mid) <= budget)
            lo = mid;
        else
            hi = mid > lo ? mid : lo + kBlock;
    }
    if (max_core > 0)
        lo = std::min<std::int64_t>(lo, std::max<std::int64_t>(kBlock, alignDown(max_core)));
    p.core = static_cast<int>(lo);
    p.cols = (p.width + p.core - 1) / p.core;
    p.rows = (p.height + p.core - 1) / p.core;
    p.peak_bytes = tileBytes(p.core) + reserved;
    return p;
}

void runHorizonTiles(const GridGeometry& whole, const EarthModel& earth,
                     const HorizonOptions& options, const HorizonTilePlan& plan,
                     const HorizonWindowReader& read, TiledHorizonSink& sink, Progress& progress) {
    constexpr std::int64_t kPerTile = 1000000;
    const int tiles = plan.tiles();
    progress.begin("horizon", tiles * kPerTile);
    for (int t = 0; t < tiles; ++t) {
        const int c0 = (t % plan.cols) * plan.core, r0 = (t / plan.cols) * plan.core;
        const int c1 = std::min(plan.width, c0 + plan.core);
        const int r1 = std::min(plan.height, r0 + plan.core);
        int wc0 = 0, wr0 = 0, wc1 = plan.width, wr1 = plan.height;
        if (plan.tiled())
            windowOf(plan, c0, r0, c1, r1, wc0, wr0, wc1, wr1);
        const Grid<float> dem = read(wc0, wr0, wc1 - wc0, wr1 - wr0);
        throwIfCancelled(progress);
        const GridGeometry geometry = whole.window(wc0, wr0, wc1 - wc0, wr1 - wr0);
        HorizonSummary summary;
        {
            const HorizonScan scan(dem, geometry, earth, options);
            CoreSink core(sink, wc0, wr0, c0, r0, c1, r1);
            TileProgress tp(progress, t, kPerTile);
            summary = scan.run(core, tp);
        }
        const std::size_t skip = static_cast<std::size_t>(r0 - wr0) * (wc1 - wc0) + (c0 - wc0);
        sink.summary(c0, r0, c1 - c0, r1 - r0, wc1 - wc0,
                     summary.svf.empty() ? nullptr : summary.svf.data() + skip,
                     summary.dip.empty() ? nullptr : summary.dip.data() + skip);
        progress.advance((t + 1) * kPerTile);
    }
    progress.end();
}

}  // namespace lookfar
