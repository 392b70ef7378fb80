// The fast horizon engine: upper convex hulls swept along parallel scan lines find where the far
// horizon of each cell lies; the cell's own ray is sampled exactly there and over its first steps.
//
// Notation
//   α            azimuth of the direction; (u_c, u_r) its direction in cell space (cells per m)
//   major axis   the grid axis along which the direction moves most (columns when |u_c| ≥ |u_r|)
//   a, p         major and minor index of a cell; A, B the grid's extents along those axes
//   m            minor cells per major step along the direction, |m| ≤ 1
//   j            index of a scan line: at major index a it passes minor position j + m·a
//   x_a, g_a     ⌈m·a⌉ and ⌈m·a⌉ − m·a ∈ [0, 1): line j meets major index a at minor j + x_a − g_a
//   s            coordinate along a line, metres, increasing towards the horizon
//   c            curvature after refraction along α: a point at distance d appears c·d² lower
//   z(s)         terrain sampled on the line, one sample per major index, linearly interpolated
//                between the two cell centres on either side of the line
//   Z(s)         folded height z(s) − c·s²
//   E            an eye at s_E with height z_e (DEM + observer height); folded Z_E = z_e − c·s_E²
//   K, r         HorizonOptions::exact_steps and refine_steps
//
// Derivation. Seen from the eye at s_E, a sample at s_P = s_E + d appears at
//     z_P − c d²  = z_P − c s_P² + 2c s_P s_E − c s_E²
//                 = (Z_P − Z_E) + z_e + 2c s_E (s_P − s_E),
// so the tangent of its elevation angle is
//     t = (z_P − c d² − z_e)/d = (Z_P − Z_E)/(s_P − s_E) + 2c s_E.
// The last term is the same for every sample of this eye (the tilt of the eye's local horizontal
// in the folded plane). The horizon of E is therefore the sample of largest slope
// (Z_P − Z_E)/(s_P − s_E) in the folded (s, Z) plane: where the tangent from E touches the upper
// convex hull of the folded samples beyond E. The curvature is folded into the heights once per
// sample and the hull does the rest; over a flat sea Z = −c s² is concave and the tangent point
// is the sea horizon, d = √(z_e / c).
//
// The sweep. Each line is walked from its far end (the horizon side) towards its near end. A
// sample enters the hull before the eyes nearer than it are answered, popping the vertices it
// hides: each sample is pushed and popped at most once, amortised O(1). The tangent from an eye
// is found by galloping from the hull's nearest vertex (the slopes from an eye along an upper hull
// rise, then fall), O(log of the vertices passed): a few steps for eyes near the ground. All hull
// tests are cross-multiplications, without division.
//
// Reach. With a limited reach the candidates of an eye are a sliding window of the line. The
// window is a queue of two hulls: a "back" hull that new samples enter, and a "front" hull rebuilt
// from the back one's samples when a sample has to leave, from which the farthest sample leaves by
// undoing its insertion (the two-stack queue). Each sample enters a hull at most twice.
//
// Which line answers for a cell. Lines are one minor step apart, so a cell lies between two lines,
// a fraction g_a of the way from the lower one to the upper one; the nearer one (at most half a
// cell beside the cell's own ray) answers for it, with the eye at the cell's own height and major
// position. Its answer is where the far horizon lies, not its angle: the line's samples are beside
// the ray, and on rough terrain that offset changes the angle of nearby samples a lot.
//
// Exact samples. The angle is taken from the cell's own ray, sampled exactly as the reference
// engine samples it (its column and row crossings, linearly interpolated): the near field (the
// first K major steps and the minor crossings before step K + 1), and the crossings within ± r
// major steps of the line's tangent point. The lines enter their hulls K + 1 steps late, so that
// their tangent points lie beyond the near field. The result is the largest of those exact
// samples: never above the reference, equal to it when the reference's horizon sample lies in the
// near field or beside the tangent point (the tests measure how often).
//
// Skipping the far samples. The near field is taken first. The line's own horizon, seen from the
// cell's eye at its major position, is t_L = (Z_P − Z_E)/(s_P − s_E) + 2c s_E; the ray runs at most
// half a cell beside the line, so at d ≥ (K + 1) steps its samples around P differ from the
// line's by about |lateral slope| / (2(K + 1)) in tangent: a few thousandths. When t_L is more
// than kFarMargin = 0.05 (≈ 3°) below the near field's best, the far samples are not taken: on
// the benchmark's terrain that is four cells in five, and the agreement with the reference
// changed by one cell-direction in 115 940 (docs/horizon.md).
//
// The near field is the bulk of the arithmetic and is the same for every cell of a row: on
// projected grids the crossings sit at the same offsets from every cell, so a row of cells is
// done at once, 8 or 16 cells a vector (AVX2 or AVX-512 where the processor has them, with the
// same results), each crossing as two loads
// and a few multiply-adds with no branch. The heights are differenced before they are weighted
// ((z₁ − z₀) + w (z₂ − z₁) − (h + drop), z₀ the cell's ground), so single precision loses under
// 1e-7 of the rise. Cells whose near field leaves the grid take the same samples one by one,
// stopping where the ray leaves it.
//
// No data. A direction has data when an exact sample with data lies inside the grid within reach.
//
// Output. Tiles of cells (the 128² GeoTIFF block) take their cells' near fields one batch of lines
// before the first line that answers for them; each line then brings its cells' far samples; once
// every line that answers for a tile is done, its angles and distances are finished and handed to
// the sink: only a band of tiles along the current lines is in memory, whatever N.
//
// Geographic grids: the lines' direction in cell space uses the cell aspect of the middle row and
// their distance adds up the ground length of each step at its own row; the exact samples of a
// cell's ray use the aspect of the cell's own row and the engines' fast distance (GridMetric), as
// the reference does (the near-field offsets are worked out row by row); the curvature uses one
// latitude for the whole grid.
#include <algorithm>
#include <cmath>
#include <cstring>
#include <limits>
#include <memory>
#include <vector>

