#pragma once
// GridGeometry: where the cells of a north-up raster are, and how big they are in metres.
//
// Cell coordinates: cell (col, row) has its centre at the continuous cell coordinate (col, row);
// the raster's top-left corner is at (−0.5, −0.5). Map coordinates are those of the DEM's CRS.
// Projected grids: cell sizes are the geotransform steps times the CRS's linear unit.
// Geographic grids: cell sizes vary by row and come from the ellipsoid of the CRS.
//
// LocalFrame gives the "fast distance" the engines use: for an origin cell O, every cell C gets
// metric offsets (east, north) from O such that hypot(east, north) is the ground distance and
// atan2(east, north) the ground azimuth. On geographic grids these use the mid-latitude
// formula  north = M(φm)(φ − φ0),  east = N(φm) cos φm (λ − λ0)  with φm = (φ + φ0)/2,
// whose error against the ellipsoidal geodesic stays below 0.1 % (or 1 m) within a few degrees
// (tested against PROJ's geod_inverse). atan2(east, north) is then the azimuth at the
// mid-latitude; azimuthDeg() corrects it by half the meridian convergence to the forward
// azimuth at the origin (within 0.05° of geod_inverse over 1°).
#include <array>
#include <vector>

#include "lookfar/core/Ellipsoid.hpp"

namespace lookfar {

/// Metric offsets of every cell from an origin cell; see the header comment.
struct LocalFrame {
    double origin_col = 0;  ///< origin, cell coordinates
    double origin_row = 0;
    std::vector<double> east_per_col;  ///< per row: metres east per column step from the origin
    std::vector<double> north_of_row;  ///< per row: metres north of the origin (at any column)

    double east(double col, int row) const { return (col - origin_col) * east_per_col[row]; }
    double north(int row) const { return north_of_row[row]; }
};

class GridGeometry {
  public:
    GridGeometry() = default;
    /// `geotransform` is GDAL's six coefficients; rotation terms must be 0 (checked by io).
    /// `linear_unit_m`: metres per CRS unit (ignored for geographic grids, which are degrees).
    GridGeometry(int width, int height, const std::array<double, 6>& geotransform, bool geographic,
                 double linear_unit_m, const Ellipsoid& ellipsoid);

    /// The `width` × `height` window of this grid whose top-left cell is (col0, row0) of this
    /// grid. Its cell (c, r) is cell (col0 + c, row0 + r) here, and every coordinate, size, area
    /// and distance it gives is computed from the whole grid's geotransform exactly as here, so
    /// engines give the same bits on a window as on the whole grid.
    GridGeometry window(int col0, int row0, int width, int height) const;

    int width() const { return width_; }
    int height() const { return height_; }
    /// Offset of this grid's cells in the grid it is a window of (0 for a whole grid).
    int colOffset() const { return col_off_; }
    int rowOffset() const { return row_off_; }
    /// Size of the grid this one is a window of (its own size for a whole grid).
    int wholeWidth() const { return whole_width_; }
    int wholeHeight() const { return whole_height_; }
    /// The whole grid this one is a window of (itself for a whole grid).
    GridGeometry whole() const;
    bool geographic() const { return geographic_; }
    /// GDAL's geotransform of this grid (of the window when it is one).
    const std::array<double, 6>& geotransform() const { return window_gt_; }
    const Ellipsoid& ellipsoid() const { return ellipsoid_; }
    double linearUnitMetres() const { return unit_m_; }

    /// Map coordinates of a (continuous) cell coordinate; integers are cell centres.
    double mapX(double col) const { return gt_[0] + (col + col_off_ + 0.5) * gt_[1]; }
    double mapY(double row) const { return gt_[3] + (row + row_off_ + 0.5) * gt_[5]; }
    /// Continuous cell coordinate of a map coordinate.
    double colOf(double x) const { return (x - gt_[0]) / gt_[1] - 0.5 - col_off_; }
    double rowOf(double y) const { return (y - gt_[3]) / gt_[5] - 0.5 - row_off_; }
    /// True when the map point lies inside the raster's extent.
    bool containsMap(double x, double y) const;
    /// The cell whose area contains the map point (caller checks containsMap first).
    int cellColOf(double x) const;
    int cellRowOf(double y) const;

    /// Latitude of a row's cell centres, degrees (geographic grids only).
    double latitudeOfRow(double row) const { return mapY(row); }
    /// East–west and north–south size of the cells of `row`, metres.
    double cellWidthM(int row) const;
    double cellHeightM(int row) const;
    /// True ground area of one cell of `row`, m² (ellipsoidal on geographic grids).
    double cellAreaM2(int row) const;
    /// Cell size in metres at the middle of the grid (for reports).
    double nominalCellSizeM() const;

    /// Metric offsets of every cell from the origin cell coordinate (col, row).
    LocalFrame localFrame(double col, double row) const;
    /// Fast ground distance (m) and azimuth (degrees clockwise from grid north, [0, 360))
    /// between two cell coordinates, as the engines compute them.
    double distanceM(double col0, double row0, double col1, double row1) const;
    double azimuthDeg(double col0, double row0, double col1, double row1) const;

  private:
    int width_ = 0;
    int height_ = 0;
    std::array<double, 6> gt_{0, 1, 0, 0, 0, -1};  ///< of the whole grid
    std::array<double, 6> window_gt_{0, 1, 0, 0, 0, -1};
    int col_off_ = 0, row_off_ = 0;  ///< of this window in the whole grid
    bool geographic_ = false;
    double unit_m_ = 1.0;
    Ellipsoid ellipsoid_;
    int whole_width_ = 0, whole_height_ = 0;  ///< of the whole grid
};

}  // namespace lookfar
