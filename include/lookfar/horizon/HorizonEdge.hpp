#pragma once
// Where the DEM ends, as the horizon engines see it (lookfar horizon, issue 15 item 7).
//
// The terrain a horizon ray meets is sampled where it crosses the row and column lines through
// cell centres (HorizonScan.hpp), so the DEM's edge for the horizon is the outermost row and
// column line of cell centres of the whole DEM: beyond it the DEM holds no terrain, and a
// horizon whose ray reaches it within the reach may in truth be higher, raised by terrain
// beyond the DEM.
//
// Notation
//   W, H      size of the whole DEM, cells; its edge is the rectangle of centre lines
//             col ∈ {0, W − 1}, row ∈ {0, H − 1}
//   (c0, r0)  the eye's cell, cells of the whole DEM
//   (dc, dr)  the ray's direction in cells per metre, from the cell aspect of row r0 (as the
//             reference engine's marchRay)
//   s_edge    the smallest s ≥ 0 at which (c0 + dc·s, r0 + dr·s) meets the edge
//   d_edge    ground distance from (c0, r0) to that point, by the engines' metric
#include <cstdint>
#include <memory>

#include "lookfar/core/GridGeometry.hpp"

namespace lookfar {

namespace horizon_detail {
class GridMetric;
}

/// The edge of the whole DEM that `geometry` is (or is a window of), with the engines' metric
/// (built once: a geographic grid's table has an entry every half row).
class DemEdge {
  public:
    explicit DemEdge(const GridGeometry& geometry);
    /// d_edge, metres, for the centre of cell (col, row) of `geometry` (cells of the window when
    /// it is one) along `azimuth_deg` (degrees clockwise from grid north, on the ground); 0 for
    /// a cell on the edge facing out.
    double distanceM(int col, int row, double azimuth_deg) const;
    /// Distance, metres, from the centre of cell (col, row) to the nearest side of the edge,
    /// measured along its row to the first and last columns and along its column to the first
    /// and last rows (d_edge of the grid azimuths 0°, 90°, 180°, 270°).
    double nearestM(int col, int row) const;

  private:
    int col_off_ = 0, row_off_ = 0;
    double c_hi_ = 0, r_hi_ = 0;
    std::shared_ptr<const horizon_detail::GridMetric> metric_;
};

/// The cells of the whole DEM whose horizon the edge can cut within `reach_m` (metres, > 0, may
/// be infinite): those whose nearestEdgeM is at most the reach, i.e. the cells less than the
/// reach from the DEM's edge in some direction (DemEdge::nearestM ≤ reach). Every cell when the
/// reach is unlimited. Counts cells with and without data alike (the rule is geometry only).
std::int64_t cellsWithinReachOfEdge(const GridGeometry& geometry, double reach_m);

}  // namespace lookfar
