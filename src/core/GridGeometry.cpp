#include "lookfar/core/GridGeometry.hpp"

#include <cmath>

#include "lookfar/core/Units.hpp"

namespace lookfar {

GridGeometry::GridGeometry(int width, int height, const std::array<double, 6>& geotransform,
                           bool geographic, double linear_unit_m, const Ellipsoid& ellipsoid)
    : width_(width),
      height_(height),
      gt_(geotransform),
      window_gt_(geotransform),
      geographic_(geographic),
      unit_m_(linear_unit_m),
      ellipsoid_(ellipsoid),
      whole_width_(width),
      whole_height_(height) {}

GridGeometry GridGeometry::whole() const {
    GridGeometry w = *this;
    w.width_ = whole_width_;
    w.height_ = whole_height_;
    w.col_off_ = w.row_off_ = 0;
    w.window_gt_ = gt_;
    return w;
}

GridGeometry GridGeometry::window(int col0, int row0, int width, int height) const {
    GridGeometry w = *this;
    w.width_ = width;
    w.height_ = height;
    w.col_off_ = col_off_ + col0;
    w.row_off_ = row_off_ + row0;
    w.window_gt_[0] = gt_[0] + w.col_off_ * gt_[1];
    w.window_gt_[3] = gt_[3] + w.row_off_ * gt_[5];
    return w;
}

bool GridGeometry::containsMap(double x, double y) const {
    double c = (x - gt_[0]) / gt_[1] - col_off_;
    double r = (y - gt_[3]) / gt_[5] - row_off_;
    return c >= 0 && r >= 0 && c < width_ && r < height_;
}

int GridGeometry::cellColOf(double x) const {
    return static_cast<int>(std::floor((x - gt_[0]) / gt_[1])) - col_off_;
}
int GridGeometry::cellRowOf(double y) const {
    return static_cast<int>(std::floor((y - gt_[3]) / gt_[5])) - row_off_;
}

double GridGeometry::cellWidthM(int row) const {
    if (!geographic_)
        return std::fabs(gt_[1]) * unit_m_;
    double lat = latitudeOfRow(row);
    return ellipsoid_.primeVerticalRadius(lat) * std::cos(lat * kDegToRad) * std::fabs(gt_[1]) *
           kDegToRad;
}

double GridGeometry::cellHeightM(int row) const {
    if (!geographic_)
        return std::fabs(gt_[5]) * unit_m_;
    return ellipsoid_.meridianRadius(latitudeOfRow(row)) * std::fabs(gt_[5]) * kDegToRad;
}

double GridGeometry::cellAreaM2(int row) const {
    if (!geographic_)
        return std::fabs(gt_[1] * gt_[5]) * unit_m_ * unit_m_;
    double lat_top = gt_[3] + (row + row_off_) * gt_[5];
    double lat_bottom = lat_top + gt_[5];
    return std::fabs(ellipsoid_.zoneAreaPerRadian(lat_top) -
                     ellipsoid_.zoneAreaPerRadian(lat_bottom)) *
           std::fabs(gt_[1]) * kDegToRad;
}

double GridGeometry::nominalCellSizeM() const {
    int mid = height_ / 2;
    return std::sqrt(cellWidthM(mid) * cellHeightM(mid));
}

LocalFrame GridGeometry::localFrame(double col, double row) const {
    LocalFrame frame;
    frame.origin_col = col;
    frame.origin_row = row;
    frame.east_per_col.resize(height_);
    frame.north_of_row.resize(height_);
    if (!geographic_) {
        double east = gt_[1] * unit_m_;
        for (int r = 0; r < height_; ++r) {
            frame.east_per_col[r] = east;
            frame.north_of_row[r] = (r - row) * gt_[5] * unit_m_;
        }
        return frame;
    }
    double lat0 = latitudeOfRow(row);
    for (int r = 0; r < height_; ++r) {
        double lat = latitudeOfRow(r);
        double mid = 0.5 * (lat + lat0);
        frame.north_of_row[r] = ellipsoid_.meridianRadius(mid) * (lat - lat0) * kDegToRad;
        frame.east_per_col[r] =
            ellipsoid_.primeVerticalRadius(mid) * std::cos(mid * kDegToRad) * gt_[1] * kDegToRad;
    }
    return frame;
}

namespace {
void offsets(const GridGeometry& g, double col0, double row0, double col1, double row1,
             double& east, double& north) {
    const auto& gt = g.geotransform();
    if (!g.geographic()) {
        east = (col1 - col0) * gt[1] * g.linearUnitMetres();
        north = (row1 - row0) * gt[5] * g.linearUnitMetres();
        return;
    }
    double lat0 = g.latitudeOfRow(row0);
    double lat1 = g.latitudeOfRow(row1);
    double mid = 0.5 * (lat0 + lat1);
    north = g.ellipsoid().meridianRadius(mid) * (lat1 - lat0) * kDegToRad;
    east = g.ellipsoid().primeVerticalRadius(mid) * std::cos(mid * kDegToRad) * (col1 - col0) *
           gt[1] * kDegToRad;
}
}  // namespace

double GridGeometry::distanceM(double col0, double row0, double col1, double row1) const {
    double e, n;
    offsets(*this, col0, row0, col1, row1, e, n);
    return std::hypot(e, n);
}

double GridGeometry::azimuthDeg(double col0, double row0, double col1, double row1) const {
    double e, n;
    offsets(*this, col0, row0, col1, row1, e, n);
    double az = std::atan2(e, n) * kRadToDeg;
    if (geographic_) {
        // atan2(e, n) is the azimuth at the mid-latitude; the forward azimuth at the start is
        // smaller by half the meridian convergence, (Δλ/2) sin φm.
        double mid = 0.5 * (latitudeOfRow(row0) + latitudeOfRow(row1));
        az -= 0.5 * (col1 - col0) * gt_[1] * std::sin(mid * kDegToRad);
    }
    az = std::fmod(az, 360.0);
    return az < 0 ? az + 360.0 : az;
}

}  // namespace lookfar
