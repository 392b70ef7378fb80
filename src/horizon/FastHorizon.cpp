// The fast horizon engine: upper convex hulls swept along parallel scan lines find where the
// horizon of each cell lies; the cell's own ray is then sampled exactly there.
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
// Cells between lines. Lines are one minor step apart, so a cell lies between two lines, a fraction
// g_a of the way from the lower one to the upper one; both answer for it, with the eye at the
// cell's own height and major position. Their answers are where the horizon lies, not its angle:
// a line passes up to one cell beside the cell's own ray, and on rough terrain that lateral offset
// changes the angle of nearby samples a lot. The angle is therefore taken from the cell's own ray,
// sampled exactly as the reference engine samples it (its column and row crossings, linearly
// interpolated): over the first K major steps, and within ± r steps of each line's tangent point.
// The result is the largest of those exact samples: never above the reference, equal to it when
// the reference's horizon sample lies in the near field or beside a line's tangent point (the
// tests measure how often). The lines enter the hull K + 1 steps late, so that their candidates
// lie beyond the near field.
//
// No data. A direction has data when an exact sample with data lies inside the grid within reach.
//
// Output is assembled in tiles of cells handed to the sink as soon as every line that touches
// them is done: only a band of tiles along the current lines is in memory, whatever N.
//
// Geographic grids: the lines' direction in cell space uses the cell aspect of the middle row and
// their distance adds up the ground length of each step at its own row; the exact samples of a
// cell's ray use the aspect of the cell's own row and the engines' fast distance (GridMetric), as
// the reference does; the curvature uses one latitude for the whole grid.
#include <algorithm>
#include <cmath>
#include <limits>
#include <memory>
#include <vector>

#ifdef _OPENMP
#include <omp.h>
#endif

#include "HorizonInternal.hpp"
#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Units.hpp"

