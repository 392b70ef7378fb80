#include "lookfar/io/Dem.hpp"

#include <cpl_conv.h>
#include <gdal.h>
#include <ogr_srs_api.h>
#include <sys/stat.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <limits>

#include "GdalSupport.hpp"
#include "lookfar/core/Errors.hpp"
#include "lookfar/io/Crs.hpp"

namespace lookfar {

std::optional<LinearUnit> unitFromUnitType(const std::string& unit_type) {
    if (trim(unit_type).empty())
        return std::nullopt;
    return parseLinearUnit(unit_type);
}

namespace {

struct DatasetCloser {
    GDALDatasetH ds;
    ~DatasetCloser() {
        if (ds)
            GDALClose(ds);
    }
};

CrsInfo crsOf(GDALDatasetH ds, const std::string& path) {
    OGRSpatialReferenceH srs = GDALGetSpatialRef(ds);
    if (!srs) {
        throw InputError(path +
                         ": the DEM has no coordinate reference system; assign one "
                         "(e.g. with gdal_edit.py -a_srs) so distances can be measured");
    }
    CrsInfo info;
    char* wkt = nullptr;
    const char* wkt_options[] = {"FORMAT=WKT2_2019", nullptr};
    if (OSRExportToWktEx(srs, &wkt, wkt_options) != OGRERR_NONE || !wkt) {
        throw InputError(path + ": the DEM's CRS cannot be expressed as WKT");
    }
    info.wkt = wkt;
    CPLFree(wkt);
    const char* name = OSRGetName(srs);
    info.name = name ? name : "unnamed";
    const char* auth = OSRGetAuthorityName(srs, nullptr);
    const char* code = OSRGetAuthorityCode(srs, nullptr);
    if (auth && code)
        info.epsg = std::string(auth) + ":" + code;
    info.geographic = OSRIsGeographic(srs) != 0;
    if (!info.geographic && !OSRIsProjected(srs)) {
        throw InputError(path + ": the DEM's CRS (" + info.name +
                         ") is neither projected nor geographic");
    }
    if (!info.geographic) {
        char* unit_name = nullptr;
        double metres = OSRGetLinearUnits(srs, &unit_name);
        std::string uname = unit_name ? unit_name : "metre";
        auto parsed = parseLinearUnit(uname);
        info.horizontal_unit = parsed ? *parsed : LinearUnit{uname, metres};
        info.horizontal_unit.metres = metres;  // GDAL's factor is authoritative
    }
    OGRErr err = OGRERR_NONE;
    double a = OSRGetSemiMajor(srs, &err);
    double inv_f = OSRGetInvFlattening(srs, &err);
    info.ellipsoid = Ellipsoid{a, inv_f > 0 ? 1.0 / inv_f : 0.0};
    return info;
}

Dem openAndDescribe(const std::string& path, const DemReadOptions& options, GDALDatasetH& ds) {
    io_detail::ensureGdal();
    struct stat st {};
    if (stat(path.c_str(), &st) != 0 && path.rfind("/vsi", 0) != 0) {
        throw InputError(path + ": no such DEM file");
    }
    ds = GDALOpenEx(path.c_str(), GDAL_OF_RASTER | GDAL_OF_READONLY, nullptr, nullptr, nullptr);
    if (!ds) {
        std::string why = io_detail::lastGdalError();
        throw InputError(path + ": not a raster GDAL can read" +
                         (why.empty() ? "" : " (" + why + ")"));
    }
    Dem dem;
    dem.path = path;
    dem.full_width = GDALGetRasterXSize(ds);
    dem.full_height = GDALGetRasterYSize(ds);
    GDALDriverH drv = GDALGetDatasetDriver(ds);
    dem.driver = drv ? GDALGetDriverShortName(drv) : "";
    int nbands = GDALGetRasterCount(ds);
    if (nbands < 1)
        throw InputError(path + ": the raster has no bands");
    if (options.band < 1 || options.band > nbands) {
        throw InvalidOption("band", std::to_string(options.band) + " is not a band of " + path +
                                        " (it has " + std::to_string(nbands) + ")");
    }
    std::array<double, 6> gt{};
    if (GDALGetGeoTransform(ds, gt.data()) != CE_None) {
        throw InputError(path + ": the DEM has no geotransform (no georeferencing)");
    }
    if (gt[2] != 0.0 || gt[4] != 0.0) {
        throw InputError(path + ": the DEM's geotransform is rotated or sheared (terms " +
                         std::to_string(gt[2]) + ", " + std::to_string(gt[4]) +
                         "); warp it to a north-up grid first (e.g. gdalwarp)");
    }
    if (gt[1] == 0.0 || gt[5] == 0.0)
        throw InputError(path + ": the DEM has a zero cell size");
    if (gt[5] > 0.0 && !options.allow_south_up) {
        throw InputError(path +
                         ": the DEM is stored south-up (positive row step); "
                         "warp it to a north-up grid first");
    }
    dem.south_up = gt[5] > 0.0;
    dem.crs = crsOf(ds, path);
    if (dem.crs.geographic) {
        // Row centres past a pole are no place on Earth: refused here, once, for every command.
        const double first = gt[3] + 0.5 * gt[5];
        const double last = gt[3] + (dem.full_height - 0.5) * gt[5];
        const double worst = std::fabs(first) > std::fabs(last) ? first : last;
        if (std::fabs(worst) > 90.0) {
            char buf[160];
            std::snprintf(buf, sizeof buf,
                          ": the DEM's rows reach latitude %.6g°, past the pole; a geographic "
                          "DEM's row centres must lie within −90° to 90°",
                          worst);
            throw InputError(path + buf);
        }
    }
    GDALRasterBandH band = GDALGetRasterBand(ds, options.band);
    int has_nodata = 0;
    double nd = GDALGetRasterNoDataValue(band, &has_nodata);
    if (has_nodata)
        dem.nodata = nd;
    const char* unit_type = GDALGetRasterUnitType(band);
    std::string ut = unit_type ? unit_type : "";
    if (options.z_unit) {
        dem.z_unit = *options.z_unit;
    } else if (auto u = unitFromUnitType(ut)) {
        dem.z_unit = *u;
        dem.z_unit_from_band = true;
    } else if (!trim(ut).empty()) {
        throw InputError(path + ": the band's unit type '" + ut +
                         "' is not a length lookfar knows; give --z-unit m|ft|us-ft");
    } else {
        dem.z_unit = LinearUnit{"metre", 1.0};
    }

    int c0 = options.win_col, r0 = options.win_row;
    int w = options.win_width ? options.win_width : dem.full_width;
    int h = options.win_height ? options.win_height : dem.full_height;
    if (c0 < 0 || r0 < 0 || w <= 0 || h <= 0 || c0 + w > dem.full_width ||
        r0 + h > dem.full_height) {
        throw InternalError("window outside the raster " + path);
    }
    double unit = dem.crs.geographic ? 1.0 : dem.crs.horizontal_unit.metres;
    // The window's geometry computes from the whole raster's geotransform, so coordinates and
    // distances on it are the same bits as on the whole raster.
    dem.geometry = GridGeometry(dem.full_width, dem.full_height, gt, dem.crs.geographic, unit,
                                dem.crs.ellipsoid)
                       .window(c0, r0, w, h);
    return dem;
}

}  // namespace

Dem probeDem(const std::string& path, const DemReadOptions& options) {
    GDALDatasetH ds = nullptr;
    DatasetCloser closer{nullptr};
    Dem dem = openAndDescribe(path, options, ds);
    closer.ds = ds;
    return dem;
}

namespace {

/// No-data to NaN and stored units to metres, in place.
void toMetres(const Dem& dem, float* z, std::size_t n) {
    const float nan = std::numeric_limits<float>::quiet_NaN();
    const bool has_nd = dem.nodata.has_value();
    const float nd = has_nd ? static_cast<float>(*dem.nodata) : 0.0f;
    const bool nd_is_nan = has_nd && std::isnan(*dem.nodata);
    const double scale = dem.z_unit.metres;
    for (std::size_t i = 0; i < n; ++i) {
        float v = z[i];
        if ((has_nd && !nd_is_nan && v == nd) || !std::isfinite(v)) {
            z[i] = nan;
        } else if (scale != 1.0) {
            z[i] = static_cast<float>(v * scale);
        }
    }
}

/// Rows of the strips a window is read in: whole block rows, at least `min_rows`.
int stripRows(GDALRasterBandH band, int min_rows) {
    int block_x = 0, block_y = 0;
    GDALGetBlockSize(band, &block_x, &block_y);
    block_y = std::max(1, block_y);
    return block_y * std::max(1, (min_rows + block_y - 1) / block_y);
}

/// The DEM opened and described, its dataset in `ds` (closed again when describing throws).
Dem openDem(const std::string& path, const DemReadOptions& options, GDALDatasetH& ds) {
    try {
        return openAndDescribe(path, options, ds);
    } catch (...) {
        if (ds)
            GDALClose(ds);
        ds = nullptr;
        throw;
    }
}

/// Reads the window of `dem` (opened as `ds`) in strips of whole block rows, at least
/// `min_rows` each, dropping the band's block cache after each: otherwise GDAL keeps a decoded
/// copy of every block (up to GDAL_CACHEMAX, 5 % of RAM by default). `into(r, rows)` gives where
/// rows [r, r + rows) of the window go (rows × width floats); `done(r, rows)` follows each strip.
/// With options.overview ≥ 0, the whole of that overview is read instead.
template <typename Into, typename Done>
void readStrips(GDALDatasetH ds, const Dem& dem, const DemReadOptions& options, int min_rows,
                Into into, Done done) {
    int w = dem.geometry.width(), h = dem.geometry.height();
    GDALRasterBandH band = GDALGetRasterBand(ds, options.band);
    if (options.overview >= 0) {
        band = GDALGetOverview(band, options.overview);
        if (!band)
            throw InternalError(dem.path + ": no overview " + std::to_string(options.overview));
        w = GDALGetRasterBandXSize(band);
        h = GDALGetRasterBandYSize(band);
    }
    const int strip_rows = stripRows(band, min_rows);
    for (int r = 0; r < h;) {
        const int abs_row = options.win_row + r;
        const int end_row = std::min((abs_row / strip_rows + 1) * strip_rows, options.win_row + h);
        const int rows = end_row - abs_row;
        if (GDALRasterIO(band, GF_Read, options.win_col, abs_row, w, rows, into(r, rows, w), w,
                         rows, GDT_Float32, 0, 0) != CE_None) {
            throw InputError(dem.path + ": reading the elevations failed (" +
                             io_detail::lastGdalError() + ")");
        }
        GDALFlushRasterCache(band);
        done(r, rows);
        r += rows;
    }
}

}  // namespace

Dem readDem(const std::string& path, const DemReadOptions& options) {
    GDALDatasetH ds = nullptr;
    Dem dem = openDem(path, options, ds);
    DatasetCloser closer{ds};
    dem.z = Grid<float>(dem.geometry.width(), dem.geometry.height());
    readStrips(
        ds, dem, options, 256, [&](int r, int, int) { return dem.z.row(r); }, [](int, int) {});
    toMetres(dem, dem.z.data(), dem.z.size());
    return dem;
}

void readDemStrips(const std::string& path, const DemReadOptions& options, int min_rows,
                   std::int64_t cache_bytes,
                   const std::function<void(int row0, const Grid<float>& strip)>& strip) {
    GDALDatasetH ds = nullptr;
    const Dem dem = openDem(path, options, ds);
    DatasetCloser closer{ds};
    // GDAL's block cache is bounded meanwhile: the blocks of a VRT's sources are not dropped
    // with the VRT band's own cache.
    struct CacheLimit {
        GIntBig saved = GDALGetCacheMax64();
        explicit CacheLimit(std::int64_t bytes) {
            if (bytes > 0 && bytes < saved)
                GDALSetCacheMax64(bytes);
        }
        ~CacheLimit() { GDALSetCacheMax64(saved); }
    } limit(cache_bytes);
    Grid<float> buffer;
    readStrips(
        ds, dem, options, min_rows,
        [&](int, int rows, int width) {
            if (buffer.width() != width || buffer.height() != rows)
                buffer = Grid<float>(width, rows);
            return buffer.data();
        },
        [&](int r, int) {
            toMetres(dem, buffer.data(), buffer.size());
            strip(r, buffer);
        });
}

std::vector<std::pair<int, int>> demOverviews(const std::string& path,
                                              const DemReadOptions& options) {
    GDALDatasetH ds = nullptr;
    const Dem dem = openDem(path, options, ds);
    DatasetCloser closer{ds};
    GDALRasterBandH band = GDALGetRasterBand(ds, options.band);
    std::vector<std::pair<int, int>> sizes;
    for (int i = 0; i < GDALGetOverviewCount(band); ++i) {
        GDALRasterBandH o = GDALGetOverview(band, i);
        sizes.emplace_back(o ? GDALGetRasterBandXSize(o) : 0, o ? GDALGetRasterBandYSize(o) : 0);
    }
    return sizes;
}

}  // namespace lookfar
