#pragma once
// The geodesic on the ellipsoid as the link layer needs it, behind an interface: io implements
// it with PROJ's geodesic solver (io/Crs.hpp, Geodesic); tests may give their own.
#include "lookfar/core/MapPoint.hpp"

namespace lookfar {

struct GeodesicLine {
    double distance_m = 0;
    double azimuth1_deg = 0;  ///< at the first point, clockwise from true north, [0, 360)
    double azimuth2_deg = 0;  ///< forward azimuth at the second point, [0, 360)
};

class GeodesicSolver {
  public:
    virtual ~GeodesicSolver() = default;
    /// The geodesic from (lon1, lat1) to (lon2, lat2), degrees.
    virtual GeodesicLine inverse(double lon1, double lat1, double lon2, double lat2) const = 0;
    /// The point (longitude, latitude) at distance `s_m` from (lon1, lat1) along azimuth `az1_deg`.
    virtual MapPoint direct(double lon1, double lat1, double az1_deg, double s_m) const = 0;
};

/// An azimuth in [0, 360).
double wrap360(double az);

}  // namespace lookfar