namespace lookfar::horizon_detail {

namespace {

constexpr int kTileShift = 7;           // 128: the GeoTIFF block of the horizon rasters
constexpr int kTile = 1 << kTileShift;  // output tile side, cells
constexpr int kTileCells = kTile * kTile;
constexpr int kGroupLines = 16;  // lines whose cells are finished together
constexpr int kBatchGroups = 4;  // groups between two tile flushes
constexpr double kInf = std::numeric_limits<double>::infinity();
constexpr float kNaNf = std::numeric_limits<float>::quiet_NaN();
constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

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
    std::vector<double> step_table;  // geographic: metres per major step of the lines, by row
    std::vector<double> m_row;       // geographic: minor per major step of a cell's own ray, by row
    long jmin = 0, jmax = -1;
    // Projected grids: where a cell's ray crosses the lines of the grid, as offsets from the cell.
    std::vector<int> major_dp;    // major crossing t: floor of the minor offset
    std::vector<double> major_f;  //   and its fraction
    std::vector<double> minor_t;  // minor crossing u: major steps to it (NaN: on a major one)
    std::vector<int> minor_da;    //   floor of the major offset
    std::vector<double> minor_f;  //   and its fraction
    // Projected grids: every crossing of a cell's ray, sorted by distance, as offsets into the
    // DEM's cell array; major_pos[t] is where major crossing t sits in the list.
    struct Crossing {
        std::ptrdiff_t off1, off2;  // the two cells interpolated (equal when w = 0)
        double w;                   // weight of the second cell
        double dist, drop;          // metres
        double inv_dist;            // 1/m
        int da1, dp1, da2, dp2;     // the cells as (major, minor) offsets, for edge checks
    };
    std::vector<Crossing> crossings;
    std::vector<int> major_pos;
    std::vector<int> ext_a, ext_p;  // largest |offset| + 1 among crossings[0 … i]
};

/// Fills `d` for direction `index`, reusing its vectors (no allocation after the first
/// directions, so memory does not creep up with N).
void setUp(const EngineInput& in, int index, Direction& d) {
    d.crossings.clear();
    d.ext_a.clear();
    d.ext_p.clear();
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
        d.major_dp.resize(d.A + 1);
        d.major_f.resize(d.A + 1);
        for (int t = 0; t <= d.A; ++t)
            snapFraction(d.sign * d.m * t, d.major_dp[t], d.major_f[t]);
        const double am = std::fabs(d.m);
        const int u_max = am > 0 ? static_cast<int>(am * d.A) + 2 : 0;
        d.minor_t.resize(u_max + 1);
        d.minor_da.resize(u_max + 1);
        d.minor_f.resize(u_max + 1);
        for (int u = 1; u <= u_max; ++u) {
            const double tu = u / am;
            d.minor_t[u] = std::fabs(tu - std::round(tu)) < 1e-9 ? kNaN : tu;
            snapFraction(d.sign * tu, d.minor_da[u], d.minor_f[u]);
        }
        // The merged list of crossings: majors t = 1 … A + 1 and the minors between them.
        const std::ptrdiff_t stride_a = d.major_cols ? 1 : w, stride_p = d.major_cols ? w : 1;
        const int sigma = d.sign * d.m > 0 ? 1 : -1;
        auto push = [&](int da1, int dp1, int da2, int dp2, double wt, double t) {
            Direction::Crossing x;
            x.da1 = da1, x.dp1 = dp1;
            x.da2 = wt > 0 ? da2 : da1, x.dp2 = wt > 0 ? dp2 : dp1;
            x.off1 = da1 * stride_a + dp1 * stride_p;
            x.off2 = x.da2 * stride_a + x.dp2 * stride_p;
            x.w = wt;
            x.dist = t * d.step_m;
            x.drop = d.c * x.dist * x.dist;
            x.inv_dist = 1.0 / x.dist;
            d.crossings.push_back(x);
        };
        d.major_pos.assign(d.A + 2, -1);
        int u = 1;
        for (int t = 1; t <= d.A + 1; ++t) {
            for (; u <= u_max && (std::isnan(d.minor_t[u]) || d.minor_t[u] < t); ++u) {
                if (std::isnan(d.minor_t[u]))
                    continue;
                push(d.minor_da[u], sigma * u, d.minor_da[u] + 1, sigma * u, d.minor_f[u],
                     d.minor_t[u]);
            }
            d.major_pos[t] = static_cast<int>(d.crossings.size());
            push(d.sign * t, d.major_dp[t], d.sign * t, d.major_dp[t] + 1, d.major_f[t], t);
        }
        int ea = 0, ep = 0;
        for (const auto& x : d.crossings) {
            ea = std::max({ea, std::abs(x.da1) + 1, std::abs(x.da2) + 1});
            ep = std::max({ep, std::abs(x.dp1) + 1, std::abs(x.dp2) + 1});
            d.ext_a.push_back(ea);
            d.ext_p.push_back(ep);
        }
    }
    const int x_first = d.xi.front(), x_last = d.xi.back();
    d.jmin = -static_cast<long>(std::max(x_first, x_last));
    d.jmax = d.B - 1 - static_cast<long>(std::min(x_first, x_last));
}

/// atan in degrees: range reduction to |u| ≤ tan(π/8) and a polynomial in u² fitted to atan on
/// that interval (Chebyshev least squares, degree 7; error below 3e-13 rad against std::atan).
inline double atanDeg(double t) {
    constexpr double kTanPi8 = 0.41421356237309503;
    const double x = std::fabs(t);
    double u, base;
    if (x <= kTanPi8) {
        u = x, base = 0;
    } else if (x <= 1.0) {
        u = (x - 1.0) / (x + 1.0), base = 0.25 * kPi;
    } else if (x <= 1.0 / kTanPi8) {
        u = (x - 1.0) / (x + 1.0), base = 0.25 * kPi;
    } else {
        u = -1.0 / x, base = 0.5 * kPi;
    }
    const double s = u * u;
    double p = -0.037697460562491736;
    p = p * s + 0.06976773623678606;
    p = p * s - 0.0899316888954491;
    p = p * s + 0.11103530043504077;
    p = p * s - 0.14285391020501872;
    p = p * s + 0.1999999318399042;
    p = p * s - 0.33333333278365695;
    p = p * s + 0.9999999999993244;
    const double r = (base + u * p) * kRadToDeg;
    return t < 0 ? -r : r;
}

