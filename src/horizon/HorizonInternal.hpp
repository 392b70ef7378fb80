#pragma once
// Private to src/horizon: what the reference and the fast horizon engines share.
//
// Notation
//   (c, r)      continuous cell coordinates; integers are cell centres
//   e, n        east and north offsets between two cells, metres (the engines' fast distance)
//   E_c, N_r    signed metres east per column step and north per row step at a row
//   t           tangent of an elevation angle (rise over ground distance)
#include <cmath>
#include <cstdint>
#include <limits>
#include <vector>

#include "lookfar/core/Grid.hpp"
#include "lookfar/core/GridGeometry.hpp"
#include "lookfar/earth/EarthModel.hpp"
#include "lookfar/horizon/HorizonScan.hpp"

namespace lookfar::horizon_detail {

/// sin and cos of an azimuth in degrees, exact at multiples of 90°.
void sinCosDeg(double azimuth_deg, double& s, double& c);

/// The metric of a north-up grid as the engines use it. Projected grids: constant steps.
/// Geographic grids: the mid-latitude formula of GridGeometry (north = M(φm) Δφ,
/// east = N(φm) cos φm Δλ), with M(φ) and N(φ) cos φ tabulated every half row and interpolated
/// linearly (relative error below 1e-9 for cells of a few arc-seconds).
class GridMetric {
  public:
    explicit GridMetric(const GridGeometry& geometry);

    bool geographic() const { return geographic_; }
    /// Offset of the grid in the whole DEM when it is a window of it (GridGeometry::colOffset).
    /// Rows and columns given to this metric are cells of the whole DEM, so that a window gives
    /// the same bits as the whole DEM.
    int colOffset() const { return col_off_; }
    int rowOffset() const { return row_off_; }
    /// Signed metres east per column step at (continuous) row `row`.
    double eastPerCol(double row) const {
        if (!geographic_)
            return east_scale_;
        double ncos, m;
        lookup(row, ncos, m);
        return ncos * east_scale_;
    }
    /// Signed metres north per row step at row `row`.
    double northPerRow(double row) const {
        if (!geographic_)
            return north_scale_;
        double ncos, m;
        lookup(row, ncos, m);
        return m * north_scale_;
    }
    /// Offsets (e, n) in metres from (c0, r0) to (c1, r1).
    void offsets(double c0, double r0, double c1, double r1, double& e, double& n) const {
        if (!geographic_) {
            e = (c1 - c0) * east_scale_;
            n = (r1 - r0) * north_scale_;
            return;
        }
        double ncos, m;
        lookup(0.5 * (r0 + r1), ncos, m);
        e = (c1 - c0) * ncos * east_scale_;
        n = (r1 - r0) * m * north_scale_;
    }

