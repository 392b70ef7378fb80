#pragma once
// The terrain samples of the sightline rule, as one small inline type shared by the reference
// rule (SightlineRule) and the fast engine's exact re-checks, so both do the very same
// arithmetic and reach bit-identical verdicts; the radio engine builds its terrain profiles from
// the same samples (columnHeight, rowHeight).
//
// Notation (see SightlineRule.hpp)
//   (c0, r0)    observer cell;  (dc, dr) offset of the target cell C from it, cells
//   t           position along O→C in cell space, t = (i − c0)/dc on column line i
//   Δ           drop at C after refraction, metres; at t the drop is t²Δ
//   z_e         eye height DEM(O) + observer height, metres
//   gain g(t)   (z(t) − t²Δ − z_e)/t, metres; C is visible when z_t − Δ − z_e ≥ max g
#include <cmath>
#include <cstddef>

namespace lookfar {

struct SightlineSamples {
    const float* dem = nullptr;  ///< row-major elevations, metres, NaN = no data
    std::ptrdiff_t width = 0;    ///< cells per row of `dem`
    int c0 = 0, r0 = 0;          ///< observer cell
    /// Offset of `dem` in the whole DEM when it is a window of it (GridGeometry::colOffset): the
    /// sample positions are computed in cells of the whole DEM, so a window gives the same bits.
    int col_off = 0, row_off = 0;
    int dc = 0, dr = 0;  ///< target offset from the observer, cells
    double drop_m = 0;   ///< Δ: drop at the target after refraction, metres
    double eye_m = 0;    ///< z_e, metres

    double z(int col, int row) const { return dem[row * width + col]; }

    /// Gain (metres) of the sample where O→C crosses column line `col` (strictly between c0 and
    /// c0 + dc); NaN when the sample touches no-data.
    double columnGain(int col) const {
        const double t = columnT(col);
        return (columnHeight(col) - t * t * drop_m - eye_m) / t;
    }

    /// Position t ∈ (0, 1) along O→C of the sample on column line `col`.
    double columnT(int col) const { return static_cast<double>(col - c0) / dc; }

    /// Terrain height (metres, NaN on no-data) of the sample on column line `col`: the two
    /// neighbouring cell centres of that column interpolated linearly.
    double columnHeight(int col) const {
        const double y = (r0 + row_off) + columnT(col) * dr;
        const int y_floor = static_cast<int>(std::floor(y));
        const double fy = y - y_floor;
        const int ya = y_floor - row_off;
        return fy == 0.0 ? z(col, ya) : (1.0 - fy) * z(col, ya) + fy * z(col, ya + 1);
    }

    /// Gain (metres) of the sample where O→C crosses row line `row` (strictly between r0 and
    /// r0 + dr); NaN when the sample touches no-data.
    double rowGain(int row) const {
        const double t = rowT(row);
        return (rowHeight(row) - t * t * drop_m - eye_m) / t;
    }

    /// Position t ∈ (0, 1) along O→C of the sample on row line `row`.
    double rowT(int row) const { return static_cast<double>(row - r0) / dr; }

    /// Terrain height (metres, NaN on no-data) of the sample on row line `row`.
    double rowHeight(int row) const {
        const double x = (c0 + col_off) + rowT(row) * dc;
        const int x_floor = static_cast<int>(std::floor(x));
        const double fx = x - x_floor;
        const int xa = x_floor - col_off;
        return fx == 0.0 ? z(xa, row) : (1.0 - fx) * z(xa, row) + fx * z(xa + 1, row);
    }

    /// The terrain profile of O→C: visits every sample strictly between O and C in order of t,
    /// column and row crossings merged (where a column and a row line cross the segment at the
    /// same t, the column sample comes first), as visit(t, height) with height NaN on no-data.
    /// The radio engine builds each cell's profile from it; the visibility verdicts need only
    /// the largest gain, in any order (columnGain, rowGain).
    template <class Visit>
    void forEachSample(Visit&& visit) const {
        const int col = c0 + dc, row = r0 + dr;
        const int step_c = dc > 0 ? 1 : -1, step_r = dr > 0 ? 1 : -1;
        int i = dc != 0 ? c0 + step_c : col;  // next column line, `col` when none is left
        int j = dr != 0 ? r0 + step_r : row;  // next row line, `row` when none is left
        while (i != col || j != row) {
            if (j == row || (i != col && columnT(i) <= rowT(j))) {
                visit(columnT(i), columnHeight(i));
                i += step_c;
            } else {
                visit(rowT(j), rowHeight(j));
                j += step_r;
            }
        }
    }
};

}  // namespace lookfar
