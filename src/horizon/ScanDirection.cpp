// Scan directions of the fast horizon engine (see ScanDirection.hpp).
#include "ScanDirection.hpp"

namespace lookfar::horizon_detail::fast {

void setUp(const EngineInput& in, int index, Direction& d) {
    const int w = in.dem.width(), h = in.dem.height();
    const int w_all = in.geometry.wholeWidth(), h_all = in.geometry.wholeHeight();
    const int col_off = in.geometry.colOffset(), row_off = in.geometry.rowOffset();
    // Rows given to the whole grid's metric are rows of the whole grid.
    const GridMetric& metric = in.whole_metric;
    d.azimuth_deg = horizonAzimuthDeg(index, in.options.directions);
    sinCosDeg(d.azimuth_deg, d.sin_a, d.cos_a);
    auto slopeAt = [&](double row, bool& major_cols, int& sign) {
        const double uc = d.sin_a / metric.eastPerCol(row), ur = d.cos_a / metric.northPerRow(row);
        major_cols = std::fabs(uc) >= std::fabs(ur);
        double m = major_cols ? ur / uc : uc / ur;
        sign = (major_cols ? uc : ur) > 0 ? 1 : -1;
        // Exact diagonals and axes (sin 45° / cos 45° is not exactly 1 in floating point).
        if (std::fabs(std::fabs(m) - 1.0) < 1e-12)
            m = m > 0 ? 1.0 : -1.0;
        if (std::fabs(m) < 1e-12)
            m = 0.0;
        return m;
    };
    const double r_ref = 0.5 * (h_all - 1);  // the whole grid's middle row
    d.m = slopeAt(r_ref, d.major_cols, d.sign);
    d.A = d.major_cols ? w : h;
    d.B = d.major_cols ? h : w;
    d.c = in.curvature.c_north * d.cos_a * d.cos_a + in.curvature.c_east * d.sin_a * d.sin_a;
    d.A_all = d.major_cols ? w_all : h_all;
    d.B_all = d.major_cols ? h_all : w_all;
    d.a_off = d.major_cols ? col_off : row_off;
    d.p_off = d.major_cols ? row_off : col_off;
    d.xi_all.resize(d.A_all);
    d.gx_all.resize(d.A_all);
    d.xi.resize(d.A);
    d.gx.resize(d.A);
    for (int a = 0; a < d.A_all; ++a) {
        double x = d.m * a;
        double ce = std::ceil(x);
        d.xi_all[a] = static_cast<int>(ce);
        d.gx_all[a] = ce - x;
        const int a_w = a - d.a_off;  // in the grid
        if (a_w >= 0 && a_w < d.A) {
            d.xi[a_w] = static_cast<int>(ce);
            d.gx[a_w] = ce - x;
        }
    }
    d.geographic = metric.geographic();
    auto stepAtRow = [&](double row) {
        double e = metric.eastPerCol(row), n = metric.northPerRow(row);
        return d.major_cols ? std::hypot(e, d.m * n) : std::hypot(d.m * e, n);
    };
    if (d.geographic) {
        d.step_table.resize(h_all);
        for (int r = 0; r < h_all; ++r)
            d.step_table[r] = stepAtRow(r);
        d.m_row.resize(h);
        for (int r = 0; r < h; ++r) {
            bool mc;
            int sg;
            double m = slopeAt(r + row_off, mc, sg);
            // A row whose aspect would flip the major axis keeps the lines' axis; |m| ≤ ~1.
            d.m_row[r] = mc == d.major_cols ? m : d.m;
        }
    } else {
        d.step_m = stepAtRow(r_ref);
        d.fold.resize(d.A_all + 1);
        for (int k = 0; k <= d.A_all; ++k) {
            const double s = -k * d.step_m;
            d.fold[k] = d.c * s * s;
        }
        const double step = d.step_m, cc = d.c;
        buildCrossings(
            d, d.m, d.A, w,
            [step, cc](double, double, double t, double& dist, double& drop) {
                dist = t * step;
                drop = cc * dist * dist;
            },
            d.crossings, d.major_pos);
        const int k1 = std::min(in.options.exact_steps + 1, d.A + 1);
        int n_near = d.major_pos[k1];
        while (n_near > 0 && d.crossings[n_near - 1].dist > in.options.reach_m)
            --n_near;
        d.near.assign(d.crossings.data(), n_near, d.major_cols, in.options.observer_height_m);
        // The crossings within ± r major steps of each tangent point t (majors t − r … t + r,
        // the minors between majors t − r − 1 and t + r + 1), beyond the near field.
        const int* mp = d.major_pos.data();
        const int r = in.options.refine_steps;
        const int near_end = mp[k1];
        d.windows.resize(d.A + 1);
        for (int t = 0; t <= d.A; ++t) {
            Direction::Window& wv = d.windows[t];
            wv.lo = std::max(near_end, mp[std::max(t - r - 1, 0)] + 1);
            wv.hi = mp[std::min(t + r + 1, d.A + 1)] - 1;
            wv.da_lo = wv.dp_lo = std::numeric_limits<int>::max();
            wv.da_hi = wv.dp_hi = std::numeric_limits<int>::min();
            for (int i = wv.lo; i <= wv.hi; ++i) {
                const Crossing& x = d.crossings[i];
                wv.da_lo = std::min({wv.da_lo, x.da1, x.da2});
                wv.da_hi = std::max({wv.da_hi, x.da1, x.da2});
                wv.dp_lo = std::min({wv.dp_lo, x.dp1, x.dp2});
                wv.dp_hi = std::max({wv.dp_hi, x.dp1, x.dp2});
            }
            wv.dist_hi = wv.hi >= wv.lo ? d.crossings[wv.hi].dist : 0;
        }
    }
    const int x_first = d.xi.front(), x_last = d.xi.back();
    d.jmin = -static_cast<long>(std::max(x_first, x_last));
    d.jmax = d.B - 1 - static_cast<long>(std::min(x_first, x_last));
}

}  // namespace lookfar::horizon_detail::fast

namespace lookfar::horizon_detail::fast {

bool lineRange(const Direction& d, long j, bool whole, int& a_lo, int& a_hi) {
    const int A = whole ? d.A_all : d.A, B = whole ? d.B_all : d.B;
    const int* xi = whole ? d.xi_all.data() : d.xi.data();
    const double* gx = whole ? d.gx_all.data() : d.gx.data();
    auto geZero = [&](int a) {
        long q = j + xi[a];
        return q >= 1 || (q == 0 && gx[a] == 0.0);
    };
    auto leMax = [&](int a) { return j + xi[a] <= B - 1; };
    auto flip = [&](auto pred, bool from) {  // first index where pred is no longer `from`
        int lo = 0, hi = A;
        while (lo < hi) {
            int mid = (lo + hi) >> 1;
            if (pred(mid) == from)
                lo = mid + 1;
            else
                hi = mid;
        }
        return lo;
    };
    if (d.m == 0) {
        bool ok = geZero(0) && leMax(0);
        a_lo = 0, a_hi = ok ? A - 1 : -1;
    } else if (d.m > 0) {
        a_lo = flip(geZero, false);
        a_hi = flip(leMax, true) - 1;
    } else {
        a_lo = flip(leMax, false);
        a_hi = flip(geZero, true) - 1;
    }
    return a_lo <= a_hi;
}

}  // namespace lookfar::horizon_detail::fast
