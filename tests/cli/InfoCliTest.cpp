// `lookfar info` and the bad-input rules of docs/design.md, run on the built binary.
#include <gtest/gtest.h>

#include <nlohmann/json.hpp>

#include <gdal.h>
#include <ogr_srs_api.h>

#include <fstream>
#include <vector>

#include "../support/CliRunner.hpp"
#include "../support/RasterFiles.hpp"

using namespace lookfar::testing;

TEST(InfoCliTest, DescribesTheDemoDem) {
    CliResult r = runLookfar({"info", testRaster("demo_coast.tif"), "--json"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    auto j = nlohmann::json::parse(r.out);
    EXPECT_EQ(j["tool"], "lookfar");
    EXPECT_EQ(j["dem"]["crs"], "EPSG:32630");
    EXPECT_EQ(j["dem"]["width"], 500);
    EXPECT_EQ(j["dem"]["height"], 400);
    EXPECT_DOUBLE_EQ(j["dem"]["cell_size_m"].get<double>(), 25.0);
    EXPECT_NEAR(j["elevation_m"]["max"].get<double>(), 900.0, 0.05);
    // The lon/lat extent comes from PROJ: UTM 30N around x = 426 km lies west of −3°.
    EXPECT_LT(j["dem"]["extent_lonlat"]["east"].get<double>(), -3.0);
}

TEST(InfoCliTest, UsSurveyFeetAreConvertedToMetres) {
    CliResult ft = runLookfar({"info", testRaster("twin_usft.tif"), "--json"});
    CliResult m = runLookfar({"info", testRaster("twin_metres.tif"), "--json"});
    ASSERT_EQ(ft.exit_code, 0) << ft.err;
    ASSERT_EQ(m.exit_code, 0) << m.err;
    auto jf = nlohmann::json::parse(ft.out), jm = nlohmann::json::parse(m.out);
    EXPECT_EQ(jf["dem"]["horizontal_unit"], "US survey foot");
    EXPECT_EQ(jf["dem"]["vertical_unit"], "US survey foot");
    EXPECT_NEAR(jf["dem"]["cell_size_m"].get<double>(), jm["dem"]["cell_size_m"].get<double>(),
                1e-4);
    EXPECT_NEAR(jf["elevation_m"]["max"].get<double>(), jm["elevation_m"]["max"].get<double>(),
                1e-3);
    EXPECT_NEAR(jf["elevation_m"]["mean"].get<double>(), jm["elevation_m"]["mean"].get<double>(),
                1e-3);
}

TEST(InfoCliTest, CountsNoDataCells) {
    CliResult r = runLookfar({"info", testRaster("nodata_hole.tif"), "--json"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    auto j = nlohmann::json::parse(r.out);
    EXPECT_EQ(j["dem"]["nodata_cells"], 100);
    EXPECT_DOUBLE_EQ(j["dem"]["nodata_value"].get<double>(), -9999.0);
}

TEST(InfoCliTest, GeographicDemUsesEllipsoidalCellSizes) {
    CliResult r = runLookfar({"info", testRaster("geographic_hills.tif"), "--json"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    auto j = nlohmann::json::parse(r.out);
    EXPECT_TRUE(j["dem"]["geographic"].get<bool>());
    // 1/1200° of latitude ≈ 92.6 m; of longitude at 47° ≈ 63.4 m (WGS84 M and N cos φ).
    EXPECT_NEAR(j["dem"]["cell_height_m"].get<double>(), 92.6, 0.2);
    EXPECT_NEAR(j["dem"]["cell_width_m"].get<double>(), 63.4, 0.2);
}

TEST(BadInputCliTest, MissingDemIsBadInputNotUsage) {
    CliResult r = runLookfar({"info", "/no/such/dem.tif"});
    EXPECT_EQ(r.exit_code, 3);
    EXPECT_NE(firstLine(r.err).find("/no/such/dem.tif"), std::string::npos) << r.err;
}

TEST(BadInputCliTest, FileThatIsNotARaster) {
    CliResult r = runLookfar({"info", testRaster("not_a_raster.tif")});
    EXPECT_EQ(r.exit_code, 3);
    EXPECT_NE(firstLine(r.err).find("not a raster"), std::string::npos) << r.err;
}

TEST(BadInputCliTest, RotatedGeotransformIsRefused) {
    CliResult r = runLookfar({"info", testRaster("rotated.tif")});
    EXPECT_EQ(r.exit_code, 3);
    EXPECT_NE(firstLine(r.err).find("rotated"), std::string::npos) << r.err;
}

namespace {
/// A Float32 GeoTIFF of w × h cells of 10 m in `epsg`, no band unit type.
void writeGrid(const std::string& path, int w, int h, int epsg, const std::vector<float>& z,
               double x0 = 1000, double y0 = 5000) {
    writeFloatGrid(path, w, h, epsg, z, {x0, 10, 0, y0, 0, -10});
}
}  // namespace

// Issue 12 item 17d: elevations no Earth holds (an undeclared no-data value of 1e30 here) go
// through, but with one warning naming the count and the first cell; and a CRS in feet with no
// vertical unit on the band says the elevations are read as metres. Both are warnings: exit 0.
TEST(InfoCliTest, ImplausibleElevationsAndFeetWithoutAVerticalUnitAreSaid) {
    ScratchDir dir;
    std::vector<float> z(20 * 10, 50.0f);
    z[3 * 20 + 7] = 1e30f;  // column 7, row 3
    z[5 * 20 + 2] = 1e30f;
    z[9 * 20 + 19] = -20000.0f;
    writeGrid(dir.file("bad.tif"), 20, 10, 32630, z);
    CliResult r = runLookfar({"info", dir.file("bad.tif"), "--json"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    EXPECT_EQ(nlohmann::json::parse(r.out)["elevation_m"]["implausible_cells"], 3);
    EXPECT_NE(r.err.find("3 cells hold elevations outside −12 km to +9 km (the first 1e+30 m at "
                         "column 7, row 3)"),
              std::string::npos)
        << r.err;
    r = runLookfar({"viewshed", dir.file("bad.tif"), "--observer", "1005,4995", "-o",
                    dir.file("v.tif"), "--quiet"});
    EXPECT_EQ(r.exit_code, 0) << r.err;
    EXPECT_NE(r.err.find("3 cells hold elevations outside"), std::string::npos) << r.err;

    // EPSG:2227 (California zone 3, US survey feet), no unit type on the band.
    writeGrid(dir.file("feet.tif"), 20, 10, 2227, std::vector<float>(200, 100.0f), 6000000,
              2000000);
    r = runLookfar({"info", dir.file("feet.tif"), "--quiet"});
    EXPECT_EQ(r.exit_code, 0) << r.err;
    EXPECT_NE(r.err.find("band gives no vertical unit: its elevations are read as metres"),
              std::string::npos)
        << r.err;
    r = runLookfar({"info", dir.file("feet.tif"), "--quiet", "--z-unit", "us-ft"});
    EXPECT_EQ(r.err.find("vertical unit"), std::string::npos) << r.err;
    r = runLookfar({"info", testRaster("demo_coast.tif"), "--quiet"});
    EXPECT_EQ(r.err, "");  // metres, plausible: nothing said
}

// Issue 12 item 17c: a geographic DEM whose rows reach past a pole was accepted by some commands
// and refused by others in other words; every command now refuses it as bad input (exit 3). Here
// 10° cells from latitude 100° down: row centres 95° and 85°.
TEST(InfoCliTest, GeographicRowsPastThePoleAreBadInputForEveryCommand) {
    ScratchDir dir;
    writeGrid(dir.file("pole.tif"), 3, 2, 4326, std::vector<float>(6, 10.0f), 0, 100);
    for (const std::vector<std::string>& args :
         {std::vector<std::string>{"info", dir.file("pole.tif")},
          {"viewshed", dir.file("pole.tif"), "--observer", "5,85", "-o", dir.file("v.tif")},
          {"horizon", dir.file("pole.tif"), "--at", "5,85"}}) {
        const CliResult r = runLookfar(args);
        EXPECT_EQ(r.exit_code, 3) << args[0] << ": " << r.err;
        EXPECT_NE(firstLine(r.err).find("reach latitude 95°, past the pole"), std::string::npos)
            << r.err;
    }
    EXPECT_EQ(dir.entries().size(), 1u);  // the DEM alone
}

// Issue 12 item 16: info is the command for diagnosing a DEM, so it describes a south-up grid
// (positive row step) instead of refusing it; the engines still refuse it with the hint. A 4 × 3
// grid of 10 m cells whose first row is the southern one: the extent is 1000–1040 by 5000–5030
// and the elevations 1 … 12 (mean 6.5), whatever the row order.
TEST(InfoCliTest, DescribesASouthUpDemThatTheEnginesRefuse) {
    ScratchDir dir;
    const std::string path = dir.file("south_up.tif");
    GDALAllRegister();
    GDALDatasetH ds =
        GDALCreate(GDALGetDriverByName("GTiff"), path.c_str(), 4, 3, 1, GDT_Float32, nullptr);
    double gt[6] = {1000, 10, 0, 5000, 0, 10};
    GDALSetGeoTransform(ds, gt);
    OGRSpatialReferenceH srs = OSRNewSpatialReference(nullptr);
    OSRImportFromEPSG(srs, 32630);
    GDALSetSpatialRef(ds, srs);
    OSRDestroySpatialReference(srs);
    std::vector<float> z(12);
    for (int i = 0; i < 12; ++i)
        z[i] = static_cast<float>(i + 1);
    ASSERT_EQ(GDALRasterIO(GDALGetRasterBand(ds, 1), GF_Write, 0, 0, 4, 3, z.data(), 4, 3,
                           GDT_Float32, 0, 0),
              CE_None);
    GDALClose(ds);

    CliResult r = runLookfar({"info", path, "--json"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const auto j = nlohmann::json::parse(r.out);
    EXPECT_TRUE(j["dem"]["south_up"].get<bool>());
    EXPECT_DOUBLE_EQ(j["dem"]["extent"]["south"].get<double>(), 5000.0);
    EXPECT_DOUBLE_EQ(j["dem"]["extent"]["north"].get<double>(), 5030.0);
    EXPECT_DOUBLE_EQ(j["dem"]["extent"]["west"].get<double>(), 1000.0);
    EXPECT_DOUBLE_EQ(j["dem"]["extent"]["east"].get<double>(), 1040.0);
    EXPECT_DOUBLE_EQ(j["dem"]["area_m2"].get<double>(), 1200.0);
    EXPECT_DOUBLE_EQ(j["elevation_m"]["min"].get<double>(), 1.0);
    EXPECT_DOUBLE_EQ(j["elevation_m"]["max"].get<double>(), 12.0);
    EXPECT_DOUBLE_EQ(j["elevation_m"]["mean"].get<double>(), 6.5);
    r = runLookfar({"info", path});
    EXPECT_NE(r.out.find("south-up"), std::string::npos) << r.out;

    r = runLookfar({"viewshed", path, "--observer", "1015,5015", "-o", dir.file("v.tif")});
    EXPECT_EQ(r.exit_code, 3) << r.err;
    EXPECT_NE(firstLine(r.err).find("south-up"), std::string::npos) << r.err;
    EXPECT_NE(firstLine(r.err).find("north-up"), std::string::npos) << r.err;
}

TEST(BadInputCliTest, UnknownCrsStringIsAUsageError) {
    CliResult r = runLookfar({"info", testRaster("wall.tif"), "--crs", "EPSG:99999999"});
    EXPECT_EQ(r.exit_code, 2);
    EXPECT_NE(firstLine(r.err).find("EPSG:99999999"), std::string::npos) << r.err;
}

TEST(BadInputCliTest, UnknownOptionIsAUsageError) {
    CliResult r = runLookfar({"info", testRaster("wall.tif"), "--no-such-option"});
    EXPECT_EQ(r.exit_code, 2);
}

TEST(BadInputCliTest, UnwritableOutputFolder) {
    CliResult r =
        runLookfar({"info", testRaster("wall.tif"), "--summary", "/no/such/folder/s.json"});
    EXPECT_EQ(r.exit_code, 4);
    EXPECT_NE(firstLine(r.err).find("/no/such/folder"), std::string::npos) << r.err;
}

TEST(BadInputCliTest, ExistingOutputNeedsOverwrite) {
    ScratchDir dir;
    std::string out = dir.file("summary.json");
    std::ofstream(out) << "keep me";
    CliResult r = runLookfar({"info", testRaster("wall.tif"), "--summary", out});
    EXPECT_EQ(r.exit_code, 4);
    EXPECT_NE(firstLine(r.err).find("--overwrite"), std::string::npos) << r.err;
    EXPECT_EQ(readFile(out), "keep me");
}

TEST(BadInputCliTest, OutputEqualToInputIsAlwaysRefused) {
    ScratchDir dir;
    std::string copy = dir.file("dem.tif");
    std::ofstream(copy, std::ios::binary) << readFile(testRaster("wall.tif"));
    std::string before = readFile(copy);
    // Another spelling of the same file is still the same file.
    std::string other_spelling = dir.path() + "/./dem.tif";
    CliResult r = runLookfar({"info", copy, "--summary", other_spelling, "--overwrite"});
    EXPECT_EQ(r.exit_code, 4);
    EXPECT_NE(firstLine(r.err).find("same file"), std::string::npos) << r.err;
    EXPECT_EQ(readFile(copy), before);
}
