#pragma once
// lookfar.Dem: a DEM as the module's functions take it — a file GDAL reads (its cells read on
// first use of .array) or a numpy array with a geotransform and a CRS (kept in a private GeoTIFF
// so that every run reads it the way the CLI reads a file).
#include <memory>
#include <optional>
#include <string>

#include "Bridge.hpp"
#include "lookfar/io/Dem.hpp"

namespace lookfar::python {

class PyDem {
  public:
    /// Opens `path` (band `band`, 1-based; `z_unit` "m", "ft", "us-ft" or "" for the band's own
    /// unit) and checks it as the CLI does; the cells are read on first use of array().
    static std::shared_ptr<PyDem> open(const std::string& path, int band,
                                       const std::string& z_unit);
    /// A DEM of elevations `z` (rows × columns, metres; NaN or `nodata` for no data) on
    /// `geotransform` (GDAL's six terms, north-up) in `crs` (anything PROJ reads).
    static std::shared_ptr<PyDem> fromArray(const py::array& z, const py::object& geotransform,
                                            const std::string& crs, const py::object& nodata);

    /// Elevations in metres, float32, NaN for no data (read-only).
    py::array array();
    py::tuple geotransform() const;
    const std::string& crs() const { return probe_.crs.wkt; }
    /// The file given to read_dem, or None for a DEM made from an array.
    py::object sourcePath() const;
    int width() const { return probe_.full_width; }
    int height() const { return probe_.full_height; }

    /// The file a run reads (for an array: its private GeoTIFF), the band and the --z-unit.
    const std::string& runPath() const { return path_; }
    int band() const { return band_; }
    const std::string& zUnit() const { return z_unit_; }
    bool isArray() const { return temp_ != nullptr; }

  private:
    std::string path_;
    int band_ = 1;
    std::string z_unit_;
    Dem probe_;  ///< size, geometry and CRS, no cells
    std::optional<py::array> array_;
    std::unique_ptr<TempFolder> temp_;  ///< the array's GeoTIFF
};

/// The DEM a function is given: a path (str or os.PathLike) or a lookfar.Dem.
std::shared_ptr<PyDem> demArgument(const py::object& dem);

}  // namespace lookfar::python