#ifdef _OPENMP
#include <omp.h>
#endif

#include "HorizonInternal.hpp"
#include "lookfar/core/Errors.hpp"
#include "lookfar/core/ParallelFor.hpp"
#include "lookfar/core/Units.hpp"

namespace lookfar::horizon_detail {

namespace {

constexpr int kTileShift = 7;           // 128: the GeoTIFF block of the horizon rasters
constexpr int kTile = 1 << kTileShift;  // output tile side, cells
constexpr int kTileCells = kTile * kTile;
constexpr int kGroupLines = 8;   // lines swept by one task
constexpr int kBatchGroups = 8;  // groups between two tile flushes
constexpr double kInf = std::numeric_limits<double>::infinity();
constexpr float kInfF = std::numeric_limits<float>::infinity();
constexpr float kNaNf = std::numeric_limits<float>::quiet_NaN();
constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
// A cell's exact samples around its line's tangent point are taken unless the tangent of the
// line's horizon, seen from the cell's eye, is more than this below the cell's near field.
constexpr float kFarMargin = 0.05f;

/// Splits x into floor and fraction, treating fractions within 1e-9 of 0 or 1 as exact (so that
/// rays along grid diagonals do not read a neighbour with a weight of 1e-16).
inline int floorInt(double x) {
    const int i = static_cast<int>(x);  // truncates towards zero
    return i - (x < i);
}
inline int ceilInt(double x) {
    const int i = static_cast<int>(x);
    return i + (x > i);
}
inline void snapFraction(double x, int& base, double& f) {
    double fl = floorInt(x);
    f = x - fl;
    if (f < 1e-9) {
        f = 0;
    } else if (f > 1 - 1e-9) {
        f = 0;
        fl += 1;
    }
    base = static_cast<int>(fl);
}

/// Ground distance from east and north offsets. No overflow or underflow to guard against at
/// terrain sizes, so not std::hypot (which costs about 30 instructions more, once per sample on
/// geographic grids); the two differ by at most an ulp or so.
inline double groundDistance(double east, double north) {
    return std::sqrt(east * east + north * north);
}

/// True when x lies within 1e-9 of a whole number (a minor crossing that is also a major one).
inline bool nearWhole(double x) {
    return std::fabs(x - static_cast<double>(floorInt(x + 0.5))) < 1e-9;
}

/// One exact sample of a cell's ray: a crossing of a column or row line through cell centres,
/// as offsets from the cell.
struct Crossing {
    std::ptrdiff_t off1, off2;  // the two cells interpolated, in the DEM's cell array
    double w;                   // weight of the second cell (off2 = off1 when w = 0)
    double dist, drop;          // metres
    double inv_dist;            // 1/m
    int da1, dp1, da2, dp2;     // the cells as (major, minor) offsets, for edge checks
};

/// The near field in the layout of the vector kernel (structure of arrays, single precision).
struct NearField {
    std::vector<std::ptrdiff_t> off1, off2;
    std::vector<float> w, hd, inv, dist;  // weight, observer height + drop, 1/distance, distance
    std::vector<int> dc1, dr1, dc2, dr2;  // column and row offsets, for edge checks
    int n = 0;
    int dc_min = 0, dc_max = 0, dr_min = 0, dr_max = 0;  // extents of the offsets

