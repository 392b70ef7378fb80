#pragma once
// Scan directions of the fast horizon engine: the axes, the scan lines and their samples' offsets
// for one azimuth, and the exact crossings of a cell's ray (the near field and the refinement
// windows around a tangent point).
#include "FastHorizonCommon.hpp"
#include "HorizonInternal.hpp"

namespace lookfar::horizon_detail::fast {

/// One scan direction: its axes, its lines and, on projected grids, the crossings of every cell's
/// ray.
struct Direction {
    double azimuth_deg = 0, sin_a = 0, cos_a = 1;
    bool major_cols = true;
    int A = 0, B = 0;  // extents along the major and minor axes
    // When the grid is a window of a whole grid: its offsets along the major and minor axes and
    // the whole grid's extents. Line j of the window is line j + p_off of the whole grid; its
    // folds and coordinates s count from that whole line's far end (so a window gives the same
    // bits as the whole grid).
    int a_off = 0, p_off = 0, A_all = 0, B_all = 0;
    std::vector<int> xi_all;     // x_a of the whole grid, by major index of the whole grid
    std::vector<double> gx_all;  // g_a likewise
    int sign = 1;                // +1: the horizon lies towards increasing major index
    double m = 0;                // minor per major step of the lines
    double c = 0;                // curvature coefficient along α, 1/m
    std::vector<int> xi;         // x_a by major index of the grid (= xi_all[a + a_off])
    std::vector<double> gx;      // g_a likewise
    bool geographic = false;
    double step_m = 0;               // projected: metres per major step
    std::vector<double> fold;        // projected: c s² at s = −k · step, by k (0 … A_all)
    std::vector<double> step_table;  // geographic: metres per major step of the lines, by row of
                                     // the whole grid
    std::vector<double> m_row;       // geographic: minor per major step of a cell's own ray, by row
    long jmin = 0, jmax = -1;
    // Projected grids: every crossing of a cell's ray, sorted by distance; major_pos[t] is where
    // major crossing t sits in the list. The near field is crossings[0 … major_pos[K + 1]).
    std::vector<Crossing> crossings;
    std::vector<int> major_pos;
    NearField near;
    // Projected grids: the refinement window of a tangent point t major steps away, by t.
    struct Window {
        int lo = 0, hi = -1;                             // crossings[lo … hi]
        int da_lo = 0, da_hi = 0, dp_lo = 0, dp_hi = 0;  // extents of their cells' offsets
        double dist_hi = 0;                              // distance of the last one
    };
    std::vector<Window> windows;
};

/// The crossings of a ray with `m` minor cells per major step (the direction's axes and sign):
/// majors 1 … steps + 1 and the minors before each, sorted by distance. `metres(da, dp, t, dist,
/// drop)` gives the ground distance and drop of the point (da, dp) major/minor cells away, t
/// major steps along the ray.
template <typename Metres>
void buildCrossings(const Direction& d, double m, int steps, int w, Metres metres,
                    std::vector<Crossing>& out, std::vector<int>& major_pos) {
    out.clear();
    major_pos.assign(steps + 2, -1);
    const std::ptrdiff_t stride_a = d.major_cols ? 1 : w, stride_p = d.major_cols ? w : 1;
    const double am = std::fabs(m);
    const int sigma = d.sign * m > 0 ? 1 : -1;
    auto push = [&](int da1, int dp1, int da2, int dp2, double wt, double pa, double pp, double t) {
        Crossing x;
        x.da1 = da1, x.dp1 = dp1;
        x.da2 = wt > 0 ? da2 : da1, x.dp2 = wt > 0 ? dp2 : dp1;
        x.off1 = da1 * stride_a + dp1 * stride_p;
        x.off2 = x.da2 * stride_a + x.dp2 * stride_p;
        x.w = wt;
        metres(pa, pp, t, x.dist, x.drop);
        x.inv_dist = 1.0 / x.dist;
        out.push_back(x);
    };
    int u = 1;
    for (int t = 1; t <= steps + 1; ++t) {
        // The minors u with u/|m| < t (those on a major crossing are that crossing).
        for (; am > 0 && u < am * t + 1e-9; ++u) {
            const double tu = u / am;
            if (nearWhole(tu))
                continue;
            if (!(tu < t))
                break;
            int da;
            double f;
            snapFraction(d.sign * tu, da, f);
            push(da, sigma * u, da + 1, sigma * u, f, d.sign * tu, sigma * u, tu);
        }
        major_pos[t] = static_cast<int>(out.size());
        int dp;
        double f;
        snapFraction(d.sign * m * t, dp, f);
        push(d.sign * t, dp, d.sign * t, dp + 1, f, d.sign * t, d.sign * m * t, t);
    }
}

/// Fills `d` for direction `index`, reusing its vectors (no allocation after the first
/// directions, so memory does not creep up with N).
void setUp(const EngineInput& in, int index, Direction& d);

/// Major indices where line j (of the grid, or of the whole grid when `whole`) has a sample:
/// minor position j + x_a − g_a inside [0, B − 1]. False when it has none.
bool lineRange(const Direction& d, long j, bool whole, int& a_lo, int& a_hi);

}  // namespace lookfar::horizon_detail::fast
