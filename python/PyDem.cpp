#include "PyDem.hpp"

#include <gdal.h>
#include <ogr_srs_api.h>

#include <cmath>
#include <cstring>
#include <vector>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Text.hpp"
#include "lookfar/core/Units.hpp"
#include "lookfar/io/Crs.hpp"

namespace lookfar::python {

namespace {

/// The read options of a DEM opened with `band` and `z_unit` (UsageError on a unit lookfar does
/// not know, as the CLI's --z-unit).
DemReadOptions readOptions(int band, const std::string& z_unit) {
    DemReadOptions read;
    read.band = band;
    if (!z_unit.empty()) {
        read.z_unit = parseLinearUnit(z_unit);
        if (!read.z_unit)
            throw UsageError("--z-unit: '" + echoText(z_unit) + "' is not m, ft or us-ft");
    }
    return read;
}

/// GDAL's six terms as finite numbers (UsageError otherwise).
std::vector<double> geotransformTerms(const py::object& geotransform) {
    const char* what =
        "Dem.from_array: geotransform must be GDAL's six numbers (x origin, cell width, 0, "
        "y origin, 0, -cell height)";
    std::vector<double> gt;
    try {
        for (const py::handle& v : py::iter(geotransform))
            gt.push_back(v.cast<double>());
    } catch (const py::error_already_set&) {
        throw UsageError(what);
    } catch (const py::cast_error&) {
        throw UsageError(what);
    }
    if (gt.size() != 6)
        throw UsageError(std::string(what) + "; " + std::to_string(gt.size()) + " given");
    for (double v : gt) {
        if (!std::isfinite(v))
            throw UsageError(std::string(what) + "; a term is not finite");
    }
    // The reader's checks (src/io/Dem.cpp), in the same words, before any file is made.
    if (gt[2] != 0.0 || gt[4] != 0.0) {
        throw InputError("Dem.from_array: the geotransform is rotated or sheared (terms " +
                         std::to_string(gt[2]) + ", " + std::to_string(gt[4]) +
                         "); warp it to a north-up grid first (e.g. gdalwarp)");
    }
    if (gt[1] == 0.0 || gt[5] == 0.0)
        throw InputError("Dem.from_array: the geotransform has a zero cell size");
    if (gt[5] > 0.0) {
        throw InputError(
            "Dem.from_array: the geotransform is south-up (positive row step); flip the rows "
            "(z[::-1]) and give the top edge as the y origin with a negative row step");
    }
    return gt;
}

/// Elevations as a C-ordered float32 copy, `nodata` cells as NaN (UsageError on a shape or type
/// that is not a grid of numbers).
py::array_t<float> elevations(const py::array& z, const py::object& nodata) {
    if (z.ndim() != 2) {
        throw UsageError("Dem.from_array: z must be a 2-D array (rows × columns), not " +
                         std::to_string(z.ndim()) + "-D");
    }
    if (z.shape(0) < 1 || z.shape(1) < 1)
        throw UsageError("Dem.from_array: z has no cells");
    const char kind = z.dtype().kind();
    if (kind != 'f' && kind != 'i' && kind != 'u') {
        throw UsageError("Dem.from_array: z holds " + std::string(py::str(z.dtype())) +
                         "; give elevations as numbers (float32, float64 or integers), metres");
    }
    py::array_t<float> out({z.shape(0), z.shape(1)});
    out[py::make_tuple(py::ellipsis())] = z;  // converts any numeric dtype and layout
    if (!nodata.is_none()) {
        double nd = 0;
        try {
            nd = nodata.cast<double>();
        } catch (const py::cast_error&) {
            throw UsageError("Dem.from_array: nodata must be a number or None");
        }
        float* cells = out.mutable_data();
        const float ndf = static_cast<float>(nd);
        for (py::ssize_t i = 0; i < out.size(); ++i) {
            if (cells[i] == ndf)
                cells[i] = std::nanf("");
        }
    }
    return out;
}

/// Writes the cells as a Float32 GeoTIFF with NaN for no data.
void writeGeoTiff(const std::string& path, const py::array_t<float>& z,
                  const std::vector<double>& gt, const std::string& crs) {
    validateCrs(crs, "Dem.from_array: crs");  // "… is not a coordinate reference system PROJ knows"
    OGRSpatialReferenceH srs = OSRNewSpatialReference(nullptr);
    const bool known = OSRSetFromUserInput(srs, crsAsPROJUnderstandsIt(crs).c_str()) == OGRERR_NONE;
    if (!known) {
        OSRDestroySpatialReference(srs);
        throw UsageError("Dem.from_array: crs: '" + echoText(crs) +
                         "' is not a coordinate reference system PROJ knows");
    }
    GDALDriverH drv = GDALGetDriverByName("GTiff");
    const int rows = static_cast<int>(z.shape(0)), cols = static_cast<int>(z.shape(1));
    GDALDatasetH ds =
        drv ? GDALCreate(drv, path.c_str(), cols, rows, 1, GDT_Float32, nullptr) : nullptr;
    if (!ds) {
        OSRDestroySpatialReference(srs);
        throw OutputError("Dem.from_array: cannot write the array's GeoTIFF " + path);
    }
    std::vector<double> terms = gt;
    GDALSetGeoTransform(ds, terms.data());
    GDALSetSpatialRef(ds, srs);
    OSRDestroySpatialReference(srs);
    GDALRasterBandH band = GDALGetRasterBand(ds, 1);
    GDALSetRasterNoDataValue(band, std::nan(""));
    GDALSetRasterUnitType(band, "m");
    const CPLErr err = GDALRasterIO(band, GF_Write, 0, 0, cols, rows, const_cast<float*>(z.data()),
                                    cols, rows, GDT_Float32, 0, 0);
    GDALClose(ds);
    if (err != CE_None)
        throw OutputError("Dem.from_array: cannot write the array's GeoTIFF " + path);
}

py::array readOnly(py::array a) {
    a.attr("flags").attr("writeable") = false;
    return a;
}

}  // namespace

std::shared_ptr<PyDem> PyDem::open(const std::string& path, int band, const std::string& z_unit) {
    auto dem = std::make_shared<PyDem>();
    dem->path_ = path;
    dem->band_ = band;
    dem->z_unit_ = z_unit;
    const DemReadOptions read = readOptions(band, z_unit);
    py::gil_scoped_release release;
    dem->probe_ = probeDem(path, read);
    return dem;
}

std::shared_ptr<PyDem> PyDem::fromArray(const py::array& z, const py::object& geotransform,
                                        const std::string& crs, const py::object& nodata) {
    const std::vector<double> gt = geotransformTerms(geotransform);
    py::array_t<float> cells = elevations(z, nodata);
    auto dem = std::make_shared<PyDem>();
    dem->temp_ = std::make_unique<TempFolder>();
    dem->path_ = dem->temp_->file("array.tif");
    writeGeoTiff(dem->path_, cells, gt, crs);
    dem->probe_ = probeDem(dem->path_, readOptions(1, ""));
    dem->array_ = readOnly(cells);
    return dem;
}

py::array PyDem::array() {
    if (!array_) {
        Dem read;
        {
            py::gil_scoped_release release;
            read = readDem(path_, readOptions(band_, z_unit_));
        }
        py::array_t<float> cells({read.z.height(), read.z.width()});
        std::memcpy(cells.mutable_data(), read.z.data(),
                    sizeof(float) * static_cast<std::size_t>(cells.size()));
        array_ = readOnly(cells);
    }
    return *array_;
}

py::tuple PyDem::geotransform() const {
    const auto& gt = probe_.geometry.geotransform();
    return py::make_tuple(gt[0], gt[1], gt[2], gt[3], gt[4], gt[5]);
}

py::object PyDem::sourcePath() const {
    if (isArray())
        return py::none();
    return py::str(path_);
}

std::shared_ptr<PyDem> demArgument(const py::object& dem) {
    if (py::isinstance<PyDem>(dem))
        return dem.cast<std::shared_ptr<PyDem>>();
    if (py::isinstance<py::str>(dem) || py::hasattr(dem, "__fspath__")) {
        const std::string path = py::str(py::module_::import("os").attr("fspath")(dem));
        return PyDem::open(path, 1, "");
    }
    throw UsageError("dem must be a path or a lookfar.Dem, not a " +
                     std::string(py::str(dem.get_type().attr("__name__"))));
}

}  // namespace lookfar::python
