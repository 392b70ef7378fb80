// The fast viewshed engine: a wedge-tree propagation of interval bounds with exact re-checks.
//
// Family and error behaviour
//   It belongs to the family of ray-casting viewsheds that follow sightlines outward from the
//   observer to the edge of the grid and decide each cell from the ray that covers it ("R2" in
//   Franklin & Ray, "Higher isn't necessarily better: visibility algorithms and experiments",
//   1994), combined with the exact per-cell line of sight ("R3") for the cells the rays cannot
//   decide. Instead of single rays it follows wedges (ranges of directions) and carries, along
//   each wedge, an upper and a lower bound of every terrain sample that any sightline inside
//   the wedge can meet. A cell whose target point is above the upper bound of everything before
//   it is visible; below the lower bound of something before it, hidden. Only the remaining
//   cells are re-checked exactly, and the re-check evaluates only the steps whose upper bound
//   could block. The samples are evaluated with the same code as the reference rule
//   (SightlineSamples.hpp), so the verdicts, margins and angles are the reference's, bit for
//   bit: the error against the sightline rule is zero, and what varies with the terrain is only
//   the time (the share of cells that need a re-check, typically a few per cent on rough
//   terrain). The bounds are kept with a slack of 1e-5 m, far above the rounding of the
//   double-precision arithmetic, so that rounding never prunes a sample that blocks.
//
// Notation (octant coordinates)
//   The eight octants around the observer O are walked along their major axis: (a, b) are the
//   offsets of a cell from O along the major and the minor axis, 0 ≤ b ≤ a; u = b/a ∈ [0, 1] is
//   the direction of the sightline O→C. Major lines are the grid lines at a = i; minor lines
//   those at b = j.
//   step i       the part of a sightline with major coordinate x ∈ [i, i + 1): the sample on
//                major line i and at most one sample on a minor line
//   z_e          eye height, metres;  rise = z_t − Δ − z_e (SightlineRule.hpp)
//   κ            drop per major step squared, Δ/a² (metres); a sample at x has gain/a =
//                (z − z_e)/x − x·κ, so every bound is a number per step, independent of a
//   wedge        directions u ∈ [p/2^L, (p + 1)/2^L): a node of a binary tree; a node follows
//                its wedge while its width across the sightlines, i·2^−L, stays below one cell
//                (kLateralCells), then hands over to its two halves
//   hi_i, lo_i   upper bound of every sample of step i of any sightline in the wedge, and lower
//                bound of the major-line sample; H_hi, H_lo their running maxima
//   A cell (a, b) with rise > a·H_hi is visible, with rise < a·H_lo hidden; otherwise the steps
//   with a·hi_i ≥ rise are evaluated exactly, the one where H_lo was reached first.
//
// Cost: about 1.3 bound steps per cell plus the exact re-checks; memory: the output grids and
// one array of bounds per thread (a few bytes per cell of the longest sightline).
#include <algorithm>
#include <cmath>
#include <cstdint>
#include <limits>
#include <memory>
#include <vector>

#ifdef _OPENMP
#include <omp.h>
#endif

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/ParallelFor.hpp"
#include "lookfar/core/Units.hpp"
#include "lookfar/sightline/SightlineSamples.hpp"
#include "lookfar/viewshed/Viewshed.hpp"

