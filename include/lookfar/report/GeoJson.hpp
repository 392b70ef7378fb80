#pragma once
// Pieces of GeoJSON (RFC 7946) that lookfar writes itself: WGS 84 longitude/latitude, at most 7
// decimals (§11.2), longitudes within [−180°, 180°] and lines split at the antimeridian (§3.1.9).
#include <nlohmann/json.hpp>

namespace lookfar {

/// `v` rounded to 7 decimals (about 1 cm of latitude), as RFC 7946 §11.2 recommends.
double geoJsonRound(double v);

/// The geometry of the straight segment between two WGS 84 points (degrees): a LineString with
/// both longitudes wrapped into [−180°, 180°], or, when the shorter way between them crosses the
/// antimeridian, a MultiLineString of the two parts meeting at ±180° (the latitude there
/// interpolated linearly in longitude).
nlohmann::json geoJsonSegment(double lon1, double lat1, double lon2, double lat2);

}  // namespace lookfar
