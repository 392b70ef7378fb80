// The line sweep of the fast horizon engine (see LineSweep.hpp).
#include "LineSweep.hpp"

namespace lookfar::horizon_detail::fast {

void LineWorker::run(long j0, long j_last, Scratch& sc) const {
    int u_lo = d_.A, u_hi = -1;  // union of the lines' ranges
    for (int i = 0; i < kGroupLines; ++i) {
        LineBuf& L = sc.lines[i];
        L.j = j0 + i;
        if (L.j > j_last || !lineRange(d_, L.j, false, L.a_lo, L.a_hi)) {
            // No sample: nothing of an earlier group's line may be left for gather to read.
            L.a_lo = 0, L.a_hi = -1, L.n = 0, L.kb = 0, L.a_far_all = 0;
            continue;
        }
        L.n = L.a_hi - L.a_lo + 1;
        L.kb = 0;
        L.a_far_all = d_.sign > 0 ? L.a_hi : L.a_lo;
        if (window_) {
            // The whole grid's line: where it starts, beyond this grid's edge.
            int lo_all, hi_all;
            lineRange(d_, L.j + d_.p_off, true, lo_all, hi_all);
            L.a_far_all = d_.sign > 0 ? hi_all : lo_all;
            L.kb = d_.sign > 0 ? hi_all - (L.a_hi + d_.a_off) : (L.a_lo + d_.a_off) - lo_all;
        }
        u_lo = std::min(u_lo, L.a_lo);
        u_hi = std::max(u_hi, L.a_hi);
    }
    if (u_lo > u_hi)
        return;
    gather(sc, u_lo, u_hi);
    for (int i = 0; i < kGroupLines; ++i)
        sweep(sc.lines[i], sc);
    record(sc);
}

// Samples of every line of the group, major index by major index (neighbouring lines read
// neighbouring cells, so the DEM is read in cache-friendly runs whatever the direction), and
// the grounds of the cells each line answers for: the nearer line of the two around a cell,
// or the only one of them inside the grid.
void LineWorker::gather(Scratch& sc, int u_lo, int u_hi) const {
    const int B = d_.B, sign = d_.sign;
    const float* dem = dem_;
    // Strides of the major and minor axes in the DEM's cell array.
    const std::ptrdiff_t sa = d_.major_cols ? 1 : w_, sp = d_.major_cols ? w_ : 1;
    // The lines' ranges and arrays in locals (the stores below cannot then alias them):
    // sample k of line i at major index a is k = off[i] + (sign > 0 ? −a : a).
    int lo[kGroupLines], hi[kGroupLines];
    std::ptrdiff_t off[kGroupLines];
    double* zs[kGroupLines];
    float *gus[kGroupLines], *gds[kGroupLines];
    for (int i = 0; i < kGroupLines; ++i) {
        const LineBuf& L = sc.lines[i];
        lo[i] = L.a_lo, hi[i] = L.a_hi;
        off[i] = sign > 0 ? L.a_hi : -static_cast<std::ptrdiff_t>(L.a_lo);
        zs[i] = L.Z, gus[i] = L.g_up, gds[i] = L.g_dn;
    }
    const long j0 = sc.lines[0].j;
    for (int a = u_lo; a <= u_hi; ++a) {
        const double g = d_.gx[a];
        const long q0 = j0 + d_.xi[a];  // minor index of line 0's upper cell
        const std::ptrdiff_t cell0 = a * sa + q0 * sp;
        const std::ptrdiff_t idx = sign > 0 ? -a : a;
        if (g > 0) {
            // The nearer line answers for a cell: the upper cell when g ≤ ½; at the grid's
            // edges a line also answers for the cell it alone reaches.
            const bool near_up = g <= 0.5;
            for (int i = 0; i < kGroupLines; ++i) {
                if (a < lo[i] || a > hi[i])
                    continue;
                const std::ptrdiff_t c = cell0 + i * sp, k = off[i] + idx;
                const long q = q0 + i;
                const float up = dem[c], dn = dem[c - sp];
                zs[i][k] = g * dn + (1 - g) * up;
                gus[i][k] = near_up || q == B - 1 ? up : kNaNf;
                gds[i][k] = !near_up || q == 1 ? dn : kNaNf;
            }
        } else {
            for (int i = 0; i < kGroupLines; ++i) {
                if (a < lo[i] || a > hi[i])
                    continue;
                const std::ptrdiff_t k = off[i] + idx;
                const float up = dem[cell0 + i * sp];
                zs[i][k] = up;
                gus[i][k] = up;
                gds[i][k] = kNaNf;
            }
        }
    }
    for (int i = 0; i < kGroupLines; ++i) {
        LineBuf& L = sc.lines[i];
        if (d_.geographic) {
            // s counts from the whole grid's line's far end, step by step in the same order.
            const long j_all = L.j + d_.p_off;
            double s = 0;
            for (int k = 1; k <= L.kb; ++k) {
                const int a = L.a_far_all - sign * k;
                s -= d_.step_table[d_.major_cols ? static_cast<int>(j_all + d_.xi_all[a]) : a];
            }
            const int a_far = sign > 0 ? L.a_hi : L.a_lo;
            for (int k = 0; k < L.n; ++k) {
                const int a = a_far - sign * k;
                if (k > 0) {
                    s -= d_.step_table[d_.major_cols ? static_cast<int>(j_all + d_.xi[a])
                                                     : a + d_.a_off];
                }
                L.S[k] = s;
                L.Z[k] -= d_.c * s * s;
            }
        } else {
            const double* fold = d_.fold.data() + L.kb;
            double* z = L.Z;
            for (int k = 0; k < L.n; ++k)
                z[k] -= fold[k];
        }
    }
}

// Coordinates of the hull: index space on projected grids (S = −k·step, the step cancels in
// every comparison), metres on geographic ones.
void LineWorker::sweep(LineBuf& L, Scratch& sc) const {
    L.n_jobs = 0;
    if (L.n == 0)
        return;
    if (d_.geographic)
        sweepT<true>(L, sc);
    else
        sweepT<false>(L, sc);
}

template <bool kGeo>
void LineWorker::sweepT(LineBuf& L, Scratch& sc) const {
    const int n = L.n;
    const double* Z = L.Z;
    const double* S = L.S;
    FarJob* jobs = L.jobs;
    int n_jobs = 0;
    const int sign = d_.sign;
    const bool mc = d_.major_cols;
    const int* xi = d_.xi.data();
    const double inv_step = kGeo ? 1.0 : 1.0 / d_.step_m;  // pos() units to metres
    auto pos = [&](int k) { return kGeo ? S[k] : -static_cast<double>(k); };
    SlidingHull<decltype(pos)> hull(Z, pos, sc.back.data(), sc.front.data(), sc.grave.data(),
                                    sc.record.data());
    const int lag = k_exact_ + 1;
    const double reach_idx = kGeo ? reach_ : reach_ / d_.step_m;  // in pos() units
    // Projected grids: pos(lo) − pos(k) = k − lo, a whole number, exceeds reach_idx exactly
    // when it exceeds ⌊reach_idx⌋ (capped: an unlimited reach never pops).
    const long reach_steps = static_cast<long>(std::floor(std::min(reach_idx, 1e15)));
    const double c = d_.c, step = d_.step_m;

    const float* g_up = L.g_up;
    const float* g_dn = L.g_dn;
    int last_tile = -1;
    float* tile_buf = nullptr;
    for (int k = 0; k < n; ++k) {
        const int hi = k - lag;
        if (hi >= 0)
            hull.push(hi);
        if (limited_) {
            // The samples beyond reach of eye k leave the window, the farthest first.
            auto beyond = [&](int lo) {
                return kGeo ? pos(lo) - pos(k) > reach_idx : k - lo > reach_steps;
            };
            while (hull.farthest() <= hull.newest() && beyond(hull.farthest()))
                hull.popFarthest();
        }
        if (hull.empty())
            continue;
        const float gu = g_up[k], gd = g_dn[k];
        const bool has_u = !std::isnan(gu), has_d = !std::isnan(gd);
        if (!has_u && !has_d)
            continue;
        const double sE = pos(k);
        const int k_all = k + L.kb;  // in the whole grid's line
        const double fold = kGeo ? d_.c * sE * sE : d_.fold[k_all];
        // The tangent point from the eye of ground g, and the tangent of the line's horizon
        // seen from that eye, (Z_P − Z_E)/(s_P − s_E) + 2c s_E (in metres).
        const double tilt = 2 * c * (kGeo ? sE : -k_all * step);
        const int a = sign > 0 ? L.a_hi - k : L.a_lo + k;
        const int q = static_cast<int>(L.j + xi[a]);
        // side 0: the cell on the line's upper side (minor q), 1: the lower one (q − 1).
        auto answer = [&](float g, int side) __attribute__((always_inline)) {
            const double zE = g + eye_h_ - fold;
            const Vertex& v = hull.tangent(sE, zE);
            const float est = static_cast<float>((v.z - zE) / (v.s - sE) * inv_step + tilt);
            const int p = q - side;
            const int col = mc ? a : p, row = mc ? p : a;
            const int tile = tiles_.id(col, row);
            if (tile != last_tile)  // a line stays in one tile for up to 128 steps
                last_tile = tile, tile_buf = tiles_.ptr[tile];
            float* best = tile_buf + Tiles::offset(col, row);
            // The ray runs within half a cell of the line: beyond the near field its samples
            // around the tangent point are within a few thousandths of the line's tangent,
            // so when the near field beats that by more than the margin they cannot win.
            if (est + kFarMargin < best[0])
                return;
            jobs[n_jobs++] = FarJob{col, row, k - v.k, g, best};
        };
        // Both sides only at the grid's edges; the lower eye first (the walks go uphill).
        if (has_u && has_d) {
            if (gu <= gd) {
                answer(gu, 0);
                answer(gd, 1);
            } else {
                answer(gd, 1);
                answer(gu, 0);
            }
        } else if (has_u) {
            answer(gu, 0);
        } else {
            answer(gd, 1);
        }
    }
    L.n_jobs = n_jobs;
}

// The exact samples around each cell's tangent point, into the tiles.
void LineWorker::record(const Scratch& sc) const {
    for (int i = 0; i < kGroupLines; ++i)
        refiner_.recordJobs(sc.lines[i].jobs, sc.lines[i].n_jobs);
}

}  // namespace lookfar::horizon_detail::fast