namespace lookfar {

namespace {

constexpr double kNegInf = -std::numeric_limits<double>::infinity();
constexpr double kPosInf = std::numeric_limits<double>::infinity();
/// Width of a wedge across its sightlines, cells, before it is split (tuned with tools/bench).
constexpr double kLateralCells = 4.0;
/// Steps before a target that a re-check evaluates exactly before it trusts the bounds.
constexpr int kNearSteps = 1;
/// Steps per block of the block maxima that speed up the search for blocking steps.
constexpr int kBlock = 32;
/// Slack of the bound comparisons, metres (absolute) and relative.
constexpr double kSlackM = 1e-5;
constexpr double kSlackRel = 1e-12;
/// Tree levels shared out as parallel tasks: 2^kTaskLevel tasks per octant.
constexpr int kTaskLevel = 5;

std::int64_t ceilDiv(std::int64_t num, std::int64_t den) {
    return (num + den - 1) / den;  // num ≥ 0, den > 0
}

struct Octant {
    bool swap = false;  ///< major axis = rows
    int s_major = 1;    ///< sign of the major offset in grid coordinates
    int s_minor = 1;
    int a_lim = 0;  ///< last major offset inside the DEM
    int a_end = 0;  ///< targets have a < a_end (DEM and reach)
    int b_lim = 0;  ///< last minor offset inside the DEM and reach
    std::ptrdiff_t stride_a = 0, stride_b = 0;
    // κ(u) ∈ [k_base_min + k_u2_min·u², k_base_max + k_u2_max·u²]
    double k_base_min = 0, k_base_max = 0, k_u2_min = 0, k_u2_max = 0;
    bool own_u0 = false;  ///< decides the cells with b = 0
    bool own_u1 = false;  ///< decides the cells with b = a
};

struct Task {
    int octant = 0;
    std::int64_t q = 0;  ///< wedge [q, q + 1)/2^kTaskLevel
};

struct Scratch {
    std::vector<double> hi;         ///< hi_i per step
    std::vector<double> h_hi;       ///< max of hi over the steps up to i (H_hi after step i)
    std::vector<double> block_max;  ///< max of hi over each block of kBlock steps
};

/// Running state handed from a node to its children.
struct Prefix {
    double h_hi = kNegInf;  ///< max of hi over the finished steps
    double h_lo = kNegInf;  ///< max of lo over the finished steps
    int i_lo = 0;           ///< step where h_lo was reached
    // The last step is finished only when the next major line has been read (it holds the far
    // ends of the step's minor-line samples). What is known of it so far, elevations (m):
    double z_hi = kNegInf;  ///< max of every sample end on its major line
    double z_lo = kPosInf;  ///< min of its major-line samples
    bool nodata = true;     ///< a no-data centre may touch one of its major-line samples
};

/// What one major line contributes to the bounds (elevations, metres).
struct LineBounds {
    double near_hi;  ///< max of the major-line samples and the minor-line sample ends on it
    double z_lo;     ///< min of the major-line samples
    bool nodata;     ///< a no-data centre may touch a major-line sample
};

class FastEngine {
  public:
    FastEngine(const Grid<float>& dem, const GridGeometry& geometry, const EarthModel& earth,
               const Observer& observer, const ViewshedOptions& options, ViewshedGrids& out);
    void run(Progress& progress);

  private:
    void setUpOctants();
    void runTask(const Task& task, Scratch& scratch) const;
    // The hot path is compiled twice: for octants whose major axis is the columns
    // (Swap = false) and for those whose major axis is the rows (Swap = true).
    template <bool Swap>
    void node(const Octant& o, const Task& task, Scratch& s, int level, std::int64_t p, int i_begin,
              Prefix prefix) const;
    template <bool Swap>
    LineBounds lineBounds(const Octant& o, int i, int level, std::int64_t p, double scale) const;
    template <bool Swap>
    void decideColumn(const Octant& o, const Scratch& s, int a, std::int64_t b_lo,
                      std::int64_t b_hi, const Prefix& prefix) const;
    void decideExactly(const Octant& o, const Scratch& s, int a, int b, int col, int row,
                       double rise, double drop, std::size_t oi, const Prefix& prefix) const;
    double stepGain(const Octant& o, const SightlineSamples& ss, int a, int b, int i) const;

