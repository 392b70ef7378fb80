// GeoJSON pieces (see GeoJson.hpp).
#include "lookfar/report/GeoJson.hpp"

#include <cmath>

namespace lookfar {

namespace {

/// `lon` in [−180°, 180°]: whole turns removed; 180° stays 180°.
double wrapLongitude(double lon) {
    const double w = lon - 360.0 * std::round(lon / 360.0);
    return w == -180.0 && lon > 0 ? 180.0 : w;
}

nlohmann::json position(double lon, double lat) {
    return {geoJsonRound(lon), geoJsonRound(lat)};
}

}  // namespace

double geoJsonRound(double v) {
    return std::round(v * 1e7) / 1e7;
}

nlohmann::json geoJsonSegment(double lon1, double lat1, double lon2, double lat2) {
    const double a = wrapLongitude(lon1), b = wrapLongitude(lon2);
    if (std::fabs(b - a) <= 180.0) {
        return {{"type", "LineString"}, {"coordinates", {position(a, lat1), position(b, lat2)}}};
    }
    // The shorter way crosses the antimeridian: go from `a` to `b` unwrapped past ±180°.
    const double edge = a > 0 ? 180.0 : -180.0;
    const double b_unwrapped = b + (a > 0 ? 360.0 : -360.0);
    const double f = (edge - a) / (b_unwrapped - a);
    const double lat_edge = lat1 + f * (lat2 - lat1);
    return {{"type", "MultiLineString"},
            {"coordinates",
             {{position(a, lat1), position(edge, lat_edge)},
              {position(-edge, lat_edge), position(b, lat2)}}}};
}

}  // namespace lookfar
