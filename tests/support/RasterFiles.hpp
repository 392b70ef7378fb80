#pragma once
// Reading back the rasters lookfar writes, through GDAL (the library every GIS reads them
// with): every band's values as doubles (exact for Byte, UInt16 and Float32), the band
// descriptions and units, the no-data value, and dataset metadata.
#include <gdal.h>
#include <gdal_utils.h>
#include <gtest/gtest.h>
#include <ogr_srs_api.h>

#include <array>

#include <cstddef>
#include <string>
#include <vector>

namespace lookfar::testing {

struct Raster {
    int width = 0;
    int height = 0;
    int bands = 0;
    std::vector<std::vector<double>> values;  ///< per band (0-based), row-major
    std::vector<std::string> descriptions;    ///< per band
    std::vector<std::string> units;           ///< per band
    double nodata = 0;                        ///< of band 1
    /// Value of cell (c, r) in band `band` (0-based).
    double at(int band, int c, int r) const {
        return values[band][static_cast<std::size_t>(r) * width + c];
    }
};

/// Every band of the raster at `path`; a test failure (and an empty raster) when GDAL cannot
/// open or read it.
inline Raster readRaster(const std::string& path) {
    GDALAllRegister();
    Raster out;
    GDALDatasetH ds = GDALOpen(path.c_str(), GA_ReadOnly);
    EXPECT_NE(ds, nullptr) << path;
    if (!ds)
        return out;
    out.width = GDALGetRasterXSize(ds);
    out.height = GDALGetRasterYSize(ds);
    out.bands = GDALGetRasterCount(ds);
    for (int b = 1; b <= out.bands; ++b) {
        GDALRasterBandH band = GDALGetRasterBand(ds, b);
        std::vector<double> v(static_cast<std::size_t>(out.width) * out.height);
        EXPECT_EQ(GDALRasterIO(band, GF_Read, 0, 0, out.width, out.height, v.data(), out.width,
                               out.height, GDT_Float64, 0, 0),
                  CE_None)
            << path << " band " << b;
        out.values.push_back(std::move(v));
        out.descriptions.push_back(GDALGetDescription(band));
        out.units.push_back(GDALGetRasterUnitType(band));
        if (b == 1)
            out.nodata = GDALGetRasterNoDataValue(band, nullptr);
    }
    GDALClose(ds);
    return out;
}

/// A dataset metadata item of the raster at `path` ("" when absent or unreadable).
inline std::string metadataItem(const std::string& path, const std::string& key) {
    GDALAllRegister();
    GDALDatasetH ds = GDALOpen(path.c_str(), GA_ReadOnly);
    if (!ds)
        return "";
    const char* v = GDALGetMetadataItem(ds, key.c_str(), nullptr);
    std::string out = v ? v : "";
    GDALClose(ds);
    return out;
}

/// gdal_translate of `src` into `path` with `args` (as on its command line); false, with a test
/// failure, when GDAL fails.
inline bool translateRaster(GDALDatasetH src, const std::string& path,
                            const std::vector<std::string>& args) {
    std::vector<char*> argv;
    for (const auto& a : args)
        argv.push_back(const_cast<char*>(a.c_str()));
    argv.push_back(nullptr);
    GDALTranslateOptions* opts = GDALTranslateOptionsNew(argv.data(), nullptr);
    GDALDatasetH t = GDALTranslate(path.c_str(), src, opts, nullptr);
    GDALTranslateOptionsFree(opts);
    EXPECT_NE(t, nullptr) << path;
    if (!t)
        return false;
    GDALClose(t);
    return true;
}

/// A one-band Float32 GeoTIFF of `width` × `height` cells (row-major `z`) with geotransform
/// `gt` in the CRS `epsg`, no band unit type; a test failure when GDAL cannot write it.
inline void writeFloatGrid(const std::string& path, int width, int height, int epsg,
                           const std::vector<float>& z, std::array<double, 6> gt) {
    GDALAllRegister();
    GDALDatasetH ds = GDALCreate(GDALGetDriverByName("GTiff"), path.c_str(), width, height, 1,
                                 GDT_Float32, nullptr);
    ASSERT_NE(ds, nullptr) << path;
    GDALSetGeoTransform(ds, gt.data());
    OGRSpatialReferenceH srs = OSRNewSpatialReference(nullptr);
    OSRImportFromEPSG(srs, epsg);
    GDALSetSpatialRef(ds, srs);
    OSRDestroySpatialReference(srs);
    EXPECT_EQ(GDALRasterIO(GDALGetRasterBand(ds, 1), GF_Write, 0, 0, width, height,
                           const_cast<float*>(z.data()), width, height, GDT_Float32, 0, 0),
              CE_None);
    GDALClose(ds);
}

}  // namespace lookfar::testing