    void assign(const Crossing* x, int count, bool major_cols, double eye_h) {
        n = count;
        for (auto* v : {&off1, &off2})
            v->resize(count);
        for (auto* v : {&w, &hd, &inv, &dist})
            v->resize(count);
        for (auto* v : {&dc1, &dr1, &dc2, &dr2})
            v->resize(count);
        dc_min = dc_max = dr_min = dr_max = 0;
        for (int i = 0; i < count; ++i) {
            off1[i] = x[i].off1, off2[i] = x[i].off2;
            w[i] = static_cast<float>(x[i].w);
            hd[i] = static_cast<float>(eye_h + x[i].drop);
            inv[i] = static_cast<float>(1.0 / x[i].dist);
            dist[i] = static_cast<float>(x[i].dist);
            dc1[i] = major_cols ? x[i].da1 : x[i].dp1;
            dr1[i] = major_cols ? x[i].dp1 : x[i].da1;
            dc2[i] = major_cols ? x[i].da2 : x[i].dp2;
            dr2[i] = major_cols ? x[i].dp2 : x[i].da2;
            dc_min = std::min({dc_min, dc1[i], dc2[i]});
            dc_max = std::max({dc_max, dc1[i], dc2[i]});
            dr_min = std::min({dr_min, dr1[i], dr2[i]});
            dr_max = std::max({dr_max, dr1[i], dr2[i]});
        }
    }
};

// ---- The near-field kernel --------------------------------------------------------------------

// GCC vector types: 8 floats (one AVX register); without AVX the compiler splits them in halves.
// Passing them by value between non-AVX functions is what -Wpsabi warns of; they never leave
// this file.
#pragma GCC diagnostic push
#pragma GCC diagnostic ignored "-Wpsabi"
typedef float V8 __attribute__((vector_size(32)));

typedef float V16 __attribute__((vector_size(64)));

template <typename V>
__attribute__((always_inline)) inline V loadV(const float* p) {
    V v;
    std::memcpy(&v, p, sizeof v);
    return v;
}
template <typename V>
__attribute__((always_inline)) inline void storeV(float* p, V v) {
    std::memcpy(p, &v, sizeof v);
}
template <typename V>
__attribute__((always_inline)) inline V splatV(float x) {
    return V{} + x;
}

/// Largest tangent over the near field for the cells [i, n) of the run starting at `z` (a run of
/// one DEM row whose near field lies inside the grid), two vectors of V (L lanes) at a time while
/// 2L cells are left: best_t (−∞ when no sample has data) and its distance. Returns where it
/// stopped.
template <typename V, int L>
__attribute__((always_inline)) inline int nearBlocks(const float* z, int i, int n,
                                                     const NearField& f, float* best_t,
                                                     float* best_d) {
    const int nx = f.n;
    const std::ptrdiff_t* o1 = f.off1.data();
    const std::ptrdiff_t* o2 = f.off2.data();
    const float* wt = f.w.data();
    const float* hd = f.hd.data();
    const float* inv = f.inv.data();
    const float* dist = f.dist.data();
    for (; i + 2 * L <= n; i += 2 * L) {
        const float* zi = z + i;
        const V g0 = loadV<V>(zi), g1 = loadV<V>(zi + L);
        V b0 = splatV<V>(-kInfF), b1 = b0, d0 = splatV<V>(0.0f), d1 = d0;
        for (int k = 0; k < nx; ++k) {
            const float* p = zi + o1[k];
            const float* q = zi + o2[k];
            const V a0 = loadV<V>(p), a1 = loadV<V>(p + L);
            const V c0 = loadV<V>(q), c1 = loadV<V>(q + L);
            const V w = splatV<V>(wt[k]), h = splatV<V>(hd[k]), iv = splatV<V>(inv[k]),
                    dk = splatV<V>(dist[k]);
            const V t0 = ((a0 - g0) + w * (c0 - a0) - h) * iv;
            const V t1 = ((a1 - g1) + w * (c1 - a1) - h) * iv;
            const auto m0 = t0 > b0;  // NaN (no data) never wins; ties keep the nearer sample
            const auto m1 = t1 > b1;
            b0 = m0 ? t0 : b0;
            b1 = m1 ? t1 : b1;
            d0 = m0 ? dk : d0;
            d1 = m1 ? dk : d1;
        }
        storeV(best_t + i, b0);
        storeV(best_t + i + L, b1);
        storeV(best_d + i, d0);
        storeV(best_d + i + L, d1);
    }
    return i;
}

/// The cells [i, n) one by one (the same arithmetic, lane by lane).
inline void nearTail(const float* z, int i, int n, const NearField& f, float* best_t,
                     float* best_d) {
    const int nx = f.n;
    for (; i < n; ++i) {
        const float* zi = z + i;
        const float g = zi[0];
        float b = -kInfF, d = 0;
        for (int k = 0; k < nx; ++k) {
            const float a = zi[f.off1[k]], c = zi[f.off2[k]];
            const float t = ((a - g) + f.w[k] * (c - a) - f.hd[k]) * f.inv[k];
            if (t > b)
                b = t, d = f.dist[k];
        }
        best_t[i] = b, best_d[i] = d;
    }
}

/// Largest tangent over the near field for the `n` cells starting at `z`: 16 cells a step with
/// 8-lane vectors.
__attribute__((always_inline)) inline void nearBody(const float* z, int n, const NearField& f,
                                                    float* best_t, float* best_d) {
    const int i = nearBlocks<V8, 8>(z, 0, n, f, best_t, best_d);
    nearTail(z, i, n, f, best_t, best_d);
}

/// The same, 32 cells a step with 16-lane vectors first (AVX-512: half the instructions).
__attribute__((always_inline)) inline void nearBodyWide(const float* z, int n, const NearField& f,
                                                        float* best_t, float* best_d) {
    int i = nearBlocks<V16, 16>(z, 0, n, f, best_t, best_d);
    i = nearBlocks<V8, 8>(z, i, n, f, best_t, best_d);
    nearTail(z, i, n, f, best_t, best_d);
}

/// atan in degrees, without branches (so that a row of them vectorises): reduction to
/// y = min(|t|, 1/|t|) ≤ 1, then to |u| ≤ tan(π/8) by u = (y − 1)/(y + 1), and a polynomial in
/// u² fitted to atan on that interval (Chebyshev least squares, degree 7; error below 3e-13 rad
/// against std::atan). NaN stays NaN.
template <typename T>  // double, or a vector of doubles (the selects become blends)
__attribute__((always_inline)) inline T atanDeg(T t) {
    constexpr double kTanPi8 = 0.41421356237309503;
    const T zero = T{}, one = zero + 1.0;
    const T x = t < zero ? -t : t;
    const auto big = x > one;
    const T y = big ? one / x : x;
    const auto mid = y > kTanPi8;
    const T u = mid ? (y - one) / (y + one) : y;
    const T base = mid ? zero + 0.25 * kPi : zero;
    const T s = u * u;
    T p = zero - 0.037697460562491736;
    p = p * s + 0.06976773623678606;
    p = p * s - 0.0899316888954491;
    p = p * s + 0.11103530043504077;
    p = p * s - 0.14285391020501872;
    p = p * s + 0.1999999318399042;
    p = p * s - 0.33333333278365695;
    p = p * s + 0.9999999999993244;
    T r = base + u * p;
    r = big ? (zero + 0.5 * kPi) - r : r;
    r *= kRadToDeg;
    return t < zero ? -r : r;
}

typedef double V4d __attribute__((vector_size(32)));

__attribute__((always_inline)) inline void anglesBody(const double* t, int n, float* angle) {
    int i = 0;
    for (; i + 4 <= n; i += 4) {
        V4d v;
        std::memcpy(&v, t + i, sizeof v);
        const V4d r = atanDeg(v);
        for (int k = 0; k < 4; ++k)
            angle[i + k] = static_cast<float>(r[k]);
    }
    for (; i < n; ++i)
        angle[i] = static_cast<float>(atanDeg(t[i]));
}

#if defined(__GNUC__) && (defined(__x86_64__) || defined(__i386__))
__attribute__((target("avx2,fma"))) void nearAvx2(const float* z, int n, const NearField& f,
                                                  float* best_t, float* best_d) {
    nearBody(z, n, f, best_t, best_d);
}
__attribute__((target("avx2,fma"))) void anglesAvx2(const double* t, int n, float* angle) {
    anglesBody(t, n, angle);
}
__attribute__((target("avx512f,avx512vl,avx512bw,avx512dq,avx2,fma"))) void nearAvx512(
    const float* z, int n, const NearField& f, float* best_t, float* best_d) {
    nearBodyWide(z, n, f, best_t, best_d);
}
#define LOOKFAR_HAVE_AVX2_KERNEL 1
#endif

void nearGeneric(const float* z, int n, const NearField& f, float* best_t, float* best_d) {
    nearBody(z, n, f, best_t, best_d);
}

void anglesGeneric(const double* t, int n, float* angle) {
    anglesBody(t, n, angle);
}

/// The vector kernels, chosen once for the processor.
struct Kernels {
    void (*near)(const float*, int, const NearField&, float*, float*) = nearGeneric;
    void (*angles)(const double*, int, float*) = anglesGeneric;
};

Kernels chooseKernels() {
    Kernels k;
#ifdef LOOKFAR_HAVE_AVX2_KERNEL
    __builtin_cpu_init();
    if (__builtin_cpu_supports("avx2") && __builtin_cpu_supports("fma")) {
        k.near = nearAvx2;
        k.angles = anglesAvx2;
    }
    if (__builtin_cpu_supports("avx512f") && __builtin_cpu_supports("avx512vl") &&
        __builtin_cpu_supports("avx512bw") && __builtin_cpu_supports("avx512dq") &&
        __builtin_cpu_supports("avx2") && __builtin_cpu_supports("fma"))
        k.near = nearAvx512;
#endif
    return k;
}

// ---- Directions -------------------------------------------------------------------------------

struct Direction {
    double azimuth_deg = 0, sin_a = 0, cos_a = 1;
    bool major_cols = true;
    int A = 0, B = 0;  // extents along the major and minor axes
    int sign = 1;      // +1: the horizon lies towards increasing major index
    double m = 0;      // minor per major step of the lines
    double c = 0;      // curvature coefficient along α, 1/m
    std::vector<int> xi;
    std::vector<double> gx;
    bool geographic = false;
    double step_m = 0;               // projected: metres per major step
    std::vector<double> fold;        // projected: c s² at s = −k · step, by k
    std::vector<double> step_table;  // geographic: metres per major step of the lines, by row
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
void setUp(const EngineInput& in, int index, Direction& d) {
    const int w = in.dem.width(), h = in.dem.height();
    const GridMetric& metric = in.metric;
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
    const double r_ref = 0.5 * (h - 1);
    d.m = slopeAt(r_ref, d.major_cols, d.sign);
    d.A = d.major_cols ? w : h;
    d.B = d.major_cols ? h : w;
    d.c = in.curvature.c_north * d.cos_a * d.cos_a + in.curvature.c_east * d.sin_a * d.sin_a;
    d.xi.resize(d.A);
    d.gx.resize(d.A);
    for (int a = 0; a < d.A; ++a) {
        double x = d.m * a;
        double ce = std::ceil(x);
        d.xi[a] = static_cast<int>(ce);
        d.gx[a] = ce - x;
    }
    d.geographic = metric.geographic();
    auto stepAtRow = [&](double row) {
        double e = metric.eastPerCol(row), n = metric.northPerRow(row);
        return d.major_cols ? std::hypot(e, d.m * n) : std::hypot(d.m * e, n);
    };
    if (d.geographic) {
        d.step_table.resize(h);
        d.m_row.resize(h);
        for (int r = 0; r < h; ++r) {
            d.step_table[r] = stepAtRow(r);
            bool mc;
            int sg;
            double m = slopeAt(r, mc, sg);
            // A row whose aspect would flip the major axis keeps the lines' axis; |m| ≤ ~1.
            d.m_row[r] = mc == d.major_cols ? m : d.m;
        }
    } else {
        d.step_m = stepAtRow(r_ref);
        d.fold.resize(d.A + 1);
        for (int k = 0; k <= d.A; ++k) {
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

/// A cell whose exact samples around its line's tangent point are to be taken.
struct FarJob {
    int col, row;
    int cand;      // the tangent point, major steps from the eye
    float ground;  // the cell's ground, m
    float* best;   // its best tangent so far, in its tile
};

/// One line of a group: its samples from the far end (k = 0) to the near end.
struct LineBuf {
    long j = 0;
    int a_lo = 0, a_hi = -1, n = 0;
    double* Z = nullptr;     // folded heights (NaN = no data); raw heights until folded
    double* S = nullptr;     // geographic: coordinate along the line, metres
    float* g_up = nullptr;   // ground of the cell on the line's upper side (minor q) if the line
                             // answers for it, else NaN
    float* g_dn = nullptr;   // … of the cell on its lower side (q − 1)
    FarJob* jobs = nullptr;  // the cells whose far samples are to be taken
    int n_jobs = 0;
};

/// A hull vertex: a sample's coordinate along the line, its folded height and its index.
struct Vertex {
    double s, z;
    int k;
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

/// The exact samples of a cell's ray around the tangent point of its line (± r major steps,
/// beyond the near field). Run right after the line sweep, while the DEM around the lines is
/// still in the processor's caches.
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

  private:
    // Geographic grids: the largest tangent among the samples of the ray of cell (col, row)
    // with the eye at ze, `steps` major steps from the tangent point (t = −∞: none has data).
    void refineGeographic(int col, int row, int steps, double ze, double& t, double& dist) const {
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

    struct Eye {
        int a, p;  // major and minor index of the cell
        int col, row;
        double ze;  // eye height, m
        double m;   // minor per major step of the cell's own ray
        double t, dist;
    };

    // Geographic grids: major crossings t ∈ [t0, t1] and minor crossings at t in [s0, s1) of the
    // cell's own ray. (Everything the samples need is held in locals: this runs for every cell
    // and direction.)
    void exactGeographic(Eye& e, int t0, int t1, double s0, double s1) const {
        const int A = d_.A, B = d_.B, sign = d_.sign;
        const bool mc = d_.major_cols;
        const float* dem = dem_;
        const std::size_t w = static_cast<std::size_t>(w_);
        const GridMetric& metric = in_.metric;
        const Curvature cv = in_.curvature;
        const double reach = reach_, ze = e.ze;
        const double col0 = e.col, row0 = e.row;
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
    __attribute__((always_inline)) inline void refineProjected(int col, int row, int cand,
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

  public:
    /// The far field of every cell that line L answers for (its upper cell q and lower cell
    /// q − 1 at each sample), into the tiles: the exact samples of each cell's ray around its
    /// tangent point.
    void recordLine(const LineBuf& L) const {
        if (d_.geographic)
            recordLineT<true>(L);
        else
            recordLineT<false>(L);
    }

  private:
    template <bool kGeo>
    void recordLineT(const LineBuf& L) const {
        const double eye_h = in_.options.observer_height_m;
        for (int i = 0; i < L.n_jobs; ++i) {
            const FarJob& job = L.jobs[i];
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

  private:
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
          k_exact_(in.options.exact_steps) {}

    /// The lines j0 … j0 + kGroupLines − 1.
    void run(long j0, long j_last, Scratch& sc) const {
        int u_lo = d_.A, u_hi = -1;  // union of the lines' ranges
        for (int i = 0; i < kGroupLines; ++i) {
            LineBuf& L = sc.lines[i];
            L.j = j0 + i;
            if (L.j > j_last || !validRange(L.j, L.a_lo, L.a_hi)) {
                L.a_lo = 0, L.a_hi = -1, L.n = 0;
                continue;
            }
            L.n = L.a_hi - L.a_lo + 1;
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

  private:
    // Major indices where line j has a sample: minor position j + x_a − g_a inside [0, B − 1].
    bool validRange(long j, int& a_lo, int& a_hi) const {
        const int A = d_.A;
        auto geZero = [&](int a) {
            long q = j + d_.xi[a];
            return q >= 1 || (q == 0 && d_.gx[a] == 0.0);
        };
        auto leMax = [&](int a) { return j + d_.xi[a] <= d_.B - 1; };
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
        if (d_.m == 0) {
            bool ok = geZero(0) && leMax(0);
            a_lo = 0, a_hi = ok ? A - 1 : -1;
        } else if (d_.m > 0) {
            a_lo = flip(geZero, false);
            a_hi = flip(leMax, true) - 1;
        } else {
            a_lo = flip(leMax, false);
            a_hi = flip(geZero, true) - 1;
        }
        return a_lo <= a_hi;
    }

    // Samples of every line of the group, major index by major index (neighbouring lines read
    // neighbouring cells, so the DEM is read in cache-friendly runs whatever the direction), and
    // the grounds of the cells each line answers for: the nearer line of the two around a cell,
    // or the only one of them inside the grid.
    void gather(Scratch& sc, int u_lo, int u_hi) const {
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
                const int a_far = sign > 0 ? L.a_hi : L.a_lo;
                double s = 0;
                for (int k = 0; k < L.n; ++k) {
                    const int a = a_far - sign * k;
                    if (k > 0)
                        s -= d_.step_table[d_.major_cols ? static_cast<int>(L.j + d_.xi[a]) : a];
                    L.S[k] = s;
                    L.Z[k] -= d_.c * s * s;
                }
            } else {
                const double* fold = d_.fold.data();
                double* z = L.Z;
                for (int k = 0; k < L.n; ++k)
                    z[k] -= fold[k];
            }
        }
    }

    // Coordinates of the hull: index space on projected grids (S = −k·step, the step cancels in
    // every comparison), metres on geographic ones.
    void sweep(LineBuf& L, Scratch& sc) const {
        L.n_jobs = 0;
        if (L.n == 0)
            return;
        if (d_.geographic)
            sweepT<true>(L, sc);
        else
            sweepT<false>(L, sc);
    }

    template <bool kGeo>
    void sweepT(LineBuf& L, Scratch& sc) const {
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
        Vertex* back = sc.back.data();
        Vertex* front = sc.front.data();
        Vertex* grave = sc.grave.data();
        int* record = sc.record.data();
        int nb = 0, nf = 0, ng = 0, nr = 0;
        int back_start = 0, front_lo = 0, front_hi = -1, pushed = -1, lo = 0;
        const int lag = k_exact_ + 1;
        const double reach_idx = kGeo ? reach_ : reach_ / d_.step_m;  // in pos() units
        // Projected grids: pos(lo) − pos(k) = k − lo, a whole number, exceeds reach_idx exactly
        // when it exceeds ⌊reach_idx⌋ (capped: an unlimited reach never pops).
        const long reach_steps = static_cast<long>(std::floor(std::min(reach_idx, 1e15)));
        const double c = d_.c, step = d_.step_m;

        auto frontInsert = [&](int x) {
            if (std::isnan(Z[x])) {
                record[nr++] = -1;
                return;
            }
            const Vertex v{pos(x), Z[x], x};
            int popped = 0;
            while (nf >= 2) {
                const Vertex& a = front[nf - 1];
                const Vertex& b = front[nf - 2];
                if ((a.z - b.z) * (v.s - b.s) <= (v.z - b.z) * (a.s - b.s)) {
                    grave[ng++] = a;
                    --nf;
                    ++popped;
                } else {
                    break;
                }
            }
            front[nf++] = v;
            record[nr++] = popped;
        };
        auto popFarthest = [&] {
            if (front_lo > front_hi) {
                // The front hull is rebuilt from the back hull's samples, nearest first.
                for (int x = pushed; x >= back_start; --x)
                    frontInsert(x);
                front_lo = back_start;
                front_hi = pushed;
                nb = 0;
                back_start = pushed + 1;
            }
            const int r = record[--nr];
            if (r >= 0) {
                --nf;
                for (int i = 0; i < r; ++i)
                    front[nf++] = grave[--ng];
            }
            ++front_lo;
        };

        const float* g_up = L.g_up;
        const float* g_dn = L.g_dn;
        int pf = 0, pb = 0;  // where the tangent walks start
        int last_tile = -1;
        float* tile_buf = nullptr;
        for (int k = 0; k < n; ++k) {
            const int hi = k - lag;
            if (hi >= 0) {
                pushed = hi;
                const double zx = Z[hi];
                if (!std::isnan(zx)) {
                    const double sx = pos(hi);
                    while (nb >= 2) {
                        const Vertex& a = back[nb - 1];
                        const Vertex& b = back[nb - 2];
                        if ((a.z - zx) * (b.s - sx) <= (b.z - zx) * (a.s - sx))
                            --nb;
                        else
                            break;
                    }
                    back[nb++] = Vertex{sx, zx, hi};
                }
            }
            if (limited_) {
                while (lo <= pushed &&
                       (kGeo ? pos(lo) - pos(k) > reach_idx : k - lo > reach_steps)) {
                    popFarthest();
                    ++lo;
                }
            }
            if (nf == 0 && nb == 0)
                continue;
            const float gu = g_up[k], gd = g_dn[k];
            const bool has_u = !std::isnan(gu), has_d = !std::isnan(gd);
            if (!has_u && !has_d)
                continue;
            const double sE = pos(k);
            const double fold = kGeo ? d_.c * sE * sE : d_.fold[k];
            // The tangent point from the eye of ground g, and the tangent of the line's horizon
            // seen from that eye, (Z_P − Z_E)/(s_P − s_E) + 2c s_E (in metres).
            const double tilt = 2 * c * (kGeo ? sE : -k * step);
            const int a = sign > 0 ? L.a_hi - k : L.a_lo + k;
            const int q = static_cast<int>(L.j + xi[a]);
            // side 0: the cell on the line's upper side (minor q), 1: the lower one (q − 1).
            auto answer = [&](float g, int side) __attribute__((always_inline)) {
                const double zE = g + eye_h_ - fold;
                const Vertex& v = tangent(front, nf, back, nb, sE, zE, pf, pb);
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

    // The tangent point (sample index) from the eye (sE, zE) over both hulls. The slopes from an
    // eye along an upper hull rise, then fall, so a walk uphill from any vertex ends at the
    // tangent point: pf and pb (array indices into the front and back hulls) are where the walks
    // start, the previous eye's tangent points, and they return where the walks ended. Along a
    // line the tangent point moves little from one eye to the next: a step or two.
    static inline const Vertex& tangent(const Vertex* front, int nf, const Vertex* back, int nb,
                                        double sE, double zE, int& pf, int& pb) {
        auto improves = [&](const Vertex& v0, const Vertex& v1) {  // v1 seen higher than v0
            return (v1.z - zE) * (v0.s - sE) > (v0.z - zE) * (v1.s - sE);
        };
        const Vertex* best = nullptr;
        if (nf > 0) {  // front[0] is the nearest vertex
            int i = std::min(pf, nf - 1);
            if (i + 1 < nf && improves(front[i], front[i + 1])) {
                do
                    ++i;
                while (i + 1 < nf && improves(front[i], front[i + 1]));
            } else {
                while (i > 0 && improves(front[i], front[i - 1]))
                    --i;
            }
            pf = i;
            best = &front[i];
        }
        if (nb > 0) {  // back[nb − 1] is the nearest vertex
            int i = std::min(pb, nb - 1);
            if (i > 0 && improves(back[i], back[i - 1])) {
                do
                    --i;
                while (i > 0 && improves(back[i], back[i - 1]));
            } else {
                while (i + 1 < nb && improves(back[i], back[i + 1]))
                    ++i;
            }
            pb = i;
            const Vertex& v = back[i];
            // Ties go to the nearer sample (the back hull's are nearer).
            if (!best || !improves(v, *best))
                best = &v;
        }
        return *best;
    }

    // The exact samples around each cell's tangent point, into the tiles.
    void record(const Scratch& sc) const {
        for (int i = 0; i < kGroupLines; ++i)
            refiner_.recordLine(sc.lines[i]);
    }

    const Direction& d_;
    Tiles& tiles_;
    FarRefiner refiner_;
    const float* dem_;
    int w_;
    double eye_h_;
    double reach_;
    bool limited_;
    int k_exact_;
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
    void near(float* buf, int c0, int r0, int tw, int th, TileScratch& ts) const {
        for (int rr = 0; rr < th; ++rr)
            nearRow(buf + rr * kTile, buf + kTileCells + rr * kTile, c0, r0 + rr, tw, ts);
    }
    /// The angles and distances of the tile's cells from their best samples, in place.
    void finish(float* buf, int c0, int r0, int tw, int th, TileScratch& ts) const {
        for (int rr = 0; rr < th; ++rr)
            finishRow(buf + rr * kTile, buf + kTileCells + rr * kTile, c0, r0 + rr, tw, ts);
    }

  private:
    // The near field of row r on a geographic grid: the cell aspect and the metric of its row.
    const NearField& geographicNear(int r, TileScratch& ts) const {
        const GridMetric& metric = in_.metric;
        const Curvature& curv = in_.curvature;
        const bool mc = d_.major_cols;
        const int steps = std::min(k_exact_, d_.A);
        buildCrossings(
            d_, d_.m_row[r], steps, w_,
            [&](double pa, double pp, double, double& dist, double& drop) {
                double east, north;
                metric.offsets(0, r, mc ? pa : pp, r + (mc ? pp : pa), east, north);
                dist = groundDistance(east, north);
                drop = curv.drop(east, north);
            },
            ts.crossings, ts.major_pos);
        int n = ts.major_pos[steps + 1];
        while (n > 0 && ts.crossings[n - 1].dist > reach_)
            --n;
        ts.near.assign(ts.crossings.data(), n, mc, eye_h_);
        return ts.near;
    }

    // The near field of one cell whose samples may leave the grid: in order, up to the edge.
    void nearChecked(int c, int r, const NearField& f, float& best_t, float& best_d) const {
        const float* z = dem_ + static_cast<std::size_t>(r) * w_ + c;
        const float g = z[0];
        float b = -kInfF, d = 0;
        for (int k = 0; k < f.n; ++k) {
            const int c1 = c + f.dc1[k], r1 = r + f.dr1[k], c2 = c + f.dc2[k], r2 = r + f.dr2[k];
            if (c1 < 0 || c1 >= w_ || r1 < 0 || r1 >= h_ || c2 < 0 || c2 >= w_ || r2 < 0 ||
                r2 >= h_)
                break;  // the ray has left the grid
            const float a = z[f.off1[k]], cc = z[f.off2[k]];
            const float t = ((a - g) + f.w[k] * (cc - a) - f.hd[k]) * f.inv[k];
            if (t > b)
                b = t, d = f.dist[k];
        }
        best_t = b, best_d = d;
    }

    void nearRow(float* best_t, float* best_d, int c0, int r, int tw, TileScratch& ts) const {
        const NearField& f = d_.geographic ? geographicNear(r, ts) : d_.near;
        const float* zrow = dem_ + static_cast<std::size_t>(r) * w_;
        // The cells whose whole near field lies inside the grid go through the vector kernel.
        int v_lo = c0, v_hi = c0;
        if (r + f.dr_min >= 0 && r + f.dr_max <= h_ - 1) {
            v_lo = std::max(c0, -f.dc_min);
            v_hi = std::min(c0 + tw, w_ - f.dc_max);
            if (v_hi < v_lo)
                v_lo = v_hi = c0;
        }
        if (v_hi > v_lo)
            kernels_.near(zrow + v_lo, v_hi - v_lo, f, best_t + (v_lo - c0), best_d + (v_lo - c0));
        for (int c = c0; c < c0 + tw; ++c) {
            if (c == v_lo && v_hi > v_lo)
                c = v_hi;
            if (c >= c0 + tw)
                break;
            nearChecked(c, r, f, best_t[c - c0], best_d[c - c0]);
        }
        for (int i = 0; i < tw; ++i) {
            if (std::isnan(zrow[c0 + i]))
                best_t[i] = kNaNf;
        }
    }

    void finishRow(float* angle, float* distance, int c0, int r, int tw, TileScratch& ts) const {
        for (int i = 0; i < tw; ++i) {
            const double t = angle[i];  // the best tangent (−∞: none; NaN: no data)
            const bool found = t > -kInf;
            distance[i] = found ? distance[i] : kNaNf;
            ts.t[i] = found ? t : kNaN;
        }
        kernels_.angles(ts.t, tw, angle);
        acc_.addRun(static_cast<std::size_t>(r) * w_ + c0, tw, angle, ts.t);
    }

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

int threadIndex() {
#ifdef _OPENMP
    return omp_get_thread_num();
#else
    return 0;
#endif
}

struct TileInfo {
    int id;
    long jmin, jmax;  // the lines that answer for the tile's cells
};

}  // namespace

void fastScan(const EngineInput& in, HorizonSink& sink, SummaryAccumulator& acc,
              Progress& progress) {
    const int w = in.dem.width(), h = in.dem.height();
    const int n_dir = in.options.directions;
    const bool rectangles = sink.wantsRectangles();
    const Kernels kernels = chooseKernels();
    Tiles tiles;
    tiles.ntx = (w + kTile - 1) / kTile;
    tiles.nty = (h + kTile - 1) / kTile;
    tiles.ptr.assign(static_cast<std::size_t>(tiles.ntx) * tiles.nty, nullptr);
    int threads = 1;
#ifdef _OPENMP
    threads = omp_get_max_threads();
#endif
    std::vector<Scratch> scratch(threads);
    for (auto& s : scratch)
        s.reserve(std::max(w, h) + 1);
    std::vector<std::unique_ptr<TileScratch>> tile_scratch;
    for (int t = 0; t < threads; ++t)
        tile_scratch.emplace_back(new TileScratch);
    constexpr std::int64_t kPerDirection = 1000;
    progress.begin("horizon", n_dir * kPerDirection);
    Direction d;
    std::vector<TileInfo> by_start, by_end, ready, fresh;

    for (int i = 0; i < n_dir; ++i) {
        setUp(in, i, d);
        sink.beginDirection(i, d.azimuth_deg);
        // The lines that answer for each tile's cells: the lower and upper lines of its cells
        // (x_a is monotone: the extremes are at the tile's ends).
        by_start.clear();
        for (int ty = 0; ty < tiles.nty; ++ty) {
            for (int tx = 0; tx < tiles.ntx; ++tx) {
                const int c0 = tx * kTile, c1 = std::min(w, c0 + kTile) - 1;
                const int r0 = ty * kTile, r1 = std::min(h, r0 + kTile) - 1;
                const int a0 = d.major_cols ? c0 : r0, a1 = d.major_cols ? c1 : r1;
                const int p0 = d.major_cols ? r0 : c0, p1 = d.major_cols ? r1 : c1;
                const int x_max = std::max(d.xi[a0], d.xi[a1]);
                const int x_min = std::min(d.xi[a0], d.xi[a1]);
                by_start.push_back({ty * tiles.ntx + tx, p0 - x_max, p1 - x_min + 1});
            }
        }
        by_end = by_start;
        std::sort(by_start.begin(), by_start.end(),
                  [](const TileInfo& x, const TileInfo& y) { return x.jmin < y.jmin; });
        std::sort(by_end.begin(), by_end.end(), [](const TileInfo& x, const TileInfo& y) {
            return x.jmax < y.jmax || (x.jmax == y.jmax && x.id < y.id);
        });
        std::size_t next_start = 0, next_end = 0;
        const LineWorker lines(in, d, tiles);
        const TileWorker finisher(in, d, acc, kernels);
        const long span = d.jmax - d.jmin + 1;
        const long batch_lines = static_cast<long>(kGroupLines) * kBatchGroups;
        // The tiles that the lines of the batch ending at line j1 reach first: taken into
        // `fresh`, their near field still to be sampled.
        auto acquireFor = [&](long j1) {
            fresh.clear();
            const bool last = j1 >= d.jmax;
            while (next_start < by_start.size() && (by_start[next_start].jmin <= j1 || last)) {
                tiles.ptr[by_start[next_start].id] = tiles.acquire();
                fresh.push_back(by_start[next_start]);
                ++next_start;
            }
        };
        auto tileWork = [&](const TileInfo& info, bool near) {
            const int c0 = (info.id % tiles.ntx) * kTile, r0 = (info.id / tiles.ntx) * kTile;
            const int tw = std::min(kTile, w - c0), th = std::min(kTile, h - r0);
            TileScratch& ts = *tile_scratch[threadIndex()];
            if (near)
                finisher.near(tiles.ptr[info.id], c0, r0, tw, th, ts);
            else
                finisher.finish(tiles.ptr[info.id], c0, r0, tw, th, ts);
        };
        // The near field of the first batch's tiles.
        acquireFor(std::min(d.jmin + batch_lines - 1, d.jmax));
        ParallelForOptions loop;
        loop.report = false;  // progress counts lines, below
        parallelFor(static_cast<std::int64_t>(fresh.size()), progress,
                    [&](std::int64_t item) { tileWork(fresh[item], true); }, loop);
        // One parallel loop a batch: the line groups of this batch, the tiles that the previous
        // batch completed (no line of this batch touches them) and the near field of the tiles
        // the next batch reaches first, so the threads meet once a batch and the tiles fill the
        // gaps the lines leave.
        ready.clear();
        for (long j0 = d.jmin;; j0 += batch_lines) {
            const bool more_lines = j0 <= d.jmax;
            const long j1 = more_lines ? std::min(j0 + batch_lines - 1, d.jmax) : j0 - 1;
            const bool last = j1 >= d.jmax;
            if (more_lines && !last)
                acquireFor(std::min(j1 + batch_lines, d.jmax));
            else
                fresh.clear();
            const int groups = more_lines ? static_cast<int>((j1 - j0) / kGroupLines + 1) : 0;
            const int n_ready = static_cast<int>(ready.size());
            const int n_fresh = static_cast<int>(fresh.size());
            parallelFor(
                groups + n_ready + n_fresh, progress,
                [&](std::int64_t item) {
                    if (item < groups) {
                        lines.run(j0 + static_cast<long>(item) * kGroupLines, j1,
                                  scratch[threadIndex()]);
                    } else if (item < groups + n_ready) {
                        tileWork(ready[item - groups], false);
                    } else {
                        tileWork(fresh[item - groups - n_ready], true);
                    }
                },
                loop);
            for (const TileInfo& info : ready) {
                const int c0 = (info.id % tiles.ntx) * kTile, r0 = (info.id / tiles.ntx) * kTile;
                const float* buf = tiles.ptr[info.id];
                if (rectangles) {
                    sink.rectangle(i, c0, r0, std::min(kTile, w - c0), std::min(kTile, h - r0),
                                   kTile, buf, buf + kTileCells);
                }
                tiles.release(info.id);
            }
            ready.clear();
            if (!more_lines)
                break;
            while (next_end < by_end.size() && (by_end[next_end].jmax <= j1 || last)) {
                ready.push_back(by_end[next_end]);
                ++next_end;
            }
            throwIfCancelled(progress);
            const long done_lines = std::min(span, j1 - d.jmin + 1);
            progress.advance(i * kPerDirection +
                             (span > 0 ? done_lines * kPerDirection / span : kPerDirection));
        }
        sink.endDirection(i);
    }
    progress.end();
}

}  // namespace lookfar::horizon_detail