/// Output tiles (angle and distance per cell) waiting for their last line.
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
        std::fill(b, b + 2 * kTileCells, kNaNf);
        return b;
    }
    void release(int id) {
        pool.push_back(ptr[id]);
        ptr[id] = nullptr;
    }
    void put(int col, int row, float angle, float dist) {
        float* b = ptr[(row >> kTileShift) * ntx + (col >> kTileShift)];
        const int off = ((row & (kTile - 1)) << kTileShift) | (col & (kTile - 1));
        b[off] = angle;
        b[kTileCells + off] = dist;
    }
};

/// One line of a group: its samples from the far end (k = 0) to the near end.
struct LineBuf {
    long j = 0;
    int a_lo = 0, a_hi = -1, n = 0;
    double* Z = nullptr;     // folded heights (NaN = no data); raw heights until folded
    double* S = nullptr;     // geographic: coordinate along the line, metres
    float* g_up = nullptr;   // ground of the cell on the line's upper side (minor q)
    float* g_dn = nullptr;   // ground of the cell on its lower side (q − 1; NaN when g_a = 0)
    int* cand_up = nullptr;  // tangent point (major steps from the eye) for the upper-side cell
    int* cand_dn = nullptr;  // … for the lower-side cell (−1: none)
    int k(int a, int sign) const { return sign > 0 ? a_hi - a : a - a_lo; }
    bool has(int a) const { return a >= a_lo && a <= a_hi; }
};

/// A hull vertex: a sample's coordinate along the line, its folded height and its index.
struct Vertex {
    double s, z;
    int k;
};

/// A thread's scratch buffers.
struct Scratch {
    std::vector<double> z, s;
    std::vector<float> gu, gd;
    std::vector<int> up, dn;
    std::vector<Vertex> back, front, grave;
    std::vector<int> record;
    LineBuf lines[kGroupLines + 1];
    void reserve(int len) {
        const std::size_t n = static_cast<std::size_t>(len) * (kGroupLines + 1);
        if (z.size() < n) {
            z.resize(n), s.resize(n), gu.resize(n), gd.resize(n), up.resize(n), dn.resize(n);
            back.resize(len + 1), front.resize(len + 1), grave.resize(len + 1);
            record.resize(len + 1);
        }
        for (int i = 0; i <= kGroupLines; ++i) {
            const std::size_t off = static_cast<std::size_t>(i) * len;
            lines[i].Z = z.data() + off;
            lines[i].S = s.data() + off;
            lines[i].g_up = gu.data() + off;
            lines[i].g_dn = gd.data() + off;
            lines[i].cand_up = up.data() + off;
            lines[i].cand_dn = dn.data() + off;
        }
    }
};

/// First position (counted from the nearest vertex, 0) at which moving one vertex farther stops
/// raising the slope, known to be at or beyond `start`; `improves(i)` is true below the peak and
/// false from it on.
template <typename Improves>
inline int peakFrom(int count, int start, Improves improves) {
    if (start >= count - 1 || !improves(start))
        return start;
    int good = start, bad = count - 1, step = 1;
    for (;;) {
        int p = good + step;
        if (p >= count - 1)
            break;
        if (!improves(p)) {
            bad = p;
            break;
        }
        good = p;
        step <<= 1;
    }
    while (bad - good > 1) {
        int mid = (good + bad) >> 1;
        if (improves(mid))
            good = mid;
        else
            bad = mid;
    }
    return bad;
}

class GroupWorker {
  public:
    GroupWorker(const EngineInput& in, const Direction& d, Tiles* tiles, SummaryAccumulator& acc)
        : in_(in),
          d_(d),
          tiles_(tiles),
          acc_(acc),
          dem_(in.dem.data()),
          w_(in.dem.width()),
          eye_h_(in.options.observer_height_m),
          reach_(in.options.reach_m),
          limited_(std::isfinite(in.options.reach_m)),
          k_exact_(in.options.exact_steps),
          refine_(in.options.refine_steps) {}

