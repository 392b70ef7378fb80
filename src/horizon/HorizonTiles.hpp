#pragma once
// Output tiles of the fast horizon engine: the 128² tiles (the GeoTIFF block) of angle and
// distance that wait for their last scan line, and the work on a tile's cells: their near fields
// (before any line records into the tile) and their angles and distances once every line that
// answers for the tile is done.
#include <memory>

#include "FastHorizonCommon.hpp"
#include "HorizonKernels.hpp"
#include "ScanDirection.hpp"

namespace lookfar::horizon_detail::fast {

/// Output tiles (angle and distance per cell) waiting for their last line. Until a tile is
/// finished its planes hold the tangent and distance of the best exact sample of each cell so far:
/// first its near field's (−∞: none; NaN: the cell is on no data), then the better of that and
/// the samples around its line's tangent point.
struct Tiles {
    int ntx = 0, nty = 0;
    std::vector<float*> ptr;  // live tile buffers by tile id (nullptr when not live)
    std::vector<std::unique_ptr<float[]>> owned;
    std::vector<float*> pool;

    float* acquire() {
        float* b;
        if (!pool.empty()) {
            b = pool.back();
            pool.pop_back();
        } else {
            owned.emplace_back(new float[2 * kTileCells]);
            b = owned.back().get();
        }
        return b;
    }
    void release(int id) {
        pool.push_back(ptr[id]);
        ptr[id] = nullptr;
    }
    /// The tile of cell (col, row), and the cell's place in it: its best tangent so far is at
    /// ptr[id] + offset, its distance kTileCells further on.
    int id(int col, int row) const { return (row >> kTileShift) * ntx + (col >> kTileShift); }
    static int offset(int col, int row) {
        return ((row & (kTile - 1)) << kTileShift) | (col & (kTile - 1));
    }
};

/// A thread's scratch buffers for the tiles.
struct TileScratch {
    double t[kTile];
    std::vector<Crossing> crossings;  // geographic: the near field of one row
    std::vector<int> major_pos;
    NearField near;
};

/// Takes the exact samples of a tile's cells and finishes their angles and distances.
class TileWorker {
  public:
    TileWorker(const EngineInput& in, const Direction& d, SummaryAccumulator& acc,
               const Kernels& kernels)
        : in_(in),
          d_(d),
          acc_(acc),
          kernels_(kernels),
          dem_(in.dem.data()),
          w_(in.dem.width()),
          h_(in.dem.height()),
          eye_h_(in.options.observer_height_m),
          reach_(in.options.reach_m),
          k_exact_(in.options.exact_steps),
          refine_(in.options.refine_steps) {}

    /// The near field of every cell of the tile, into its planes (before any line records).
    void near(float* buf, int c0, int r0, int tw, int th, TileScratch& ts) const;
    /// The angles and distances of the tile's cells from their best samples, in place.
    void finish(float* buf, int c0, int r0, int tw, int th, TileScratch& ts) const;

  private:
    // The near field of row r on a geographic grid: the cell aspect and the metric of its row.
    const NearField& geographicNear(int r, TileScratch& ts) const;

    // The near field of one cell whose samples may leave the grid: in order, up to the edge.
    void nearChecked(int c, int r, const NearField& f, float& best_t, float& best_d) const;

    void nearRow(float* best_t, float* best_d, int c0, int r, int tw, TileScratch& ts) const;

    void finishRow(float* angle, float* distance, int c0, int r, int tw, TileScratch& ts) const;

    const EngineInput& in_;
    const Direction& d_;
    SummaryAccumulator& acc_;
    const Kernels& kernels_;
    const float* dem_;
    int w_, h_;
    double eye_h_;
    double reach_;
    int k_exact_;
    int refine_;
};

}  // namespace lookfar::horizon_detail::fast
