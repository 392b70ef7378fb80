#pragma once
// Reading DEMs through GDAL: any format GDAL reads (GeoTIFF, VRT mosaics, …).
// Elevations are converted to metres; no-data cells become NaN in the grid.
#include <cstdint>
#include <functional>
#include <optional>
#include <string>
#include <utility>
#include <vector>

#include "lookfar/core/Grid.hpp"
#include "lookfar/core/GridGeometry.hpp"
#include "lookfar/core/Units.hpp"

namespace lookfar {

/// What is known of a DEM's CRS.
struct CrsInfo {
    std::string wkt;                           ///< WKT2 of the CRS
    std::string name;                          ///< e.g. "WGS 84 / UTM zone 30N"
    std::string epsg;                          ///< "EPSG:32630", or empty when there is no code
    bool geographic = false;                   ///< lat/lon in degrees
    LinearUnit horizontal_unit{"metre", 1.0};  ///< for projected CRSs
    Ellipsoid ellipsoid;                       ///< of the CRS's datum
};

struct DemReadOptions {
    int band = 1;                      ///< 1-based band number
    std::optional<LinearUnit> z_unit;  ///< overrides the band's unit type
    /// Window to read, in cells of the full raster: col, row, width, height (all 0 = all).
    int win_col = 0, win_row = 0, win_width = 0, win_height = 0;
    /// readDemStrips only: read overview `overview` of the band (0 = the finest) instead of the
    /// cells, whole (the window must be all); −1 = the cells themselves.
    int overview = -1;
    /// Describe a south-up grid (positive row step) instead of refusing it: info only; the
    /// engines assume north-up rows.
    bool allow_south_up = false;
};

struct Dem {
    std::string path;
    Grid<float> z;          ///< elevations in metres; NaN = no data
    GridGeometry geometry;  ///< of the window that was read
    CrsInfo crs;
    LinearUnit z_unit;                    ///< unit of the stored values
    bool z_unit_from_band = false;        ///< false when assumed (metres) or set by --z-unit
    std::optional<double> nodata;         ///< the band's no-data value, in stored units
    int full_width = 0, full_height = 0;  ///< size of the whole raster
    std::string driver;                   ///< GDAL driver short name
    bool south_up = false;  ///< rows run northwards (only with DemReadOptions::allow_south_up)
};

/// Opens `path` and reports size, CRS and geometry without reading cells.
/// Throws InputError (missing, unreadable, not a raster, rotated, no CRS, bad band).
Dem probeDem(const std::string& path, const DemReadOptions& options = {});
/// Reads the DEM (or the window of it given in options).
Dem readDem(const std::string& path, const DemReadOptions& options = {});

/// Reads the DEM (or the window of it given in options) strip by strip of whole block rows, at
/// least `min_rows` rows each, and hands each strip to `strip` (its first row in the window read,
/// and its cells in metres, NaN = no data). Memory is one strip, with GDAL's block cache bounded
/// to `cache_bytes` meanwhile (0: unchanged). Same cells as readDem.
void readDemStrips(const std::string& path, const DemReadOptions& options, int min_rows,
                   std::int64_t cache_bytes,
                   const std::function<void(int row0, const Grid<float>& strip)>& strip);

/// Sizes (width, height) of the overviews of the DEM's band, finest first (none: empty).
std::vector<std::pair<int, int>> demOverviews(const std::string& path,
                                              const DemReadOptions& options = {});

/// Metres per stored unit and the unit's name from a GDAL unit type string ("m", "ft" …);
/// nullopt for an empty or unknown string.
std::optional<LinearUnit> unitFromUnitType(const std::string& unit_type);

}  // namespace lookfar