  private:
    // N(φ) cos φ and M(φ) at a continuous row, interpolated linearly between half rows (one
    // index for both: this runs once per sample on geographic grids).
    void lookup(double row, double& ncos, double& m) const {
        const double x = (row - row_first_) * 2.0;
        const std::size_t last = table_.size() / 2 - 1;
        std::size_t i = 0;
        double f = 0;
        if (x > 2.0 * row_off_) {
            // The half-row index in the whole DEM, then in this grid's table.
            const std::size_t whole_i = static_cast<std::size_t>(x);
            f = x - static_cast<double>(whole_i);
            i = whole_i - 2 * static_cast<std::size_t>(row_off_);
            if (i >= last) {
                i = last, f = 0;
            }
        }
        const double* t = table_.data() + 2 * i;
        if (f == 0) {
            ncos = t[0], m = t[1];
            return;
        }
        ncos = t[0] + f * (t[2] - t[0]);
        m = t[1] + f * (t[3] - t[1]);
    }
    bool geographic_ = false;
    double east_scale_ = 1;   // projected: gt1 · unit; geographic: gt1 in radians
    double north_scale_ = 1;  // projected: gt5 · unit; geographic: gt5 in radians
    double row_first_ = -1;   // of the whole DEM
    int col_off_ = 0, row_off_ = 0;
    std::vector<double> table_;  // N(φ) cos φ, M(φ) in pairs, every half row from row_first_
};

/// The exact ray of the reference engine from the centre of cell (c0, r0).
struct RayResult {
    bool found = false;
    double t = -std::numeric_limits<double>::infinity();  // tangent of the horizon angle
    double distance_m = 0;
    double col = 0, row = 0;  // where the horizon-defining sample lies
    double z = 0;             // its terrain height
};

/// Marches the ray at azimuth (sin_a, cos_a) from the centre of (c0, r0) with the eye at z_eye:
/// every crossing of a column line and of a row line through cell centres, inside the grid and
/// within reach, linearly interpolated between the two neighbouring centres; no-data samples
/// are skipped. Ties go to the nearer sample. The direction in cell space uses the cell aspect
/// of row r0.
RayResult marchRay(const Grid<float>& dem, const GridMetric& metric, const Curvature& curvature,
                   int c0, int r0, double z_eye, double sin_a, double cos_a, double reach_m);

/// Per-cell accumulators of the sky-view factor and the dip over the directions.
class SummaryAccumulator {
  public:
    SummaryAccumulator(int width, int height, int directions, bool want_svf, bool want_dip);
    /// Adds direction results for cell index `i` (t = tangent of the angle; NaN = no data).
    void add(std::size_t i, float angle_deg, double t) { addRun(i, 1, &angle_deg, &t); }
    /// add() for the `n` cells from index i0 on (one run of a row), in loops without branches
    /// that the compiler turns into vector code. A cell with no data (NaN) changes nothing.
    void addRun(std::size_t i0, int n, const float* angle_deg, const double* t) {
        if (want_svf_) {
            float* sum = svf_sum_.data() + i0;
            for (int k = 0; k < n; ++k) {
                // sin(atan t) = t / √(1 + t²): no trigonometry per cell and direction.
                const double tk = t[k];
                const double s = tk / std::sqrt(1.0 + tk * tk);
                sum[k] += tk > 0 ? static_cast<float>(s) : 0.0f;
            }
            if (count8_.empty())
                countData(count16_.data() + i0, n, angle_deg);
            else
                countData(count8_.data() + i0, n, angle_deg);
        }
        if (want_dip_) {
            float* m = min_angle_.data() + i0;
            for (int k = 0; k < n; ++k) {
                const float a = angle_deg[k];
                m[k] = a == a && !(a >= m[k]) ? a : m[k];
            }
        }
    }
    /// Turns the sums into the summary grids, in place (no grid is copied).
    HorizonSummary finish();

  private:
    template <typename Count>
    static void countData(Count* c, int n, const float* angle_deg) {
        for (int k = 0; k < n; ++k)
            c[k] += angle_deg[k] == angle_deg[k];  // false for NaN
    }

    int width_, height_;
    bool want_svf_, want_dip_;
    Grid<float> svf_sum_;  // becomes the sky-view factor
    // Directions with data per cell: one byte a cell up to 255 directions, else two.
    std::vector<std::uint8_t> count8_;
    std::vector<std::uint16_t> count16_;
    Grid<float> min_angle_;  // becomes the dip
};

struct EngineInput {
    const Grid<float>& dem;  ///< the cells of `geometry`, which may be a window of a whole grid
    const GridGeometry& geometry;
    const GridMetric& metric;  ///< of `geometry` (rows and columns of the whole grid)
    /// Of the whole grid (= metric when the grid is whole): the fast engine lays its scan lines
    /// out on the whole grid, so that a window gives the same bits as the whole grid for every
    /// cell whose samples within reach lie in the window.
    const GridMetric& whole_metric;
    const Curvature& curvature;
    const HorizonOptions& options;
};

/// The engines: stream direction by direction to `sink`, accumulating the summary.
void referenceScan(const EngineInput& in, HorizonSink& sink, SummaryAccumulator& acc,
                   Progress& progress);
void fastScan(const EngineInput& in, HorizonSink& sink, SummaryAccumulator& acc,
              Progress& progress);

}  // namespace lookfar::horizon_detail
