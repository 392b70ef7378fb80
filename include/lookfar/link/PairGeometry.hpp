#pragma once
// Distances, azimuths and survey figures of pairs of stations (intervis): the geodesic on the
// ellipsoid (through a GeodesicSolver), grid azimuths and distances from the map coordinates,
// and the zenith angle and slope distance between the eyes over the curved, refracting Earth.
#include <utility>
#include <vector>

#include "lookfar/core/MapPoint.hpp"
#include "lookfar/earth/EarthModel.hpp"
#include "lookfar/link/Geodesy.hpp"

namespace lookfar {

/// Distance, azimuths and survey figures of a pair of stations.
struct PairGeometry {
    double distance_m = 0;        ///< geodesic on the DEM's ellipsoid
    double azimuth_deg = 0;       ///< grid azimuth at the first station towards the second
    double back_azimuth_deg = 0;  ///< grid azimuth at the second station towards the first
    double azimuth_true_deg = 0;  ///< geodesic azimuth at the first station (from true north)
    double zenith_deg = 0;    ///< zenith angle first eye → second eye, curvature and refraction
    double slope_m = 0;       ///< straight line between the eyes (true radius)
    double grid_m = 0;        ///< distance in the map's plane (the geodesic on lat/lon DEMs)
    double scale_factor = 1;  ///< grid ÷ geodesic distance (1 on lat/lon DEMs)
};

/// Figures of pairs (grid azimuths from the map coordinates, which on a lat/lon grid are the
/// true ones), solved from the lower index to the higher so that both directions of a pair print
/// the same distances.
class PairGeometer {
  public:
    struct Station {
        MapPoint map;             ///< in the DEM's CRS
        MapPoint lonlat;          ///< longitude, latitude on the DEM's ellipsoid, degrees
        double eye_m = 0;         ///< elevation of the eye (ground + height), metres
        double latitude_deg = 0;  ///< of the station's cell centre (the curvature's latitude)
    };
    /// `geodesic` must outlive the geometer. `geographic`: the map is lon/lat; else its linear
    /// unit is `unit_m` metres.
    PairGeometer(std::vector<Station> stations, const EarthModel& earth,
                 const GeodesicSolver& geodesic, bool geographic, double unit_m)
        : stations_(std::move(stations)),
          earth_(earth),
          geo_(geodesic),
          geographic_(geographic),
          unit_m_(unit_m) {}

    /// The pair from station `from` towards station `to`.
    PairGeometry operator()(int from, int to) const;

  private:
    std::vector<Station> stations_;
    const EarthModel& earth_;
    const GeodesicSolver& geo_;
    bool geographic_;
    double unit_m_;
};

}  // namespace lookfar
