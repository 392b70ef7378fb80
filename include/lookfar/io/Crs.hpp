#pragma once
// Coordinates through PROJ: transforms between a user's CRS and the DEM's, and geodesics on the
// DEM's ellipsoid. Axis order is always x/easting/longitude first ("traditional GIS order").
#include <memory>
#include <string>

#include "lookfar/core/Ellipsoid.hpp"
#include "lookfar/core/MapPoint.hpp"
#include "lookfar/link/Geodesy.hpp"

namespace lookfar {

/// Parses "X,Y" (two finite decimal numbers, spaces allowed around each); throws UsageError
/// naming `what` and the text (cut and escaped).
MapPoint parsePoint(const std::string& text, const std::string& what);

/// The text PROJ is given for a CRS the user wrote: a PROJ string ("+proj=utm +zone=30
/// +datum=WGS84") gets "+type=crs" appended when it lacks it, so that PROJ reads it as a CRS
/// rather than an operation; anything else (EPSG:4326, WKT) is unchanged.
std::string crsAsPROJUnderstandsIt(const std::string& text);

/// A transform from one CRS to another, x/longitude first on both sides.
class CoordinateTransform {
  public:
    /// `from` and `to` are anything PROJ accepts (EPSG:4326, WKT, PROJ strings).
    /// Throws UsageError when `from` is not a CRS PROJ knows (the string is named),
    /// InputError when `to` (the DEM's CRS) is unusable.
    CoordinateTransform(const std::string& from, const std::string& to);
    ~CoordinateTransform();
    CoordinateTransform(const CoordinateTransform&) = delete;
    CoordinateTransform& operator=(const CoordinateTransform&) = delete;

    /// Throws InputError when the point cannot be transformed.
    MapPoint apply(const MapPoint& p) const;
    bool identity() const { return identity_; }

  private:
    struct Impl;
    std::unique_ptr<Impl> impl_;
    bool identity_ = false;
};

/// Lon/lat (degrees, on the CRS's own geodetic datum) of points in a CRS.
class LonLatOf {
  public:
    explicit LonLatOf(const std::string& crs_wkt);
    ~LonLatOf();
    /// x/y in the CRS → (lon, lat) degrees.
    MapPoint apply(const MapPoint& p) const;

  private:
    std::unique_ptr<CoordinateTransform> transform_;
    bool geographic_ = false;
};

/// Ellipsoid of a CRS given as anything PROJ accepts; throws InputError if it has none.
Ellipsoid ellipsoidOfCrs(const std::string& crs);
/// True when `crs` is a geographic (lat/lon) CRS.
bool crsIsGeographic(const std::string& crs);
/// Checks that PROJ knows `crs`; throws UsageError naming the option otherwise.
void validateCrs(const std::string& crs, const std::string& what);

/// Geodesic on an ellipsoid (PROJ's geod_inverse/geod_direct, Karney 2013).
class Geodesic final : public GeodesicSolver {
  public:
    explicit Geodesic(const Ellipsoid& e);
    GeodesicLine inverse(double lon1, double lat1, double lon2, double lat2) const override;
    /// Point at distance s from (lon1, lat1) along azimuth az1 (degrees).
    MapPoint direct(double lon1, double lat1, double az1_deg, double s_m) const override;

  private:
    Ellipsoid e_;
};

}  // namespace lookfar
