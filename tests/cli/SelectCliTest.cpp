// `lookfar select` on the built binary: the ranked CSV and the count raster of docs/design.md (read
// back with GDAL), weights, and the bad-input rules (exit codes, nothing written).
#include <gtest/gtest.h>
#include <gdal.h>
#include <ogr_srs_api.h>

#include <nlohmann/json.hpp>

#include <cmath>
#include <fstream>
#include <sstream>

#include "../support/CliRunner.hpp"
#include "../support/CsvFiles.hpp"

using namespace lookfar::testing;

namespace {

/// Writes a Float32 GeoTIFF of `w` × `h` cells with the given geotransform in EPSG:32630.
void writeRaster(const std::string& path, int w, int h, const double gt[6],
                 const std::vector<float>& values) {
    GDALAllRegister();
    GDALDriverH drv = GDALGetDriverByName("GTiff");
    GDALDatasetH ds = GDALCreate(drv, path.c_str(), w, h, 1, GDT_Float32, nullptr);
    double g[6];
    std::copy(gt, gt + 6, g);
    GDALSetGeoTransform(ds, g);
    OGRSpatialReferenceH srs = OSRNewSpatialReference(nullptr);
    OSRImportFromEPSG(srs, 32630);
    GDALSetSpatialRef(ds, srs);
    OSRDestroySpatialReference(srs);
    CPLErr err = GDALRasterIO(GDALGetRasterBand(ds, 1), GF_Write, 0, 0, w, h,
                              const_cast<float*>(values.data()), w, h, GDT_Float32, 0, 0);
    ASSERT_EQ(err, CE_None);
    GDALClose(ds);
}

const double kDemoGt[6] = {420000, 25, 0, 5600000, 0, -25};

}  // namespace

