// Rasters GIS users open quickly: colour tables, internal overviews and the cloud-optimised
// layout, read back with GDAL. Outside checks: GDAL's own reading of the colour table and of the
// overview levels; GDAL reports LAYOUT=COG in IMAGE_STRUCTURE for a file that follows the COG
// layout (GDAL COG driver documentation); an average overview cell is the mean of its four cells
// (definition of the average resampling).
#include <gdal.h>
#include <gtest/gtest.h>

#include <numeric>

#include "../support/CliRunner.hpp"
#include "../support/RasterFiles.hpp"
#include "lookfar/core/Errors.hpp"
#include "lookfar/io/RasterWriter.hpp"

using namespace lookfar;
using namespace lookfar::testing;

namespace {

RasterSpec spec(const std::string& path, PixelType type, int w, int h, double nodata) {
    RasterSpec s;
    s.path = path;
    s.width = w;
    s.height = h;
    s.type = type;
    s.nodata = nodata;
    s.geotransform = {425000, 25, 0, 5600000, 0, -25};
    s.metadata["LOOKFAR_COMMAND"] = "test";
    return s;
}

struct Opened {
    GDALDatasetH ds;
    explicit Opened(const std::string& path) : ds(GDALOpen(path.c_str(), GA_ReadOnly)) {
        EXPECT_NE(ds, nullptr) << path;
    }
    ~Opened() {
        if (ds)
            GDALClose(ds);
    }
    GDALRasterBandH band() const { return GDALGetRasterBand(ds, 1); }
};

std::vector<float> ramp(int w, int h) {
    std::vector<float> v(static_cast<std::size_t>(w) * h);
    for (int r = 0; r < h; ++r)
        for (int c = 0; c < w; ++c)
            v[static_cast<std::size_t>(r) * w + c] = static_cast<float>(c + 1000 * r);
    return v;
}

}  // namespace

TEST(RasterLayoutTest, ClassLayersCarryTheirColourTable) {
    ScratchDir dir;
    auto s = spec(dir.file("visible.tif"), PixelType::Byte, 3, 1, 255);
    s.palette = classPalette();
    RasterWriter w(s);
    const std::uint8_t v[3] = {0, 1, 255};
    w.writeBand(1, v);
    w.commit();
    GDALAllRegister();
    Opened f(dir.file("visible.tif"));
    EXPECT_EQ(GDALGetRasterColorInterpretation(f.band()), GCI_PaletteIndex);
    GDALColorTableH t = GDALGetRasterColorTable(f.band());
    ASSERT_NE(t, nullptr);
    const auto hidden = *GDALGetColorEntry(t, 0), visible = *GDALGetColorEntry(t, 1),
               nodata = *GDALGetColorEntry(t, 255);
    EXPECT_EQ(hidden.c4, 255);
    EXPECT_EQ(visible.c4, 255);
    EXPECT_EQ(nodata.c4, 0) << "no data is transparent";
    EXPECT_NE(hidden.c1 * 65536 + hidden.c2 * 256 + hidden.c3,
              visible.c1 * 65536 + visible.c2 * 256 + visible.c3);
    EXPECT_EQ(readRaster(dir.file("visible.tif")).values[0], (std::vector<double>{0, 1, 255}));
}

TEST(RasterLayoutTest, CountLayersCarryARampFromFewToMany) {
    const auto p = countPalette(7);
    ASSERT_EQ(p.size(), 8u);
    // Darker with every count (sum of the channels falls): the ramp reads from few to many.
    for (int v = 2; v <= 7; ++v)
        EXPECT_LT(p[v][0] + p[v][1] + p[v][2], p[v - 1][0] + p[v - 1][1] + p[v - 1][2]) << v;
    ScratchDir dir;
    auto s = spec(dir.file("count.tif"), PixelType::UInt16, 2, 1, 65535);
    s.palette = p;
    RasterWriter w(s);
    const std::uint16_t v[2] = {7, 65535};
    w.writeBand(1, v);
    w.commit();
    GDALAllRegister();
    Opened f(dir.file("count.tif"));
    GDALColorTableH t = GDALGetRasterColorTable(f.band());
    ASSERT_NE(t, nullptr);
    EXPECT_EQ(GDALGetColorEntry(t, 7)->c1, p[7][0]);
    EXPECT_EQ(GDALGetColorEntry(t, 65535)->c4, 0) << "no data is transparent";
}

