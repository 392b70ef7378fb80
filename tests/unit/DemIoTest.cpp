// Reading DEMs and writing rasters through GDAL (the io layer).
#include <gtest/gtest.h>

#include <cmath>

#include "../support/CliRunner.hpp"
#include "lookfar/core/Errors.hpp"
#include "lookfar/io/Dem.hpp"
#include "lookfar/io/RasterWriter.hpp"

using namespace lookfar;
using namespace lookfar::testing;

TEST(DemIoTest, NoDataBecomesNaN) {
    Dem dem = readDem(testRaster("nodata_hole.tif"));
    EXPECT_TRUE(std::isnan(dem.z(50, 50)));
    EXPECT_FALSE(std::isnan(dem.z(10, 10)));
}

TEST(DemIoTest, UsSurveyFeetBecomeMetres) {
    Dem ft = readDem(testRaster("twin_usft.tif"));
    Dem m = readDem(testRaster("twin_metres.tif"));
    ASSERT_EQ(ft.z.size(), m.z.size());
    EXPECT_EQ(ft.z_unit.name, "US survey foot");
    double worst = 0;
    for (std::size_t i = 0; i < m.z.size(); ++i)
        worst = std::max(worst, double(std::fabs(ft.z.data()[i] - m.z.data()[i])));
    EXPECT_LT(worst, 1e-3);
    EXPECT_NEAR(ft.geometry.cellWidthM(0), m.geometry.cellWidthM(0), 1e-4);
}

TEST(DemIoTest, ZUnitOverride) {
    DemReadOptions o;
    o.z_unit = LinearUnit{"foot", 0.3048};
    Dem dem = readDem(testRaster("wall.tif"), o);
    EXPECT_NEAR(dem.z(100, 50), 50 * 0.3048, 1e-5);
}

TEST(DemIoTest, ReadsAWindow) {
    DemReadOptions o;
    o.win_col = 90;
    o.win_row = 10;
    o.win_width = 20;
    o.win_height = 5;
    Dem full = readDem(testRaster("wall.tif"));
    Dem win = readDem(testRaster("wall.tif"), o);
    EXPECT_EQ(win.z.width(), 20);
    EXPECT_EQ(win.z(10, 0), full.z(100, 10));
    EXPECT_DOUBLE_EQ(win.geometry.mapX(0), full.geometry.mapX(90));
    EXPECT_DOUBLE_EQ(win.geometry.mapY(0), full.geometry.mapY(10));
}

TEST(DemIoTest, WriterLeavesNoFileWithoutCommit) {
    ScratchDir dir;
    RasterSpec spec;
    spec.path = dir.file("out.tif");
    spec.width = spec.height = 8;
    spec.type = PixelType::Byte;
    spec.nodata = 255;
    spec.metadata = {{"LOOKFAR_TEST", "yes"}};
    {
        RasterWriter w(spec);
        std::vector<std::uint8_t> data(64, 1);
        w.writeBand(1, data.data());
    }  // destroyed without commit, as on an error
    EXPECT_TRUE(dir.entries().empty());
    {
        RasterWriter w(spec);
        std::vector<std::uint8_t> data(64, 1);
        w.writeBand(1, data.data());
        w.commit();
    }
    EXPECT_EQ(dir.entries(), std::vector<std::string>{"out.tif"});
}

TEST(DemIoTest, OutputChecks) {
    ScratchDir dir;
    EXPECT_THROW(checkOutputPath("/no/such/dir/x.tif", {}, false), OutputError);
    EXPECT_NO_THROW(checkOutputPath(dir.file("x.tif"), {}, false));
    EXPECT_THROW(checkOutputPath(testRaster("wall.tif"), {testRaster("wall.tif")}, true),
                 OutputError);
}

#include <gdal.h>
#include <gdal_utils.h>

