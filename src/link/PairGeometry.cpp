// Figures of pairs of stations (see PairGeometry.hpp).
#include "lookfar/link/PairGeometry.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <utility>

#include "lookfar/core/Units.hpp"

namespace lookfar {

PairGeometry PairGeometer::operator()(int from, int to) const {
    const int i = std::min(from, to), j = std::max(from, to);
    const GeodesicLine line = geo_.inverse(stations_[i].lonlat.x, stations_[i].lonlat.y,
                                           stations_[j].lonlat.x, stations_[j].lonlat.y);
    PairGeometry ij;
    ij.distance_m = line.distance_m;
    if (geographic_) {
        ij.azimuth_deg = line.azimuth1_deg;
        ij.back_azimuth_deg = wrap360(line.azimuth2_deg + 180.0);
        ij.grid_m = line.distance_m;
    } else {
        ij.azimuth_deg = wrap360(std::atan2(stations_[j].map.x - stations_[i].map.x,
                                            stations_[j].map.y - stations_[i].map.y) *
                                 kRadToDeg);
        ij.back_azimuth_deg = wrap360(ij.azimuth_deg + 180.0);
        ij.grid_m = std::hypot(stations_[j].map.x - stations_[i].map.x,
                               stations_[j].map.y - stations_[i].map.y) *
                    unit_m_;
        ij.scale_factor = line.distance_m > 0 ? ij.grid_m / line.distance_m : 1.0;
    }
    const double true_ij = line.azimuth1_deg, true_ji = wrap360(line.azimuth2_deg + 180.0);
    ij.slope_m = EarthModel::sphereChordM(stations_[i].eye_m, stations_[j].eye_m, line.distance_m,
                                          earth_.radiusAlong(stations_[i].latitude_deg, true_ij));
    if (line.distance_m == 0)
        ij.azimuth_deg = ij.back_azimuth_deg = std::numeric_limits<double>::quiet_NaN();
    // The direction asked for: from `from`'s eye towards `to`'s.
    const double true_az = from == i ? true_ij : true_ji;
    const double r_eff = earth_.effectiveRadius(stations_[from].latitude_deg, true_az);
    ij.azimuth_true_deg = line.distance_m == 0 ? std::numeric_limits<double>::quiet_NaN() : true_az;
    ij.zenith_deg = 90.0 - EarthModel::sphereElevationAngleDeg(
                               stations_[from].eye_m, stations_[to].eye_m, line.distance_m, r_eff);
    if (from != i)
        std::swap(ij.azimuth_deg, ij.back_azimuth_deg);
    return ij;
}

}  // namespace lookfar