TEST(RasterLayoutTest, GeoTiffOverviewsAverageContinuousValues) {
    ScratchDir dir;
    auto s = spec(dir.file("angle.tif"), PixelType::Float32, 1000, 600, -9999);
    s.overviews = Overviews::Average;
    RasterWriter w(s);
    const auto v = ramp(1000, 600);
    w.writeBand(1, v.data());
    w.commit();
    GDALAllRegister();
    Opened f(dir.file("angle.tif"));
    ASSERT_EQ(GDALGetOverviewCount(f.band()), 2);  // 500 × 300, then 250 × 150 (fits 256)
    GDALRasterBandH o = GDALGetOverview(f.band(), 0);
    EXPECT_EQ(GDALGetRasterBandXSize(o), 500);
    float cell = 0;
    ASSERT_EQ(GDALRasterIO(o, GF_Read, 3, 2, 1, 1, &cell, 1, 1, GDT_Float32, 0, 0), CE_None);
    // Mean of cells (6, 4), (7, 4), (6, 5), (7, 5).
    EXPECT_FLOAT_EQ(cell, (6 + 7 + 6 + 7) / 4.0f + 1000 * (4 + 5) / 2.0f);
}

TEST(RasterLayoutTest, CloudOptimisedLayoutKeepsValuesMetadataAndNoData) {
    ScratchDir dir;
    auto s = spec(dir.file("count.tif"), PixelType::UInt16, 700, 300, 65535);
    s.layout = RasterLayout::Cog;
    s.palette = countPalette(3);
    RasterWriter w(s);
    std::vector<std::uint16_t> v(700 * 300);
    for (std::size_t i = 0; i < v.size(); ++i)
        v[i] = static_cast<std::uint16_t>(i % 5 == 4 ? 65535 : i % 4);
    w.writeBand(1, v.data());
    w.commit();
    EXPECT_EQ(dir.entries().size(), 1u) << "no temporary left";
    GDALAllRegister();
    {
        Opened f(dir.file("count.tif"));
        const char* layout = GDALGetMetadataItem(f.ds, "LAYOUT", "IMAGE_STRUCTURE");
        EXPECT_STREQ(layout ? layout : "", "COG");
        EXPECT_GE(GDALGetOverviewCount(f.band()), 1);
        EXPECT_STREQ(GDALGetMetadataItem(f.ds, "LOOKFAR_COMMAND", nullptr), "test");
        EXPECT_NE(GDALGetRasterColorTable(f.band()), nullptr);
    }
    const auto back = readRaster(dir.file("count.tif"));
    EXPECT_EQ(back.nodata, 65535);
    ASSERT_EQ(back.values[0].size(), v.size());
    EXPECT_TRUE(std::equal(v.begin(), v.end(), back.values[0].begin()));
}

// Issue 12 item 6: creation options are checked before any work, against GDAL's own list for its
// GeoTIFF writer (GDALValidateCreationOptions) and TIFF 6.0's rule that tiles are multiples of 16.
TEST(RasterLayoutTest, CreationOptionsAreCheckedBeforeAnyWork) {
    EXPECT_NO_THROW(
        checkCreationOptions({"COMPRESS=LZW", "BLOCKXSIZE=512", "PREDICTOR=2"}, "--co"));
    const std::vector<std::pair<std::string, std::string>> refused{
        {"COMPRESS=BOGUS", "COMPRESS=BOGUS"}, {"BLOCKXSIZE=100", "multiple of 16"},
        {"BLOCKYSIZE=x", "multiple of 16"},   {"NO_SUCH_KEY=1", "NO_SUCH_KEY=1"},
        {"COMPRESS", "not KEY=VALUE"},
    };
    for (const auto& [co, needle] : refused) {
        try {
            checkCreationOptions({"TILED=YES", co}, "--co");
            ADD_FAILURE() << co << " was accepted";
        } catch (const UsageError& e) {
            const std::string m = e.what();
            EXPECT_EQ(m.rfind("--co", 0), 0u) << m;
            EXPECT_NE(m.find(needle), std::string::npos) << m;
        }
    }
}

TEST(RasterLayoutTest, RasterOutputsAskForAGeoTiffByTheirExtension) {
    EXPECT_NO_THROW(checkRasterExtension("out/v.tif", "-o"));
    EXPECT_NO_THROW(checkRasterExtension("V.TIFF", "-o"));
    for (const std::string bad : {"v.png", "v", "dir.tif/v", "v.tif.bak"}) {
        try {
            checkRasterExtension(bad, "--margin");
            ADD_FAILURE() << bad << " was accepted";
        } catch (const UsageError& e) {
            EXPECT_NE(std::string(e.what()).find("--margin " + bad), std::string::npos) << e.what();
        }
    }
}