namespace {
std::string readMetadata(const std::string& path, const char* key, const char* domain = nullptr) {
    GDALAllRegister();
    GDALDatasetH ds = GDALOpen(path.c_str(), GA_ReadOnly);
    if (!ds)
        return "";
    const char* v = GDALGetMetadataItem(ds, key, domain);
    std::string out = v ? v : "";
    GDALClose(ds);
    return out;
}
}  // namespace

TEST(DemIoTest, WriterRecordsMetadataDescriptionsAndCreationOptions) {
    ScratchDir dir;
    RasterSpec spec;
    spec.path = dir.file("out.tif");
    spec.width = spec.height = 16;
    spec.bands = 2;
    spec.type = PixelType::Float32;
    spec.nodata = -9999;
    spec.geotransform = {1000, 10, 0, 2000, 0, -10};
    spec.band_descriptions = {"first band", "second band"};
    spec.metadata = {{"LOOKFAR_REFRACTION", "0.13"}};
    spec.creation_options = {"COMPRESS=LZW"};
    {
        RasterWriter w(spec);
        std::vector<float> data(256, 2.5f);
        w.writeBand(1, data.data());
        w.writeBand(2, data.data());
        w.commit();
    }
    EXPECT_EQ(readMetadata(spec.path, "LOOKFAR_REFRACTION"), "0.13");
    EXPECT_EQ(readMetadata(spec.path, "COMPRESSION", "IMAGE_STRUCTURE"), "LZW");
    GDALDatasetH ds = GDALOpen(spec.path.c_str(), GA_ReadOnly);
    ASSERT_NE(ds, nullptr);
    EXPECT_STREQ(GDALGetDescription(GDALGetRasterBand(ds, 2)), "second band");
    int has = 0;
    EXPECT_DOUBLE_EQ(GDALGetRasterNoDataValue(GDALGetRasterBand(ds, 1), &has), -9999);
    int bx = 0, by = 0;
    GDALGetBlockSize(GDALGetRasterBand(ds, 1), &bx, &by);
    EXPECT_EQ(bx, 256);  // tiled by default; a user option adds to the defaults
    GDALClose(ds);
}

// Any format GDAL reads: a VRT mosaic of two halves of a DEM reads as the whole DEM.
TEST(DemIoTest, ReadsAVrtMosaic) {
    GDALAllRegister();  // this test calls GDAL itself before lookfar's io has registered it
    ScratchDir dir;
    std::string src = testRaster("cone.tif");
    GDALDatasetH whole = GDALOpen(src.c_str(), GA_ReadOnly);
    ASSERT_NE(whole, nullptr);
    std::string west = dir.file("west.tif"), east = dir.file("east.tif");
    auto cut = [&](const std::string& out, const char* xoff, const char* xsize) {
        const char* argv[] = {"-srcwin", xoff, "0", xsize, "301", nullptr};
        GDALTranslateOptions* o = GDALTranslateOptionsNew(const_cast<char**>(argv), nullptr);
        GDALDatasetH d = GDALTranslate(out.c_str(), whole, o, nullptr);
        GDALTranslateOptionsFree(o);
        GDALClose(d);
    };
    cut(west, "0", "150");
    cut(east, "150", "151");
    GDALClose(whole);
    const char* inputs[] = {west.c_str(), east.c_str()};
    std::string vrt = dir.file("mosaic.vrt");
    GDALDatasetH v = GDALBuildVRT(vrt.c_str(), 2, nullptr, inputs, nullptr, nullptr);
    ASSERT_NE(v, nullptr);
    GDALClose(v);
    Dem mosaic = readDem(vrt);
    Dem full = readDem(src);
    EXPECT_EQ(mosaic.driver, "VRT");
    ASSERT_EQ(mosaic.z.size(), full.z.size());
    EXPECT_EQ(mosaic.z.cells(), full.z.cells());
}

TEST(DemIoTest, BadBandIsAUsageError) {
    DemReadOptions o;
    o.band = 3;
    EXPECT_THROW(readDem(testRaster("wall.tif"), o), UsageError);
}