    /// Finishes the cells whose lower line is j0 … j0 + kGroupLines − 1.
    void run(long j0, Scratch& sc) const {
        int u_lo = d_.A, u_hi = -1;  // union of the lines' ranges
        for (int i = 0; i <= kGroupLines; ++i) {
            LineBuf& L = sc.lines[i];
            L.j = j0 + i;
            if (!validRange(L.j, L.a_lo, L.a_hi)) {
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
        for (int i = 0; i <= kGroupLines; ++i)
            sweep(sc.lines[i], sc.lines[i].cand_up, sc.lines[i].cand_dn, sc);
        finish(sc, j0, u_lo, u_hi);
    }

  private:
    float ground(int a, int p) const {
        return d_.major_cols ? dem_[static_cast<std::size_t>(p) * w_ + a]
                             : dem_[static_cast<std::size_t>(a) * w_ + p];
    }

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
    // neighbouring cells, so the DEM is read in cache-friendly runs whatever the direction).
    void gather(Scratch& sc, int u_lo, int u_hi) const {
        for (int a = u_lo; a <= u_hi; ++a) {
            const double g = d_.gx[a];
            const int xa = d_.xi[a];
            for (int i = 0; i <= kGroupLines; ++i) {
                LineBuf& L = sc.lines[i];
                if (!L.has(a))
                    continue;
                const int q = static_cast<int>(L.j + xa);
                const int k = L.k(a, d_.sign);
                const float up = ground(a, q);
                if (g > 0) {
                    const float dn = ground(a, q - 1);
                    L.Z[k] = g * dn + (1 - g) * up;
                    L.g_dn[k] = dn;
                } else {
                    L.Z[k] = up;
                    L.g_dn[k] = kNaNf;
                }
                L.g_up[k] = up;
            }
        }
        for (int i = 0; i <= kGroupLines; ++i) {
            LineBuf& L = sc.lines[i];
            const int a_far = d_.sign > 0 ? L.a_hi : L.a_lo;
            double s = 0;
            for (int k = 0; k < L.n; ++k) {
                if (d_.geographic) {
                    const int a = a_far - d_.sign * k;
                    if (k > 0)
                        s -= d_.step_table[d_.major_cols ? static_cast<int>(L.j + d_.xi[a]) : a];
                    L.S[k] = s;
                } else {
                    s = -k * d_.step_m;
                }
                L.Z[k] -= d_.c * s * s;
            }
        }
    }

    // Coordinates of the hull: index space on projected grids (S = −k·step, the step cancels in
    // every comparison), metres on geographic ones.
    void sweep(const LineBuf& L, int* cand_up, int* cand_dn, Scratch& sc) const {
        if (L.n == 0)
            return;
        if (d_.geographic)
            sweepT<true>(L, cand_up, cand_dn, sc);
        else
            sweepT<false>(L, cand_up, cand_dn, sc);
    }

    template <bool kGeo>
    void sweepT(const LineBuf& L, int* cand_up, int* cand_dn, Scratch& sc) const {
        const int n = L.n;
        const double* Z = L.Z;
        const double* S = L.S;
        auto pos = [&](int k) { return kGeo ? S[k] : -static_cast<double>(k); };
        Vertex* back = sc.back.data();
        Vertex* front = sc.front.data();
        Vertex* grave = sc.grave.data();
        int* record = sc.record.data();
        int nb = 0, nf = 0, ng = 0, nr = 0;
        int back_start = 0, front_lo = 0, front_hi = -1, pushed = -1, lo = 0;
        const int lag = k_exact_ + 1;
        const double reach_idx = kGeo ? reach_ : reach_ / d_.step_m;  // in pos() units

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
        for (int k = 0; k < n; ++k) {
            cand_up[k] = cand_dn[k] = -1;
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
                while (lo <= pushed && pos(lo) - pos(k) > reach_idx) {
                    popFarthest();
                    ++lo;
                }
            }
            if (nf == 0 && nb == 0)
                continue;
            const double sE = pos(k);
            const double fold = d_.c * (kGeo ? sE * sE : (k * d_.step_m) * (k * d_.step_m));
            // The cells on the line's upper and lower sides (no data for the lower one when the
            // line passes through cell centres), the lower eye first: a higher eye at the same
            // place touches the hull at or beyond the lower one's tangent point, so its search
            // starts there.
            const float gu = g_up[k], gd = g_dn[k];
            const bool has_u = !std::isnan(gu), has_d = !std::isnan(gd);
            int pf = 0, pb = 0;
            if (has_u && has_d) {
                const bool up_low = gu <= gd;
                const int v1 =
                    tangent(front, nf, back, nb, sE, (up_low ? gu : gd) + eye_h_ - fold, pf, pb);
                const int v2 =
                    tangent(front, nf, back, nb, sE, (up_low ? gd : gu) + eye_h_ - fold, pf, pb);
                cand_up[k] = k - (up_low ? v1 : v2);
                cand_dn[k] = k - (up_low ? v2 : v1);
            } else if (has_u) {
                cand_up[k] = k - tangent(front, nf, back, nb, sE, gu + eye_h_ - fold, pf, pb);
            } else if (has_d) {
                cand_dn[k] = k - tangent(front, nf, back, nb, sE, gd + eye_h_ - fold, pf, pb);
            }
        }
    }

    // The tangent point (sample index) from the eye (sE, zE) over both hulls. pf and pb are where
    // the search starts on the front and back hulls (positions counted from their nearest
    // vertex); they return where it ended.
    static inline int tangent(const Vertex* front, int nf, const Vertex* back, int nb, double sE,
                              double zE, int& pf, int& pb) {
        auto improves = [&](const Vertex& v0, const Vertex& v1) {  // v1 farther than v0
            return (v1.z - zE) * (v0.s - sE) > (v0.z - zE) * (v1.s - sE);
        };
        const Vertex* best = nullptr;
        if (nf > 0) {
            pf = peakFrom(nf, pf, [&](int i) { return improves(front[i], front[i + 1]); });
            best = &front[pf];
        }
        if (nb > 0) {
            pb = peakFrom(nb, pb,
                          [&](int i) { return improves(back[nb - 1 - i], back[nb - 2 - i]); });
            const Vertex& v = back[nb - 1 - pb];
            // Ties go to the nearer sample (the back hull's are nearer).
            if (!best || !improves(v, *best))
                best = &v;
        }
        return best->k;
    }

    /// Exact samples of the ray of the eye at (a, p): major crossings t ∈ [t0, t1] and minor
    /// crossings with t in [s0, s1), as the reference engine samples them. Keeps the largest
    /// tangent in best_t / best_d.
    struct Eye {
        int a, p;  // major and minor index of the cell
        int col, row;
        double ze;  // eye height, m
        double m;   // minor per major step of the cell's own ray
        double t = -kInf, dist = 0;
        bool found = false;
    };

    // Keeps the sample if its tangent beats the best so far; false once beyond reach.
    inline bool consider(Eye& e, double dist, double drop, double z) const {
        if (dist > reach_)
            return false;
        const double rise = z - drop - e.ze;  // NaN (no data) never wins
        if (rise > e.t * dist) {              // t > best, division only on improvement
            e.t = rise / dist;
            e.dist = dist;
            e.found = true;
        }
        return true;
    }

    template <bool kGeo>
    inline bool considerAt(Eye& e, double ta, double tp, double t_steps, double z) const {
        if (!kGeo) {
            const double dist = t_steps * d_.step_m;
            return consider(e, dist, d_.c * dist * dist, z);
        }
        const double dc = d_.major_cols ? ta : tp, dr = d_.major_cols ? tp : ta;
        double east, north;
        in_.metric.offsets(e.col, e.row, e.col + dc, e.row + dr, east, north);
        return consider(e, std::hypot(east, north), in_.curvature.drop(east, north), z);
    }

    void exactSamples(Eye& e, int t0, int t1, double s0, double s1) const {
        if (d_.geographic)
            exactSamplesT<true>(e, t0, t1, s0, s1);
        else
            exactSamplesT<false>(e, t0, t1, s0, s1);
    }

    template <bool kGeo>
    void exactSamplesT(Eye& e, int t0, int t1, double s0, double s1) const {
        const int A = d_.A, B = d_.B, sign = d_.sign;
        for (int t = t0; t <= t1; ++t) {
            const int a1 = e.a + sign * t;
            if (a1 < 0 || a1 >= A)
                break;
            int dp;
            double f;
            if (kGeo)
                snapFraction(sign * e.m * t, dp, f);
            else
                dp = d_.major_dp[t], f = d_.major_f[t];
            const int p1 = e.p + dp;
            if (p1 < 0 || p1 >= B || (f > 0 && p1 + 1 >= B))
                break;
            const double z =
                f > 0 ? (1 - f) * ground(a1, p1) + f * ground(a1, p1 + 1) : ground(a1, p1);
            if (!considerAt<kGeo>(e, sign * t, dp + f, t, z))
                break;
        }
        if (e.m == 0.0)
            return;
        const double am = std::fabs(e.m);
        const int sigma = sign * e.m > 0 ? 1 : -1;
        const int u_end = kGeo ? 0 : static_cast<int>(d_.minor_t.size());
        for (int u = std::max(1, ceilInt(s0 * am - 1e-12));; ++u) {
            double tu;
            int da;
            double f;
            if (kGeo) {
                tu = u / am;
                if (std::fabs(tu - std::round(tu)) < 1e-9) {
                    if (!(tu < s1))
                        break;
                    continue;  // the same point as a major crossing
                }
                snapFraction(sign * tu, da, f);
            } else {
                if (u >= u_end)
                    break;
                tu = d_.minor_t[u];
                if (std::isnan(tu)) {
                    if (!(u / am < s1))
                        break;
                    continue;
                }
                da = d_.minor_da[u], f = d_.minor_f[u];
            }
            if (!(tu < s1))
                break;
            if (tu < s0)
                continue;
            const int p1 = e.p + sigma * u;
            if (p1 < 0 || p1 >= B)
                break;
            const int a1 = e.a + da;
            if (a1 < 0 || a1 >= A || (f > 0 && a1 + 1 >= A))
                break;
            const double z =
                f > 0 ? (1 - f) * ground(a1, p1) + f * ground(a1 + 1, p1) : ground(a1, p1);
            if (!considerAt<kGeo>(e, da + f, sigma * u, tu, z))
                break;
        }
    }

    // Projected grids: crossings[i0 … i1] of the eye's ray (kChecked: the ray may leave the grid
    // or the reach on the way).
    template <bool kChecked>
    inline void crossingRange(Eye& e, int i0, int i1) const {
        const auto* x = d_.crossings.data();
        const float* z = dem_ + static_cast<std::ptrdiff_t>(e.row) * w_ + e.col;
        double best_t = e.t, best_d = e.dist;
        for (int i = i0; i <= i1; ++i) {
            const auto& c = x[i];
            if (kChecked) {
                if (c.dist > reach_)
                    break;
                const int a1 = e.a + c.da1, p1 = e.p + c.dp1;
                const int a2 = e.a + c.da2, p2 = e.p + c.dp2;
                if (a1 < 0 || a1 >= d_.A || p1 < 0 || p1 >= d_.B || a2 < 0 || a2 >= d_.A ||
                    p2 < 0 || p2 >= d_.B)
                    break;  // the ray has left the grid
            }
            const double zs = (1 - c.w) * z[c.off1] + c.w * z[c.off2];
            const double t = (zs - c.drop - e.ze) * c.inv_dist;  // NaN (no data) never wins
            const bool better = t > best_t;
            best_t = better ? t : best_t;
            best_d = better ? c.dist : best_d;
        }
        e.t = best_t;
        e.dist = best_d;
    }

    void finishCell(Eye& e, int c_up, int c_dn) const {
        if (!d_.geographic) {
            finishCellProjected(e, c_up, c_dn);
            return;
        }
        // Near field: the first K major steps and the minor crossings before step K + 1.
        if (k_exact_ > 0)
            exactSamples(e, 1, k_exact_, 0.0, k_exact_ + 1.0);
        // Around the candidates (merged when their windows overlap).
        int w0[2], w1[2], nw = 0;
        for (int c : {c_up, c_dn}) {
            if (c < 0)
                continue;
            int lo = std::max(k_exact_ + 1, c - refine_), hi = c + refine_;
            if (nw == 1 && lo <= w1[0] + 1 && hi >= w0[0] - 1) {
                w0[0] = std::min(w0[0], lo), w1[0] = std::max(w1[0], hi);
            } else {
                w0[nw] = lo, w1[nw] = hi, ++nw;
            }
        }
        for (int i = 0; i < nw; ++i) {
            exactSamples(e, w0[i], w1[i], std::max<double>(w0[i] - 1, k_exact_ + 1), w1[i] + 1.0);
        }
    }

    void finishCellProjected(Eye& e, int c_up, int c_dn) const {
        const int* mp = d_.major_pos.data();
        // Index ranges of the crossings to sample: the near field (the first K major steps and
        // the minors before step K + 1), then around each candidate the majors c − r … c + r and
        // the minors between majors c − r − 1 and c + r + 1; overlapping ranges are merged.
        int lo[3], hi[3], nr = 0;
        lo[0] = 0, hi[0] = mp[k_exact_ + 1] - 1;
        nr = hi[0] >= 0 ? 1 : 0;
        const int near_end = mp[k_exact_ + 1];
        int cands[2] = {std::min(c_up, c_dn), std::max(c_up, c_dn)};
        if (cands[0] < 0)
            cands[0] = cands[1], cands[1] = -1;
        for (int c : cands) {
            if (c < 0)
                continue;
            const int l = std::max(near_end, mp[std::max(c - refine_ - 1, 0)] + 1);
            const int h = mp[std::min(c + refine_ + 1, d_.A + 1)] - 1;
            if (l > h)
                continue;
            if (nr > 0 && l <= hi[nr - 1] + 1) {
                hi[nr - 1] = std::max(hi[nr - 1], h);
            } else {
                lo[nr] = l, hi[nr] = h, ++nr;
            }
        }
        if (nr == 0)
            return;
        // One edge test for the whole cell: when every crossing it samples stays inside the grid
        // (and the reach is unlimited) the inner loop needs no checks.
        const int last = hi[nr - 1];
        const int ea = d_.ext_a[last], ep = d_.ext_p[last];
        const bool inside =
            !limited_ && e.a >= ea && e.a + ea < d_.A && e.p >= ep && e.p + ep < d_.B;
        for (int i = 0; i < nr; ++i) {
            if (inside)
                crossingRange<false>(e, lo[i], hi[i]);
            else
                crossingRange<true>(e, lo[i], hi[i]);
        }
        e.found = e.t > -kInf;
    }

    // The cells of the group, major index by major index: the cells of one major index are
    // neighbours in memory or in neighbouring rows, so the summary grids and the tiles are
    // written in runs.
    void finish(const Scratch& sc, long j0, int u_lo, int u_hi) const {
        const int B = d_.B, sign = d_.sign;
        for (int a = u_lo; a <= u_hi; ++a) {
            const int xa = d_.xi[a];
            const bool g_pos = d_.gx[a] > 0;
            for (int i = 0; i < kGroupLines; ++i) {
                const int q = static_cast<int>(j0 + i + xa);
                if (q < 0 || q >= B)
                    continue;
                const LineBuf& L = sc.lines[i];  // the cell's lower line
                const LineBuf& H = sc.lines[i + 1];
                int c_up = -1, c_dn = -1;
                float gr;
                if (L.has(a)) {
                    const int k = L.k(a, sign);
                    c_up = L.cand_up[k];
                    gr = L.g_up[k];
                } else {
                    gr = ground(a, q);
                }
                if (std::isnan(gr))
                    continue;
                if (g_pos && H.has(a))
                    c_dn = H.cand_dn[H.k(a, sign)];
                Eye e;
                e.a = a, e.p = q;
                e.col = d_.major_cols ? a : q;
                e.row = d_.major_cols ? q : a;
                e.ze = gr + eye_h_;
                e.m = d_.geographic ? d_.m_row[e.row] : d_.m;
                finishCell(e, c_up, c_dn);
                if (!e.found)
                    continue;
                const float angle = static_cast<float>(atanDeg(e.t));
                acc_.add(static_cast<std::size_t>(e.row) * w_ + e.col, angle, e.t);
                if (tiles_)
                    tiles_->put(e.col, e.row, angle, static_cast<float>(e.dist));
            }
        }
    }

    const EngineInput& in_;
    const Direction& d_;
    Tiles* tiles_;
    SummaryAccumulator& acc_;
    const float* dem_;
    int w_;
    double eye_h_;
    double reach_;
    bool limited_;
    int k_exact_;
    int refine_;
};

struct TileInfo {
    int id;
    long jmin, jmax;  // lower lines of the tile's cells
};

}  // namespace

