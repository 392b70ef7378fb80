#pragma once
// Private to the fast horizon engine (FastHorizon.cpp and its parts): constants, the rounding
// helpers of the exact samples, and a cell's ray crossings in the kernel's layout. The notation
// is FastHorizon.cpp's; the method is in docs/horizon.md.
#include <algorithm>
#include <cmath>
#include <cstddef>
#include <limits>
#include <vector>

namespace lookfar::horizon_detail::fast {

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

}  // namespace lookfar::horizon_detail::fast
