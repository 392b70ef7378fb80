#pragma once
// The line sweep of the fast horizon engine: groups of parallel scan lines, their samples
// gathered from the DEM and folded, each swept from its far end with a sliding upper hull to
// find the tangent point of every cell the line answers for; cells whose near field does not
// already beat the line's horizon by kFarMargin go to the far refinement.
#include "FarRefiner.hpp"
#include "FastHorizonCommon.hpp"
#include "HorizonTiles.hpp"
#include "ScanDirection.hpp"
#include "SlidingHull.hpp"

namespace lookfar::horizon_detail::fast {

/// One line of a group: its samples from the far end (k = 0) to the near end.
struct LineBuf {
    long j = 0;
    int a_lo = 0, a_hi = -1, n = 0;
    // Samples of the whole grid's line before this one's far end (0 unless the grid is a window)
    // and the whole line's far end (major index of the whole grid): folds and coordinates count
    // from there.
    int kb = 0, a_far_all = 0;
    double* Z = nullptr;     // folded heights (NaN = no data); raw heights until folded
    double* S = nullptr;     // geographic: coordinate along the line, metres
    float* g_up = nullptr;   // ground of the cell on the line's upper side (minor q) if the line
                             // answers for it, else NaN
    float* g_dn = nullptr;   // … of the cell on its lower side (q − 1)
    FarJob* jobs = nullptr;  // the cells whose far samples are to be taken
    int n_jobs = 0;
};

/// A thread's scratch buffers for the lines.
struct Scratch {
    std::vector<double> z, s;
    std::vector<float> gu, gd;
    std::vector<FarJob> jobs;
    std::vector<Vertex> back, front, grave;
    std::vector<int> record;
    LineBuf lines[kGroupLines];
    void reserve(int len) {
        const std::size_t n = static_cast<std::size_t>(len) * kGroupLines;
        if (z.size() < n) {
            z.resize(n), s.resize(n), gu.resize(n), gd.resize(n), jobs.resize(2 * n);
            back.resize(len + 1), front.resize(len + 1), grave.resize(len + 1);
            record.resize(len + 1);
        }
        for (int i = 0; i < kGroupLines; ++i) {
            const std::size_t off = static_cast<std::size_t>(i) * len;
            lines[i].Z = z.data() + off;
            lines[i].S = s.data() + off;
            lines[i].g_up = gu.data() + off;
            lines[i].g_dn = gd.data() + off;
            lines[i].jobs = jobs.data() + 2 * off;
        }
    }
};

/// Sweeps groups of lines and records each cell's tangent point in the tiles.
class LineWorker {
  public:
    LineWorker(const EngineInput& in, const Direction& d, Tiles& tiles)
        : d_(d),
          tiles_(tiles),
          refiner_(in, d),
          dem_(in.dem.data()),
          w_(in.dem.width()),
          eye_h_(in.options.observer_height_m),
          reach_(in.options.reach_m),
          limited_(std::isfinite(in.options.reach_m)),
          k_exact_(in.options.exact_steps),
          window_(d.A != d.A_all || d.B != d.B_all) {}

    /// The lines j0 … j0 + kGroupLines − 1.
    void run(long j0, long j_last, Scratch& sc) const;

  private:
    // Samples of every line of the group, major index by major index (neighbouring lines read
    // neighbouring cells, so the DEM is read in cache-friendly runs whatever the direction), and
    // the grounds of the cells each line answers for: the nearer line of the two around a cell,
    // or the only one of them inside the grid.
    void gather(Scratch& sc, int u_lo, int u_hi) const;

    // Coordinates of the hull: index space on projected grids (S = −k·step, the step cancels in
    // every comparison), metres on geographic ones.
    void sweep(LineBuf& L, Scratch& sc) const;

    template <bool kGeo>
    void sweepT(LineBuf& L, Scratch& sc) const;

    // The exact samples around each cell's tangent point, into the tiles.
    void record(const Scratch& sc) const;

    const Direction& d_;
    Tiles& tiles_;
    FarRefiner refiner_;
    const float* dem_;
    int w_;
    double eye_h_;
    double reach_;
    bool limited_;
    int k_exact_;
    bool window_;  // the grid is a window of a whole grid
};

}  // namespace lookfar::horizon_detail::fast