void fastScan(const EngineInput& in, HorizonSink& sink, SummaryAccumulator& acc,
              Progress& progress) {
    const int w = in.dem.width(), h = in.dem.height();
    const int n_dir = in.options.directions;
    const bool rectangles = sink.wantsRectangles();
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
    constexpr std::int64_t kPerDirection = 1000;
    progress.begin("horizon", n_dir * kPerDirection);
    Direction d;
    std::vector<TileInfo> by_start, by_end, ready;

    for (int i = 0; i < n_dir; ++i) {
        setUp(in, i, d);
        sink.beginDirection(i, d.azimuth_deg);
        // The lower lines of each tile's cells (x_a is monotone: extremes at the tile's ends).
        by_start.clear();
        by_end.clear();
        if (rectangles) {
            for (int ty = 0; ty < tiles.nty; ++ty) {
                for (int tx = 0; tx < tiles.ntx; ++tx) {
                    const int c0 = tx * kTile, c1 = std::min(w, c0 + kTile) - 1;
                    const int r0 = ty * kTile, r1 = std::min(h, r0 + kTile) - 1;
                    const int a0 = d.major_cols ? c0 : r0, a1 = d.major_cols ? c1 : r1;
                    const int p0 = d.major_cols ? r0 : c0, p1 = d.major_cols ? r1 : c1;
                    const int x_max = std::max(d.xi[a0], d.xi[a1]);
                    const int x_min = std::min(d.xi[a0], d.xi[a1]);
                    by_start.push_back({ty * tiles.ntx + tx, p0 - x_max, p1 - x_min});
                }
            }
            by_end = by_start;
            std::sort(by_start.begin(), by_start.end(),
                      [](const TileInfo& x, const TileInfo& y) { return x.jmin < y.jmin; });
            std::sort(by_end.begin(), by_end.end(), [](const TileInfo& x, const TileInfo& y) {
                return x.jmax < y.jmax || (x.jmax == y.jmax && x.id < y.id);
            });
        }
        std::size_t next_start = 0, next_end = 0;
        const GroupWorker worker(in, d, rectangles ? &tiles : nullptr, acc);
        const long span = d.jmax - d.jmin + 1;
        const long batch_lines = static_cast<long>(kGroupLines) * kBatchGroups;
        for (long j0 = d.jmin; j0 <= d.jmax; j0 += batch_lines) {
            const long j1 = std::min(j0 + batch_lines - 1, d.jmax);
            const bool last = j1 == d.jmax;
            while (next_start < by_start.size() && (by_start[next_start].jmin <= j1 || last)) {
                tiles.ptr[by_start[next_start].id] = tiles.acquire();
                ++next_start;
            }
            const int groups = static_cast<int>((j1 - j0) / kGroupLines + 1);
#pragma omp parallel for schedule(dynamic, 1)
            for (int gi = 0; gi < groups; ++gi) {
                int t = 0;
#ifdef _OPENMP
                t = omp_get_thread_num();
#endif
                worker.run(j0 + static_cast<long>(gi) * kGroupLines, scratch[t]);
            }
            ready.clear();
            while (next_end < by_end.size() && (by_end[next_end].jmax <= j1 || last)) {
                ready.push_back(by_end[next_end]);
                ++next_end;
            }
            for (const TileInfo& t : ready) {
                const int tx = t.id % tiles.ntx, ty = t.id / tiles.ntx;
                const int c0 = tx * kTile, r0 = ty * kTile;
                const float* buf = tiles.ptr[t.id];
                sink.rectangle(i, c0, r0, std::min(kTile, w - c0), std::min(kTile, h - r0), kTile,
                               buf, buf + kTileCells);
                tiles.release(t.id);
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