TEST(SelectCliTest, RanksTheDemoSitesAndWritesTheCountRaster) {
    ScratchDir dir;
    CliResult r = runLookfar({"select", testRaster("demo_coast.tif"), "--candidates",
                              testRaster("demo_sites.csv"), "--count", "3", "--reach", "3000", "-o",
                              dir.file("count.tif"), "--csv", dir.file("ranked.csv"), "--summary",
                              dir.file("s.json"), "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    EXPECT_EQ(firstLine(readFile(dir.file("ranked.csv"))),
              "rank,name,x,y,marginal_area_m2,cumulative_area_m2,cumulative_percent");
    const auto rows = readCsv(dir.file("ranked.csv"));
    ASSERT_EQ(rows.size(), 4u);
    double cumulative = 0, last_marginal = 1e300, last_percent = 0;
    for (std::size_t i = 1; i < rows.size(); ++i) {
        ASSERT_EQ(rows[i].size(), 7u);
        EXPECT_EQ(rows[i][0], std::to_string(i));
        const double marginal = std::stod(rows[i][4]);
        cumulative += marginal;
        EXPECT_NEAR(std::stod(rows[i][5]), cumulative, 0.2);
        EXPECT_LE(marginal, last_marginal);  // greedy gains never grow (submodularity)
        EXPECT_GT(std::stod(rows[i][6]), last_percent);
        last_marginal = marginal;
        last_percent = std::stod(rows[i][6]);
    }
    // The count raster: UInt16, no data 65535, on the DEM's grid; its cells seen by any chosen
    // site make up the cumulative area (25 m cells).
    GDALAllRegister();
    GDALDatasetH ds = GDALOpen(dir.file("count.tif").c_str(), GA_ReadOnly);
    ASSERT_NE(ds, nullptr);
    EXPECT_EQ(GDALGetRasterXSize(ds), 500);
    EXPECT_EQ(GDALGetRasterYSize(ds), 400);
    double gt[6];
    GDALGetGeoTransform(ds, gt);
    for (int i = 0; i < 6; ++i)
        EXPECT_DOUBLE_EQ(gt[i], kDemoGt[i]);
    GDALRasterBandH band = GDALGetRasterBand(ds, 1);
    EXPECT_EQ(GDALGetRasterDataType(band), GDT_UInt16);
    int has_nodata = 0;
    EXPECT_EQ(GDALGetRasterNoDataValue(band, &has_nodata), 65535.0);
    EXPECT_TRUE(has_nodata);
    const char* cmd = GDALGetMetadataItem(ds, "LOOKFAR_COMMAND", nullptr);
    ASSERT_NE(cmd, nullptr);
    EXPECT_STREQ(cmd, "select");
    ASSERT_NE(GDALGetMetadataItem(ds, "LOOKFAR_SELECTED", nullptr), nullptr);
    std::vector<std::uint16_t> v(500 * 400);
    ASSERT_EQ(GDALRasterIO(band, GF_Read, 0, 0, 500, 400, v.data(), 500, 400, GDT_UInt16, 0, 0),
              CE_None);
    GDALClose(ds);
    std::int64_t seen = 0, nodata = 0;
    for (std::uint16_t c : v) {
        nodata += c == 65535;
        seen += c > 0 && c != 65535;
        EXPECT_TRUE(c <= 3 || c == 65535);
    }
    EXPECT_NEAR(seen * 625.0, cumulative, 0.5);
    EXPECT_GT(nodata, 0);  // a 3 km reach leaves parts of the 12.5 km × 10 km DEM out
    const auto j = nlohmann::json::parse(readFile(dir.file("s.json")));
    EXPECT_EQ(j["selected"].size(), 3u);
    EXPECT_EQ(j["candidates"].size(), 7u);
    EXPECT_EQ(j["evaluated_cells"].get<std::int64_t>(), 500 * 400 - nodata);
    EXPECT_EQ(j["coverage"]["cells_seen_by_any"].get<std::int64_t>(), seen);
}

TEST(SelectCliTest, CoverageGoalChoosesAsFewSitesAsReachIt) {
    ScratchDir dir;
    CliResult all = runLookfar({"select", testRaster("demo_coast.tif"), "--candidates",
                                testRaster("demo_sites.csv"), "--count", "7", "-o",
                                dir.file("all.tif"), "--json", "--quiet"});
    ASSERT_EQ(all.exit_code, 0) << all.err;
    const auto ja = nlohmann::json::parse(all.out);
    const double p2 = ja["selected"][1]["cumulative_percent"].get<double>();
    const double p3 = ja["selected"][2]["cumulative_percent"].get<double>();
    char goal[32];
    std::snprintf(goal, sizeof goal, "%.4f", 0.5 * (p2 + p3));
    CliResult r = runLookfar({"select", testRaster("demo_coast.tif"), "--candidates",
                              testRaster("demo_sites.csv"), "--coverage", goal, "-o",
                              dir.file("c.tif"), "--json", "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const auto j = nlohmann::json::parse(r.out);
    EXPECT_EQ(j["selected"].size(), 3u);
    EXPECT_TRUE(j["coverage_reached"].get<bool>());
    EXPECT_EQ(j["stop_reason"], "coverage");
}

// --weight: a raster on the DEM's grid with weight only around one site makes it rank first.
TEST(SelectCliTest, WeightRasterSteersTheChoice) {
    ScratchDir dir;
    // Around Tollan Rigg (429787.5, 5598562.5): column 391, row 57.
    std::vector<float> w(500 * 400, 0.0f);
    for (int r = 52; r <= 62; ++r)
        for (int c = 386; c <= 396; ++c)
            w[r * 500 + c] = 3.0f;
    writeRaster(dir.file("w.tif"), 500, 400, kDemoGt, w);
    CliResult r = runLookfar({"select", testRaster("demo_coast.tif"), "--candidates",
                              testRaster("demo_sites.csv"), "--count", "1", "--weight",
                              dir.file("w.tif"), "-o", dir.file("c.tif"), "--json", "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const auto j = nlohmann::json::parse(r.out);
    EXPECT_EQ(j["selected"][0]["name"], "Tollan Rigg");
    EXPECT_NEAR(j["total_weight"].get<double>(), 3.0 * 121, 1e-6);

    // Issue 12 item 14: where weights decide the ranking, the CSV and the table show them beside
    // the areas; cumulative_percent is the cumulative weight over the total weight.
    r = runLookfar({"select", testRaster("demo_coast.tif"), "--candidates",
                    testRaster("demo_sites.csv"), "--count", "2", "--weight", dir.file("w.tif"),
                    "-o", dir.file("c2.tif"), "--csv", dir.file("ranked.csv")});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    EXPECT_NE(r.out.find("adds (weight)"), std::string::npos) << r.out;
    EXPECT_NE(r.out.find("adds (area)"), std::string::npos) << r.out;
    const std::string csv = readFile(dir.file("ranked.csv"));
    EXPECT_EQ(firstLine(csv),
              "rank,name,x,y,marginal_area_m2,cumulative_area_m2,"
              "cumulative_percent,marginal_weight,cumulative_weight");
    const std::string row1 = csv.substr(csv.find('\n') + 1);
    std::vector<std::string> f;
    std::string cell;
    for (char ch : firstLine(row1)) {
        if (ch == ',') {
            f.push_back(cell);
            cell.clear();
        } else {
            cell += ch;
        }
    }
    f.push_back(cell);
    ASSERT_EQ(f.size(), 9u) << row1;
    EXPECT_EQ(f[1], "Tollan Rigg");
    const double marginal = std::stod(f[7]), cumulative = std::stod(f[8]);
    EXPECT_GT(marginal, 0.0);
    EXPECT_LE(marginal, 3.0 * 121);
    EXPECT_DOUBLE_EQ(marginal, cumulative);  // the first site adds all it sees
    EXPECT_NEAR(std::stod(f[6]), 100.0 * cumulative / (3.0 * 121), 1e-4);
}

TEST(SelectCliTest, WeightRasterOnAnotherGridIsBadInput) {
    ScratchDir dir;
    const double shifted[6] = {420010, 25, 0, 5600000, 0, -25};
    writeRaster(dir.file("shifted.tif"), 500, 400, shifted, std::vector<float>(500 * 400, 1.0f));
    for (const std::string& weight : {testRaster("wall.tif"), dir.file("shifted.tif")}) {
        CliResult r = runLookfar({"select", testRaster("demo_coast.tif"), "--candidates",
                                  testRaster("demo_sites.csv"), "--count", "2", "--weight", weight,
                                  "-o", dir.file("c.tif"), "--csv", dir.file("r.csv"), "--quiet"});
        EXPECT_EQ(r.exit_code, 3) << r.err;
        EXPECT_NE(firstLine(r.err).find(weight), std::string::npos) << r.err;
        EXPECT_NE(firstLine(r.err).find("DEM's grid"), std::string::npos) << r.err;
        EXPECT_FALSE(fileExists(dir.file("c.tif")));
        EXPECT_FALSE(fileExists(dir.file("r.csv")));
    }
    std::vector<float> neg(500 * 400, 1.0f);
    neg[1234] = -2.0f;
    writeRaster(dir.file("neg.tif"), 500, 400, kDemoGt, neg);
    CliResult r = runLookfar({"select", testRaster("demo_coast.tif"), "--candidates",
                              testRaster("demo_sites.csv"), "--count", "2", "--weight",
                              dir.file("neg.tif"), "-o", dir.file("c.tif"), "--quiet"});
    EXPECT_EQ(r.exit_code, 3);
    EXPECT_NE(firstLine(r.err).find("column 234, row 2"), std::string::npos) << r.err;
    EXPECT_FALSE(fileExists(dir.file("c.tif")));
}

TEST(SelectCliTest, CountAndCoverageOutOfRangeAreUsageErrors) {
    ScratchDir dir;
    const std::vector<std::vector<std::string>> bad = {
        {"--count", "0"},        {"--count", "-2"},    {"--count", "8"},      {"--coverage", "0"},
        {"--coverage", "100.5"}, {"--coverage", "-5"}, {"--coverage", "nan"}, {}};
    for (const auto& extra : bad) {
        std::vector<std::string> args = {"select",       testRaster("demo_coast.tif"),
                                         "--candidates", testRaster("demo_sites.csv"),
                                         "-o",           dir.file("c.tif"),
                                         "--csv",        dir.file("r.csv"),
                                         "--quiet"};
        args.insert(args.end(), extra.begin(), extra.end());
        CliResult r = runLookfar(args);
        EXPECT_EQ(r.exit_code, 2) << (extra.empty() ? "" : extra[0] + " " + extra[1]) << ": "
                                  << r.err;
        if (!extra.empty()) {
            EXPECT_NE(firstLine(r.err).find(extra[0]), std::string::npos) << r.err;
        }
    }
    // K more than the candidates names the file.
    CliResult r = runLookfar({"select", testRaster("demo_coast.tif"), "--candidates",
                              testRaster("demo_sites.csv"), "--count", "8", "-o", dir.file("c.tif"),
                              "--quiet"});
    EXPECT_NE(firstLine(r.err).find("7 candidates in " + testRaster("demo_sites.csv")),
              std::string::npos)
        << r.err;
    EXPECT_TRUE(dir.entries().empty());
}

TEST(SelectCliTest, CandidateOnNoDataNamesTheFileAndLine) {
    ScratchDir dir;
    std::ofstream(dir.file("c.csv")) << "name,x,y,height\nok,430205,5589795,10\nhole,430500,"
                                        "5589500,10\n";
    CliResult r =
        runLookfar({"select", testRaster("nodata_hole.tif"), "--candidates", dir.file("c.csv"),
                    "--count", "1", "-o", dir.file("c.tif"), "--quiet"});
    EXPECT_EQ(r.exit_code, 3);
    EXPECT_NE(firstLine(r.err).find(dir.file("c.csv") + ", line 3"), std::string::npos) << r.err;
    EXPECT_NE(firstLine(r.err).find("no-data"), std::string::npos) << r.err;
    EXPECT_FALSE(fileExists(dir.file("c.tif")));
}