    const float* z_;
    std::ptrdiff_t width_;
    int height_;
    int c0_, r0_;
    int col_off_, row_off_;  // of the DEM window in the whole DEM (SightlineSamples)
    const float* z_obs_;
    double eye_m_;
    double observer_m_;  ///< observer height above its cell
    double target_m_;
    double reach_m_;
    bool finite_reach_;
    LocalFrame frame_;
    Curvature curvature_;
    bool want_margin_, want_angle_;
    bool bounds_decide_;          ///< the bounds alone may decide a cell (no margin or angle asked)
    const double* east_per_col_;  ///< frame_.east_per_col
    const double* north_of_row_;  ///< frame_.north_of_row
    bool has_nodata_;  ///< the DEM holds no-data cells (otherwise the bounds skip the checks)
    ViewshedGrids& out_;
    CellWindow win_;
    std::vector<double> inv_;  ///< 1/i
    Octant octants_[8];
    int max_a_end_ = 0;
};

FastEngine::FastEngine(const Grid<float>& dem, const GridGeometry& geometry,
                       const EarthModel& earth, const Observer& observer,
                       const ViewshedOptions& options, ViewshedGrids& out)
    : z_(dem.data()),
      width_(dem.width()),
      height_(dem.height()),
      c0_(observer.col),
      r0_(observer.row),
      col_off_(geometry.colOffset()),
      row_off_(geometry.rowOffset()),
      z_obs_(dem.data() + dem.index(observer.col, observer.row)),
      eye_m_(dem(observer.col, observer.row) + observer.height_m),
      observer_m_(observer.height_m),
      target_m_(options.target_height_m),
      reach_m_(options.reach_m),
      finite_reach_(std::isfinite(options.reach_m)),
      frame_(geometry.localFrame(observer.col, observer.row)),
      curvature_(earth.curvatureAt(observer.latitude_deg)),
      want_margin_(options.want_margin),
      want_angle_(options.want_angle),
      bounds_decide_(!options.want_margin && !options.want_angle),
      east_per_col_(frame_.east_per_col.data()),
      north_of_row_(frame_.north_of_row.data()),
      has_nodata_(std::any_of(dem.cells().begin(), dem.cells().end(),
                              [](float v) { return std::isnan(v); })),
      out_(out),
      win_(out.window) {
    setUpOctants();
    inv_.resize(static_cast<std::size_t>(max_a_end_) + 2);
    inv_[0] = kPosInf;
    for (std::size_t i = 1; i < inv_.size(); ++i)
        inv_[i] = 1.0 / static_cast<double>(i);
}

void FastEngine::setUpOctants() {
    int n = 0;
    for (int swap = 0; swap < 2; ++swap) {
        for (int s_major : {1, -1}) {
            for (int s_minor : {1, -1}) {
                Octant& o = octants_[n++];
                o.swap = swap != 0;
                o.s_major = s_major;
                o.s_minor = s_minor;
                const int cols_left = c0_, cols_right = static_cast<int>(width_) - 1 - c0_;
                const int rows_up = r0_, rows_down = height_ - 1 - r0_;
                if (!o.swap) {
                    o.a_lim = s_major > 0 ? cols_right : cols_left;
                    o.b_lim = s_minor > 0 ? rows_down : rows_up;
                    o.stride_a = s_major;
                    o.stride_b = s_minor * width_;
                } else {
                    o.a_lim = s_major > 0 ? rows_down : rows_up;
                    o.b_lim = s_minor > 0 ? cols_right : cols_left;
                    o.stride_a = s_major * width_;
                    o.stride_b = s_minor;
                }
                o.own_u0 = s_minor > 0;  // b = 0 is shared by the two octants of one major sign
                o.own_u1 = !o.swap;      // the diagonals belong to the column-major octants
                // Metres per column step (e_r) and per row step (n_r / (r − r0)) over the rows a
                // target of this octant can be on; constant on projected grids.
                const int row_step = o.swap ? s_major : s_minor;
                const int row_count = o.swap ? o.a_lim : o.b_lim;
                double e2_min = kPosInf, e2_max = 0, n2_min = kPosInf, n2_max = 0;
                double e_min = kPosInf, n_min = kPosInf;
                for (int k = 0; k <= row_count; ++k) {
                    const int r = r0_ + row_step * k;
                    const double e = std::fabs(frame_.east_per_col[r]);
                    e2_min = std::min(e2_min, e * e);
                    e2_max = std::max(e2_max, e * e);
                    e_min = std::min(e_min, e);
                    if (k > 0) {
                        const double nr = std::fabs(frame_.north(r)) / k;
                        n2_min = std::min(n2_min, nr * nr);
                        n2_max = std::max(n2_max, nr * nr);
                        n_min = std::min(n_min, nr);
                    }
                }
                if (n2_min == kPosInf)
                    n2_min = n2_max = 0, n_min = kPosInf;
                const double ce = curvature_.c_east, cn = curvature_.c_north;
                if (!o.swap) {  // κ = c_e·e_r² + c_n·(n_r/b)²·u²
                    o.k_base_min = ce * e2_min;
                    o.k_base_max = ce * e2_max;
                    o.k_u2_min = cn * n2_min;
                    o.k_u2_max = cn * n2_max;
                } else {  // κ = c_n·(n_r/a)² + c_e·e_r²·u²
                    o.k_base_min = cn * n2_min;
                    o.k_base_max = cn * n2_max;
                    o.k_u2_min = ce * e2_min;
                    o.k_u2_max = ce * e2_max;
                }
                o.a_end = o.a_lim + 1;
                if (finite_reach_) {
                    // A target a major steps away is at least a·(metres per major step) away.
                    const double major_m = o.swap ? n_min : e_min;
                    const double minor_m = o.swap ? e_min : n_min;
                    if (major_m > 0 && major_m < kPosInf) {
                        const double a_reach = std::floor(reach_m_ / major_m) + 1.0;
                        if (a_reach < o.a_end)
                            o.a_end = static_cast<int>(a_reach) + 1;
                    }
                    if (minor_m > 0 && minor_m < kPosInf) {
                        const double b_reach = std::floor(reach_m_ / minor_m) + 1.0;
                        if (b_reach < o.b_lim)
                            o.b_lim = static_cast<int>(b_reach);
                    }
                }
                max_a_end_ = std::max(max_a_end_, o.a_end);
            }
        }
    }
}

void FastEngine::run(Progress& progress) {
    // The observer's own cell: visible, margin = target height, angle ±90° (as the rule says).
    if (win_.contains(c0_, r0_)) {
        const std::size_t oi =
            static_cast<std::size_t>(r0_ - win_.row0) * win_.width + (c0_ - win_.col0);
        out_.visible.data()[oi] = kVisible;
        if (want_margin_)
            out_.margin.data()[oi] = static_cast<float>(target_m_);
        if (want_angle_) {
            double angle = target_m_ >= observer_m_ ? 90.0 : -90.0;
            if (target_m_ == observer_m_)
                angle = 0.0;
            out_.angle.data()[oi] = static_cast<float>(angle);
        }
    }
    std::vector<Task> tasks;
    for (int o = 0; o < 8; ++o) {
        if (octants_[o].a_end <= 1)
            continue;
        for (std::int64_t q = 0; q < (std::int64_t(1) << kTaskLevel); ++q)
            tasks.push_back({o, q});
    }
    const std::int64_t n_tasks = static_cast<std::int64_t>(tasks.size());
    progress.begin("fast viewshed", n_tasks);
    int threads = 1;
#ifdef _OPENMP
    threads = omp_get_max_threads();
#endif
    std::vector<std::unique_ptr<Scratch>> scratches(static_cast<std::size_t>(threads));
    parallelFor(n_tasks, progress, [&](std::int64_t t) {
        int thread = 0;
#ifdef _OPENMP
        thread = omp_get_thread_num();
#endif
        std::unique_ptr<Scratch>& scratch = scratches[static_cast<std::size_t>(thread)];
        if (!scratch) {  // owned by this thread
            scratch = std::make_unique<Scratch>();
            scratch->hi.assign(static_cast<std::size_t>(max_a_end_) + 1, kNegInf);
            scratch->h_hi.assign(static_cast<std::size_t>(max_a_end_) + 1, kNegInf);
            scratch->block_max.assign(static_cast<std::size_t>(max_a_end_) / kBlock + 2, kNegInf);
        }
        runTask(tasks[t], *scratch);
    });
    progress.end();
}

void FastEngine::runTask(const Task& task, Scratch& scratch) const {
    const Octant& o = octants_[task.octant];
    scratch.hi[0] = kNegInf;  // step 0 (the observer's own major line) has no sample
    scratch.block_max[0] = kNegInf;
    if (o.swap)
        node<true>(o, task, scratch, 0, 0, 1, Prefix{});
    else
        node<false>(o, task, scratch, 0, 0, 1, Prefix{});
}

template <bool Swap>
void FastEngine::node(const Octant& o, const Task& task, Scratch& s, int level, std::int64_t p,
                      int i_begin, Prefix prefix) const {
    const std::int64_t den = std::int64_t(1) << level;
    const std::int64_t mask = den - 1;
    const double scale = std::ldexp(1.0, -level);
    const double u_a = static_cast<double>(p) * scale;
    const double u_b = static_cast<double>(p + 1) * scale;
    const bool top = p + 1 == den;
    // Targets of this task only: the task's wedge at kTaskLevel (ancestors are shared).
    const std::int64_t t_mask = (std::int64_t(1) << kTaskLevel) - 1;
    const bool t_top = task.q == t_mask;
    const bool restrict_to_task = level < kTaskLevel;
    const double span_end = kLateralCells * static_cast<double>(den);
    const bool leaf = span_end >= o.a_end;
    const int i_end = leaf ? o.a_end : std::max(i_begin, static_cast<int>(std::ceil(span_end)));
    const double k_min = o.k_base_min + o.k_u2_min * u_a * u_a;
    const double k_max = o.k_base_max + o.k_u2_max * u_b * u_b;
    const std::int64_t b_lim = o.b_lim;

    // Block maxima: the block of the first step this node finishes (i_begin − 1) keeps only the
    // steps before it; later blocks restart when their first step is written.
    {
        const int first = i_begin - 1;
        const int blk = first / kBlock;
        double m = kNegInf;
        for (int j = blk * kBlock; j < first; ++j)
            m = std::max(m, s.hi[j]);
        s.block_max[blk] = m;
    }

    for (int i = i_begin; i < i_end; ++i) {
        const std::int64_t ii = i;
        std::int64_t b_lo = (ii * p + mask) >> level;  // ceil(i·u_a)
        std::int64_t b_hi = top ? (o.own_u1 ? ii : ii - 1) : ((ii * (p + 1) + mask) >> level) - 1;
        if (restrict_to_task) {
            b_lo = std::max(b_lo, (ii * task.q + t_mask) >> kTaskLevel);
            const std::int64_t t_hi =
                t_top ? (o.own_u1 ? ii : ii - 1) : ((ii * (task.q + 1) + t_mask) >> kTaskLevel) - 1;
            b_hi = std::min(b_hi, t_hi);
        }
        if (b_lo == 0 && !o.own_u0)
            b_lo = 1;
        if (b_lo > b_lim)
            return;  // every sightline of this task has left the DEM (or its reach)
        b_hi = std::min(b_hi, b_lim);

        // Read major line i, which finishes step i − 1.
        const LineBounds lb = lineBounds<Swap>(o, i, level, p, scale);
        {
            const int st = i - 1;
            const double z = std::max(prefix.z_hi, lb.near_hi);
            // Its samples lie at x ∈ [st, st + 1): (z − z_e)/x is largest at x = st when
            // z ≥ z_e, at x = st + 1 otherwise.
            const double hi = z > kNegInf
                                  ? (z - eye_m_) * (z >= eye_m_ ? inv_[st] : inv_[i]) - st * k_min
                                  : kNegInf;
            const double lo = (prefix.nodata || prefix.z_lo == kPosInf)
                                  ? kNegInf
                                  : (prefix.z_lo - eye_m_) * inv_[st] - st * k_max;
            s.hi[st] = hi;
            const int blk = st / kBlock;
            s.block_max[blk] = (st % kBlock == 0) ? hi : std::max(s.block_max[blk], hi);
            if (hi > prefix.h_hi)
                prefix.h_hi = hi;
            s.h_hi[st] = prefix.h_hi;
            if (lo > prefix.h_lo) {
                prefix.h_lo = lo;
                prefix.i_lo = st;
            }
        }
        if (b_lo <= b_hi)
            decideColumn<Swap>(o, s, i, b_lo, b_hi, prefix);
        // Step i waits for line i + 1.
        prefix.z_hi = lb.near_hi;
        prefix.z_lo = lb.z_lo;
        prefix.nodata = lb.nodata;
    }
    if (leaf)
        return;
    if (level < kTaskLevel) {
        const std::int64_t child = (task.q >> (kTaskLevel - level - 1)) & 1;
        node<Swap>(o, task, s, level + 1, 2 * p + child, i_end, prefix);
    } else {
        node<Swap>(o, task, s, level + 1, 2 * p, i_end, prefix);
        node<Swap>(o, task, s, level + 1, 2 * p + 1, i_end, prefix);
    }
}

template <bool Swap>
LineBounds FastEngine::lineBounds(const Octant& o, int i, int level, std::int64_t p,
                                  double scale) const {
    // The wedge's edges are dyadic fractions p/2^L and (p + 1)/2^L, so every range below is
    // exact integer arithmetic on i·p (shifts and masks).
    const std::ptrdiff_t sb = o.stride_b;
    const float* line = z_obs_ + i * o.stride_a;  // the cell (i, 0) of major line i
    const std::int64_t b_lim = o.b_lim;
    const std::int64_t mask = (std::int64_t(1) << level) - 1;
    const std::int64_t na = std::int64_t(i) * p;  // y_a = na / 2^L
    const std::int64_t nb = na + i;               // y_b = nb / 2^L (before clipping)
    const std::int64_t ya_floor = na >> level;
    const double fa = static_cast<double>(na & mask) * scale;
    std::int64_t yb_floor = nb >> level;
    double fb = static_cast<double>(nb & mask) * scale;
    if (yb_floor >= b_lim) {  // the wedge reaches past the DEM's side: clip to it
        yb_floor = b_lim;
        fb = 0.0;
    }
    // The ends y_a and y_b of the major-line samples, interpolated as the rule does; between
    // them the samples are bounded by the ends and the centres inside.
    const double z_a0 = line[ya_floor * sb];
    const double za = fa == 0.0 ? z_a0 : (1.0 - fa) * z_a0 + fa * line[(ya_floor + 1) * sb];
    const double z_b0 = line[yb_floor * sb];
    const double zb = fb == 0.0 ? z_b0 : (1.0 - fb) * z_b0 + fb * line[(yb_floor + 1) * sb];
    LineBounds lb{kNegInf, kPosInf, false};
    // std::max(acc, v) and std::min(acc, v) keep acc when v is NaN: no-data never blocks.
    lb.near_hi = std::max(std::max(lb.near_hi, za), zb);
    lb.z_lo = std::min(std::min(lb.z_lo, za), zb);
    const std::int64_t in_lo = ya_floor + 1;
    const std::int64_t in_hi = yb_floor - (fb > 0.0 ? 0 : 1);
    for (std::int64_t k = in_lo; k <= in_hi; ++k)
        lb.z_lo = std::min(lb.z_lo, static_cast<double>(line[k * sb]));
    // Centres that are an end of a minor-line sample of step i − 1 (x ∈ [i − 1, i)) or step i
    // (x ∈ [i, i + 1)): minor lines ceil((i − 1)·u_a) … floor((i + 1)·u_b). They include the
    // centres inside (y_a, y_b).
    const std::int64_t m_lo = (na - p + mask) >> level;
    const std::int64_t m_hi = std::min(b_lim, (nb + p + 1) >> level);
    double m = lb.near_hi;
    for (std::int64_t k = m_lo; k <= m_hi; ++k)
        m = std::max(m, static_cast<double>(line[k * sb]));
    lb.near_hi = m;
    if (has_nodata_) {
        // A major-line sample, rounded across a centre, may touch one more centre each side.
        const std::int64_t c_lo = std::max<std::int64_t>(0, ((na + mask) >> level) - 1);
        const std::int64_t c_hi = std::min(b_lim, yb_floor + 1);
        for (std::int64_t k = c_lo; k <= c_hi; ++k)
            lb.nodata |= std::isnan(line[k * sb]);
        lb.nodata |= !(za == za) || !(zb == zb);
    }
    return lb;
}

double FastEngine::stepGain(const Octant& o, const SightlineSamples& ss, int a, int b,
                            int i) const {
    double g = kNegInf;
    const double gm = o.swap ? ss.rowGain(r0_ + o.s_major * i) : ss.columnGain(c0_ + o.s_major * i);
    if (gm > g)
        g = gm;
    const std::int64_t ia = a, ib = b;
    const std::int64_t j = ceilDiv(static_cast<std::int64_t>(i) * ib, ia);
    if (j >= 1 && j <= ib - 1 && j * ia < (i + 1) * ib) {
        const int jj = static_cast<int>(j);
        const double gn =
            o.swap ? ss.columnGain(c0_ + o.s_minor * jj) : ss.rowGain(r0_ + o.s_minor * jj);
        if (gn > g)
            g = gn;
    }
    return g;
}

template <bool Swap>
void FastEngine::decideColumn(const Octant& o, const Scratch& s, int a, std::int64_t b_lo,
                              std::int64_t b_hi, const Prefix& prefix) const {
    // Cells (a, b_lo … b_hi) of one major line. Distance, drop and rise are computed exactly as
    // SightlineRule::judge computes them: east = (col − c0)·e_row, north = n_row.
    const double a_d = a;
    const double vis_above =
        a_d * prefix.h_hi + kSlackM +
        (std::isfinite(prefix.h_hi) ? kSlackRel * a_d * std::fabs(prefix.h_hi) : 0.0);
    const double hid_below =
        a_d * prefix.h_lo - kSlackM -
        (std::isfinite(prefix.h_lo) ? kSlackRel * a_d * std::fabs(prefix.h_lo) : 0.0);
    const bool bounds_decide = bounds_decide_ && a > 1;
    const double reach2 = reach_m_ * reach_m_ * (1.0 - 1e-12);
    const double cn = curvature_.c_north, ce = curvature_.c_east;
    // The fixed coordinate of this major line.
    const int fixed = Swap ? r0_ + o.s_major * a : c0_ + o.s_major * a;
    for (std::int64_t bb = b_lo; bb <= b_hi; ++bb) {
        const int b = static_cast<int>(bb);
        const int col = Swap ? c0_ + o.s_minor * b : fixed;
        const int row = Swap ? fixed : r0_ + o.s_minor * b;
        const float ground = z_[row * width_ + col];
        if (std::isnan(ground))
            continue;
        const double east = (col - c0_) * east_per_col_[row];
        const double north = north_of_row_[row];
        if (finite_reach_ && !(east * east + north * north <= reach2) &&
            std::hypot(east, north) > reach_m_)
            continue;
        const double drop = cn * north * north + ce * east * east;  // Curvature::drop
        const double rise = ground + target_m_ - drop - eye_m_;
        const std::size_t oi =
            static_cast<std::size_t>(row - win_.row0) * win_.width + (col - win_.col0);
        if (bounds_decide) {
            if (rise > vis_above) {
                out_.visible.data()[oi] = kVisible;
                continue;
            }
            if (rise < hid_below) {
                out_.visible.data()[oi] = kHidden;
                continue;
            }
        }
        decideExactly(o, s, a, b, col, row, rise, drop, oi, prefix);
    }
}

void FastEngine::decideExactly(const Octant& o, const Scratch& s, int a, int b, int col, int row,
                               double rise, double drop, std::size_t oi,
                               const Prefix& prefix) const {
    if (want_angle_) {
        const double dist = std::hypot(frame_.east(col, row), frame_.north(row));
        out_.angle.data()[oi] =
            static_cast<float>(dist > 0 ? std::atan2(rise, dist) * kRadToDeg : 0.0);
    }
    if (a <= 1) {  // the eight neighbours: no sample between
        out_.visible.data()[oi] = kVisible;
        if (want_margin_)
            out_.margin.data()[oi] = static_cast<float>(target_m_);
        return;
    }
    const double a_d = a;
    const double slack =
        kSlackM + kSlackRel * (std::fabs(rise) +
                               (std::isfinite(prefix.h_hi) ? a_d * std::fabs(prefix.h_hi) : 0.0));
    SightlineSamples ss;
    ss.dem = z_;
    ss.width = width_;
    ss.c0 = c0_;
    ss.r0 = r0_;
    ss.col_off = col_off_;
    ss.row_off = row_off_;
    ss.dc = col - c0_;
    ss.dr = row - r0_;
    ss.drop_m = drop;
    ss.eye_m = eye_m_;
    const int last = a - 1;

    if (!want_margin_) {
        if (rise > a_d * prefix.h_hi + slack) {
            out_.visible.data()[oi] = kVisible;
            return;
        }
        if (rise < a_d * prefix.h_lo - slack) {
            out_.visible.data()[oi] = kHidden;
            return;
        }
        // Hidden as soon as one sample rises above the target. Try the likeliest step first (where
        // H_lo was reached), then the last kNearSteps steps, whose bounds include the target's
        // lateral neighbours; if the steps before them cannot block, the target is visible.
        if (prefix.i_lo >= 1 && stepGain(o, ss, a, b, prefix.i_lo) > rise) {
            out_.visible.data()[oi] = kHidden;
            return;
        }
        const int near_first = std::max(1, a - kNearSteps);
        for (int j = last; j >= near_first; --j) {
            if (stepGain(o, ss, a, b, j) > rise) {
                out_.visible.data()[oi] = kHidden;
                return;
            }
        }
        const int far_last = near_first - 1;  // steps 1 … far_last remain
        if (far_last < 1 || rise > a_d * s.h_hi[far_last] + slack) {
            out_.visible.data()[oi] = kVisible;
            return;
        }
        bool hidden = false;
        const double thr = (rise - slack) / a_d;
        for (int blk = 0; blk <= far_last / kBlock && !hidden; ++blk) {
            if (!(s.block_max[blk] >= thr))
                continue;
            const int j_end = std::min(far_last, blk * kBlock + kBlock - 1);
            for (int j = std::max(1, blk * kBlock); j <= j_end; ++j) {
                if (s.hi[j] >= thr && stepGain(o, ss, a, b, j) > rise) {
                    hidden = true;
                    break;
                }
            }
        }
        out_.visible.data()[oi] = hidden ? kHidden : kVisible;
        return;
    }

    // The margin needs the largest gain itself: branch and bound over the steps, starting from
    // the step of H_lo; a step whose bound stays below the best gain so far cannot hold it.
    double best = kNegInf;
    if (prefix.i_lo >= 1)
        best = stepGain(o, ss, a, b, prefix.i_lo);
    for (int blk = 0; blk <= last / kBlock; ++blk) {
        const double floor_q = best > kNegInf ? (best - slack) / a_d : kNegInf;
        if (!(s.block_max[blk] > kNegInf) || s.block_max[blk] < floor_q)
            continue;
        const int j_end = std::min(last, blk * kBlock + kBlock - 1);
        for (int j = std::max(1, blk * kBlock); j <= j_end; ++j) {
            const double hj = s.hi[j];
            if (!(hj > kNegInf) || (best > kNegInf && hj < (best - slack) / a_d))
                continue;
            const double g = stepGain(o, ss, a, b, j);
            if (g > best)
                best = g;
        }
    }
    double margin;
    bool visible;
    if (best == kNegInf) {  // no sample with data between: as the rule says
        margin = target_m_;
        visible = true;
    } else {
        margin = rise - best;
        visible = margin >= 0.0;
    }
    out_.visible.data()[oi] = visible ? kVisible : kHidden;
    out_.margin.data()[oi] = static_cast<float>(margin);
}

}  // namespace

ViewshedGrids fastViewshed(const Grid<float>& dem, const GridGeometry& geometry,
                           const EarthModel& earth, const Observer& observer,
                           const ViewshedOptions& options, Progress& progress) {
    validateViewshedInputs(dem, observer, options);
    ViewshedGrids out;
    out.window = options.crop_to_reach ? reachWindow(geometry, observer, options.reach_m)
                                       : CellWindow{0, 0, dem.width(), dem.height()};
    out.visible = Grid<std::uint8_t>(out.window.width, out.window.height, kNoVisibility);
    const float nan = std::numeric_limits<float>::quiet_NaN();
    if (options.want_margin)
        out.margin = Grid<float>(out.window.width, out.window.height, nan);
    if (options.want_angle)
        out.angle = Grid<float>(out.window.width, out.window.height, nan);
    FastEngine engine(dem, geometry, earth, observer, options, out);
    engine.run(progress);
    return out;
}

}  // namespace lookfar
