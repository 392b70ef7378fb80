// Far refinement of the fast horizon engine (see FarRefiner.hpp).
#include "FarRefiner.hpp"

namespace lookfar::horizon_detail::fast {

// Geographic grids: the largest tangent among the samples of the ray of cell (col, row)
// with the eye at ze, `steps` major steps from the tangent point (t = −∞: none has data).
void FarRefiner::refineGeographic(int col, int row, int steps, double ze, double& t,
                                  double& dist) const {
    Eye e;
    e.a = d_.major_cols ? col : row, e.p = d_.major_cols ? row : col;
    e.col = col, e.row = row;
    e.ze = ze;
    e.m = d_.m_row[row];
    e.t = t, e.dist = dist;
    const int w0 = std::max(k_exact_ + 1, steps - refine_);
    const int w1 = steps + refine_;
    exactGeographic(e, w0, w1, std::max(w0 - 1, k_exact_ + 1), w1 + 1.0);
    t = e.t, dist = e.dist;
}

// Geographic grids: major crossings t ∈ [t0, t1] and minor crossings at t in [s0, s1) of the
// cell's own ray. (Everything the samples need is held in locals: this runs for every cell
// and direction.)
void FarRefiner::exactGeographic(Eye& e, int t0, int t1, double s0, double s1) const {
    const int A = d_.A, B = d_.B, sign = d_.sign;
    const bool mc = d_.major_cols;
    const float* dem = dem_;
    const std::size_t w = static_cast<std::size_t>(w_);
    const GridMetric& metric = in_.whole_metric;  // cells of the whole grid
    const Curvature cv = in_.curvature;
    const double reach = reach_, ze = e.ze;
    const double col0 = e.col + in_.geometry.colOffset(), row0 = e.row + in_.geometry.rowOffset();
    double bt = e.t, bd = e.dist;
    // The sample (da, dp) major and minor cells from the cell, terrain z: false once beyond
    // reach.
    auto take = [&](double da, double dp, double z) {
        const double dc = mc ? da : dp, dr = mc ? dp : da;
        double east, north;
        metric.offsets(col0, row0, col0 + dc, row0 + dr, east, north);
        const double dist = groundDistance(east, north);
        if (dist > reach)
            return false;
        const double rise = z - cv.drop(east, north) - ze;  // NaN (no data) never wins
        if (rise > bt * dist) {  // t > best, division only on improvement
            bt = rise / dist;
            bd = dist;
        }
        return true;
    };
    auto at = [&](int a, int p) {
        return mc ? dem[static_cast<std::size_t>(p) * w + a]
                  : dem[static_cast<std::size_t>(a) * w + p];
    };
    for (int t = t0; t <= t1; ++t) {
        const int a1 = e.a + sign * t;
        if (a1 < 0 || a1 >= A)
            break;
        int dp;
        double f;
        snapFraction(sign * e.m * t, dp, f);
        const int p1 = e.p + dp;
        if (p1 < 0 || p1 >= B || (f > 0 && p1 + 1 >= B))
            break;
        const double z = f > 0 ? (1 - f) * at(a1, p1) + f * at(a1, p1 + 1) : at(a1, p1);
        if (!take(sign * t, dp + f, z))
            break;
    }
    if (e.m != 0.0) {
        const double am = std::fabs(e.m);
        const int sigma = sign * e.m > 0 ? 1 : -1;
        for (int u = std::max(1, ceilInt(s0 * am - 1e-12));; ++u) {
            const double tu = u / am;
            if (!(tu < s1))
                break;
            if (nearWhole(tu) || tu < s0)
                continue;  // on a major crossing, or before the window
            const int p1 = e.p + sigma * u;
            if (p1 < 0 || p1 >= B)
                break;
            int da;
            double f;
            snapFraction(sign * tu, da, f);
            const int a1 = e.a + da;
            if (a1 < 0 || a1 >= A || (f > 0 && a1 + 1 >= A))
                break;
            const double z = f > 0 ? (1 - f) * at(a1, p1) + f * at(a1 + 1, p1) : at(a1, p1);
            if (!take(da + f, sigma * u, z))
                break;
        }
    }
    e.t = bt, e.dist = bd;
}

// Projected grids: the crossings of the cell's ray in the window of tangent point `cand`.
__attribute__((always_inline)) inline void FarRefiner::refineProjected(int col, int row, int cand,
                                                                       double ze, double& best_t,
                                                                       double& best_d) const {
    const Direction::Window& wv = d_.windows[std::min(cand, d_.A)];
    const int lo = wv.lo, hi = wv.hi;
    if (lo > hi)
        return;
    const int a = d_.major_cols ? col : row, p = d_.major_cols ? row : col;
    const float* z = dem_ + static_cast<std::ptrdiff_t>(row) * w_ + col;
    const Crossing* x = d_.crossings.data();
    double bt = best_t, bd = best_d;
    if (wv.dist_hi <= reach_ && a + wv.da_lo >= 0 && a + wv.da_hi < d_.A && p + wv.dp_lo >= 0 &&
        p + wv.dp_hi < d_.B && hi - lo < kMaxWindow) {
        // Two passes without a data-dependent branch in the first: the largest tangent,
        // then the nearest crossing that has it.
        double tt[kMaxWindow];
        double m = -kInf;
        for (int i = lo; i <= hi; ++i) {
            const Crossing& c = x[i];
            const double zs = (1 - c.w) * z[c.off1] + c.w * z[c.off2];
            const double t = (zs - c.drop - ze) * c.inv_dist;
            tt[i - lo] = t;
            m = t > m ? t : m;  // NaN (no data) never wins
        }
        if (m > bt) {
            int i = lo;
            while (tt[i - lo] != m)
                ++i;
            bt = m, bd = x[i].dist;
        }
    } else {
        auto inside = [&](const Crossing& c) {
            const int a1 = a + c.da1, p1 = p + c.dp1, a2 = a + c.da2, p2 = p + c.dp2;
            return a1 >= 0 && a1 < d_.A && p1 >= 0 && p1 < d_.B && a2 >= 0 && a2 < d_.A &&
                   p2 >= 0 && p2 < d_.B;
        };
        for (int i = lo; i <= hi; ++i) {
            const Crossing& c = x[i];
            if (c.dist > reach_ || !inside(c))
                break;  // beyond reach, or the ray has left the grid
            const double zs = (1 - c.w) * z[c.off1] + c.w * z[c.off2];
            const double t = (zs - c.drop - ze) * c.inv_dist;
            if (t > bt)
                bt = t, bd = c.dist;
        }
    }
    best_t = bt, best_d = bd;
}

template <bool kGeo>
void FarRefiner::recordJobsT(const FarJob* jobs, int n_jobs) const {
    const double eye_h = in_.options.observer_height_m;
    for (int i = 0; i < n_jobs; ++i) {
        const FarJob& job = jobs[i];
        const double ze = static_cast<double>(job.ground) + eye_h;
        double t = -kInf, dist = 0;
        if (kGeo)
            refineGeographic(job.col, job.row, job.cand, ze, t, dist);
        else
            refineProjected(job.col, job.row, job.cand, ze, t, dist);
        const float tf = static_cast<float>(t);
        if (tf > job.best[0]) {  // ties keep the nearer sample
            job.best[0] = tf;
            job.best[kTileCells] = static_cast<float>(dist);
        }
    }
}

void FarRefiner::recordJobs(const FarJob* jobs, int n_jobs) const {
    if (d_.geographic)
        recordJobsT<true>(jobs, n_jobs);
    else
        recordJobsT<false>(jobs, n_jobs);
}

}  // namespace lookfar::horizon_detail::fast
