#pragma once
// Far refinement of the fast horizon engine: the exact samples of a cell's own ray within
// ± refine_steps major steps of the tangent point that its scan line found (beyond the near
// field), into the cell's best tangent so far. Run right after the line sweep, while the DEM
// around the lines is still in the processor's caches.
#include "FastHorizonCommon.hpp"
#include "ScanDirection.hpp"

namespace lookfar::horizon_detail::fast {

/// A cell whose exact samples around its line's tangent point are to be taken.
struct FarJob {
    int col, row;
    int cand;      // the tangent point, major steps from the eye
    float ground;  // the cell's ground, m
    float* best;   // its best tangent so far, in its tile
};

/// The exact samples of a cell's ray around the tangent point of its line (± r major steps,
/// beyond the near field).
class FarRefiner {
  public:
    FarRefiner(const EngineInput& in, const Direction& d)
        : in_(in),
          d_(d),
          dem_(in.dem.data()),
          w_(in.dem.width()),
          reach_(in.options.reach_m),
          k_exact_(in.options.exact_steps),
          refine_(in.options.refine_steps) {}

    /// The far field of the cells of `jobs` (those a line answers for: its upper cell q and lower
    /// cell q − 1 at each sample), into their tiles: the exact samples of each cell's ray around
    /// its tangent point. Ties keep the nearer sample.
    void recordJobs(const FarJob* jobs, int n_jobs) const;

  private:
    struct Eye {
        int a, p;  // major and minor index of the cell
        int col, row;
        double ze;  // eye height, m
        double m;   // minor per major step of the cell's own ray
        double t, dist;
    };

    // Geographic grids: the largest tangent among the samples of the ray of cell (col, row)
    // with the eye at ze, `steps` major steps from the tangent point (t = −∞: none has data).
    void refineGeographic(int col, int row, int steps, double ze, double& t, double& dist) const;
    // Geographic grids: major crossings t ∈ [t0, t1] and minor crossings at t in [s0, s1) of the
    // cell's own ray.
    void exactGeographic(Eye& e, int t0, int t1, double s0, double s1) const;
    // Projected grids: the crossings of the cell's ray in the window of tangent point `cand`.
    inline void refineProjected(int col, int row, int cand, double ze, double& best_t,
                                double& best_d) const;
    template <bool kGeo>
    void recordJobsT(const FarJob* jobs, int n_jobs) const;

    // Crossings in a window of ± refine_steps (≤ 8): at most 2r + 1 majors and 2r + 2 minors.
    static constexpr int kMaxWindow = 4 * 8 + 4;

    const EngineInput& in_;
    const Direction& d_;
    const float* dem_;
    int w_;
    double reach_;
    int k_exact_;
    int refine_;
};

}  // namespace lookfar::horizon_detail::fast
