// `lookfar horizon` run on the built binary: outside values through the whole tool
// (docs/references.md rows in the comments), the layout of its outputs, and the bad-input rules of
// docs/design.md.
#include <gdal.h>
#include <gtest/gtest.h>

#include <nlohmann/json.hpp>

#include <cmath>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

#include "../support/ChildRun.hpp"
#include "../support/CliRunner.hpp"
#include "../support/CsvFiles.hpp"
#include "../support/RasterFiles.hpp"

using namespace lookfar::testing;

namespace {

constexpr double kMetresPerNmi = 1852.0;
constexpr double kPi = 3.14159265358979323846;
const char* const kSeaCentre = "425025,5624975";  // centre of flat_sea.tif's middle cell

nlohmann::json runJson(const std::vector<std::string>& args) {
    std::vector<std::string> a = args;
    a.push_back("--json");
    a.push_back("--quiet");
    CliResult r = runLookfar(a);
    EXPECT_EQ(r.exit_code, 0) << r.err;
    if (r.exit_code != 0)
        return nlohmann::json::object();
    return nlohmann::json::parse(r.out);
}

}  // namespace

// docs/references.md row 1: Bowditch (NGA Pub. 9), "Distance of the horizon", D(nmi) = 1.17 √h(ft),
// reproduced by k ≈ 0.17 (from memory; tolerance 1 %). flat_sea.tif is 0 m everywhere; from
// 100 ft the sea horizon (21.7 km) lies inside the grid in every direction.
TEST(HorizonCliTest, FlatSeaHorizonDistanceMatchesBowditch) {
    ScratchDir dir;
    const std::string csv = dir.file("sea.csv");
    nlohmann::json j = runJson({"horizon", testRaster("flat_sea.tif"), "--at", kSeaCentre,
                                "--observer-height", "100ft", "--refraction", "0.17",
                                "--earth-model", "sphere", "--step", "45", "--csv", csv});
    const double bowditch_m = 1.17 * std::sqrt(100.0) * kMetresPerNmi;
    const auto rows = readCsv(csv);
    ASSERT_EQ(rows.size(), 9u);  // header + 8 directions
    EXPECT_EQ(rows[0], (std::vector<std::string>{"azimuth_deg", "angle_deg", "distance_m", "x", "y",
                                                 "elevation_m", "edge_distance_m"}));
    for (std::size_t i = 1; i < rows.size(); ++i) {
        ASSERT_EQ(rows[i].size(), 7u);
        const double d = std::stod(rows[i][2]);
        EXPECT_NEAR(d, bowditch_m, 0.01 * bowditch_m) << rows[i][0];
        // The horizon point lies that far from the spot, in the row's azimuth, on the sea.
        const double az = std::stod(rows[i][0]) * kPi / 180.0;
        EXPECT_NEAR(std::stod(rows[i][3]), 425025 + d * std::sin(az), 1.0) << rows[i][0];
        EXPECT_NEAR(std::stod(rows[i][4]), 5624975 + d * std::cos(az), 1.0) << rows[i][0];
        EXPECT_EQ(std::stod(rows[i][5]), 0.0);
        // Without --reach the DEM's edge is within reach everywhere (issue 15 item 7): the spot
        // is 500 cells of 50 m from each side's line of centres, so the ray meets it after
        // 25 km / max(|sin az|, |cos az|) (plane geometry).
        EXPECT_NEAR(std::stod(rows[i][6]),
                    25000.0 / std::fmax(std::fabs(std::sin(az)), std::fabs(std::cos(az))), 0.001)
            << rows[i][0];
    }
    EXPECT_EQ(j["horizon"]["edge"]["directions_cut"], 8);
    EXPECT_NEAR(j["horizon"]["edge"]["nearest_m"].get<double>(), 25000.0, 1e-6);
    EXPECT_NEAR(j["horizon"]["sea_horizon_distance_m"].get<double>(), bowditch_m,
                0.01 * bowditch_m);
}

// docs/references.md row 2: The Nautical Almanac, dip D(′) = 1.76 √h(m), reproduced by k ≈ 0.165
// (from memory; tolerance 1 %): the terrain horizon of a flat sea lies that far below the eye's
// horizontal all round, and the summary's sea-horizon dip (exact sphere formula) agrees.
TEST(HorizonCliTest, FlatSeaDipMatchesNauticalAlmanac) {
    ScratchDir dir;
    nlohmann::json j =
        runJson({"horizon", testRaster("flat_sea.tif"), "--at", kSeaCentre, "--observer-height",
                 "30", "--refraction", "0.165", "--earth-model", "sphere", "--step", "30"});
    const double almanac_deg = 1.76 * std::sqrt(30.0) / 60.0;
    EXPECT_NEAR(j["horizon"]["dip_deg"].get<double>(), almanac_deg, 0.01 * almanac_deg);
    EXPECT_NEAR(j["horizon"]["sea_horizon_dip_deg"].get<double>(), almanac_deg, 0.01 * almanac_deg);
    EXPECT_NEAR(j["horizon"]["highest"]["angle_deg"].get<double>(), -almanac_deg,
                0.01 * almanac_deg);
    ASSERT_EQ(j["horizon"]["open_sectors"].size(), 1u);
    EXPECT_DOUBLE_EQ(j["horizon"]["open_sectors"][0]["width_deg"].get<double>(), 360.0);
    EXPECT_DOUBLE_EQ(j["horizon"]["sky_view_factor"].get<double>(), 1.0);
    EXPECT_EQ(j["horizon"]["directions"], 12);
}

// docs/references.md row 12: Zakšek, Oštir & Kokalj (2011), SVF = 1 − (1/n) Σ sin γᵢ; on the floor
// of v_valley.tif (side slopes β = 30°, eye on the ground, flat Earth) γ(θ) = atan(tan β |sin θ|).
TEST(HorizonCliTest, VValleySkyViewFactorRaster) {
    ScratchDir dir;
    const std::string svf = dir.file("svf.tif");
    runJson({"horizon", testRaster("v_valley.tif"), "--svf", svf, "--directions", "16",
             "--observer-height", "0", "--earth-model", "flat"});
    double sum = 0;
    for (int i = 0; i < 16; ++i)
        sum += std::sin(std::atan(std::tan(kPi / 6) * std::fabs(std::sin(2 * kPi * i / 16))));
    const Raster r = readRaster(svf);
    ASSERT_EQ(r.bands, 1);
    EXPECT_NEAR(r.at(0, 150, 150), 1.0 - sum / 16, 1e-5);
    EXPECT_NEAR(r.at(0, 150, 20), 1.0 - sum / 16, 1e-5);  // anywhere along the floor
}

// docs/design.md outputs: N bands with the azimuth in their description, −9999 no data, metadata
// with every parameter; the sky-view factor and dip rasters have one band.
TEST(HorizonCliTest, RastersHaveOneBandPerDirectionWithItsAzimuth) {
    ScratchDir dir;
    const std::string angle = dir.file("h.tif"), dist = dir.file("d.tif"),
                      svf = dir.file("svf.tif"), dip = dir.file("dip.tif");
    nlohmann::json j = runJson({"horizon", testRaster("demo_coast.tif"), "-o", angle, "--distance",
                                dist, "--svf", svf, "--dip", dip, "--directions", "8"});
    const Raster a = readRaster(angle), d = readRaster(dist), s = readRaster(svf),
                 p = readRaster(dip);
    ASSERT_EQ(a.bands, 8);
    ASSERT_EQ(d.bands, 8);
    EXPECT_EQ(s.bands, 1);
    EXPECT_EQ(p.bands, 1);
    EXPECT_EQ(a.width, 500);
    EXPECT_EQ(a.height, 400);
    EXPECT_DOUBLE_EQ(a.nodata, -9999.0);
    EXPECT_DOUBLE_EQ(s.nodata, -9999.0);
    EXPECT_NE(a.descriptions[1].find("azimuth 45.000° clockwise from grid north"),
              std::string::npos)
        << a.descriptions[1];
    EXPECT_NE(d.descriptions[7].find("azimuth 315.000°"), std::string::npos);
    EXPECT_EQ(a.units[0], "deg");
    EXPECT_EQ(d.units[0], "m");
    EXPECT_EQ(metadataItem(angle, "LOOKFAR_DIRECTIONS"), "8");
    EXPECT_EQ(metadataItem(dip, "LOOKFAR_COMMAND"), "horizon");
    EXPECT_EQ(metadataItem(svf, "LOOKFAR_REFRACTION"), "0.13");
    EXPECT_FALSE(metadataItem(angle, "LOOKFAR_CURVATURE_LATITUDE_DEG").empty());
    // The top-left cell has no terrain to its north (band 1) or west (band 7).
    EXPECT_EQ(a.at(0, 0, 0), -9999.0f);
    EXPECT_EQ(a.at(6, 0, 0), -9999.0f);
    EXPECT_EQ(d.at(0, 0, 0), -9999.0f);
    EXPECT_NE(a.at(2, 0, 0), -9999.0f);
    // Sky-view factors lie in [0, 1]; the dip is the largest depression over the bands.
    for (int r = 0; r < 400; r += 37) {
        for (int c = 0; c < 500; c += 41) {
            EXPECT_GE(s.at(0, c, r), 0.0f);
            EXPECT_LE(s.at(0, c, r), 1.0f);
            double lowest = 90;
            for (int b = 0; b < 8; ++b) {
                if (a.at(b, c, r) != -9999.0f)
                    lowest = std::fmin(lowest, a.at(b, c, r));
            }
            EXPECT_FLOAT_EQ(p.at(0, c, r), -lowest) << c << "," << r;
        }
    }
    EXPECT_EQ(j["horizon"]["directions"], 8);
    EXPECT_GT(j["svf"]["mean"].get<double>(), 0.5);
}

// docs/design.md: results are identical for any --threads, for both engines.
TEST(HorizonCliTest, IdenticalRastersForOneAndTwoThreads) {
    ScratchDir dir;
    for (std::string method : {"fast", "reference"}) {
        const std::string n = method == "fast" ? "8" : "2";
        const std::string one = dir.file(method + "1.tif"), two = dir.file(method + "2.tif");
        runJson({"horizon", testRaster("geographic_hills.tif"), "-o", one, "--directions", n,
                 "--method", method, "--threads", "1"});
        runJson({"horizon", testRaster("geographic_hills.tif"), "-o", two, "--directions", n,
                 "--method", method, "--threads", "2"});
        const Raster a = readRaster(one), b = readRaster(two);
        ASSERT_EQ(a.bands, b.bands);
        for (int i = 0; i < a.bands; ++i)
            EXPECT_EQ(a.values[i], b.values[i]) << method << " band " << i;
    }
}

// The default compression of the N-band rasters (DEFLATE level 1 on every core) stores the same
// pixels as DEFLATE level 6 on one thread; --co keys replace the defaults.
TEST(HorizonCliTest, DefaultCompressionStoresTheSamePixels) {
    ScratchDir dir;
    const std::string fast = dir.file("fast.tif"), slow = dir.file("slow.tif");
    runJson({"horizon", testRaster("demo_coast.tif"), "-o", fast, "--directions", "8"});
    runJson({"horizon", testRaster("demo_coast.tif"), "-o", slow, "--directions", "8", "--co",
             "ZLEVEL=6", "--co", "NUM_THREADS=1", "--threads", "1"});
    GDALAllRegister();
    for (const std::string& path : {fast, slow}) {
        GDALDatasetH ds = GDALOpen(path.c_str(), GA_ReadOnly);
        ASSERT_NE(ds, nullptr) << path;
        const char* c = GDALGetMetadataItem(ds, "COMPRESSION", "IMAGE_STRUCTURE");
        EXPECT_STREQ(c ? c : "", "DEFLATE") << path;
        GDALClose(ds);
    }
    const Raster a = readRaster(fast), b = readRaster(slow);
    ASSERT_EQ(a.bands, 8);
    ASSERT_EQ(b.bands, 8);
    for (int i = 0; i < a.bands; ++i)
        EXPECT_EQ(a.values[i], b.values[i]) << "band " << i;
}

// The memory rule (common practice, no source): peak memory must not grow with N. Each
// band is written block by block, so 600 bands take no more memory than 8 (GDAL's block cache
// would keep a block per band, 64 KiB each here: 37 MiB more for 600 bands).
TEST(HorizonCliTest, PeakMemoryDoesNotGrowWithDirections) {
#if defined(__SANITIZE_ADDRESS__)
    GTEST_SKIP() << "under AddressSanitizer the peak counts its shadow memory and quarantine, "
                    "not lookfar's own";
#endif
    ScratchDir dir;
    auto peakMiB = [&](const std::string& n) {
        const std::string out = dir.file("h" + n + ".tif");
        std::vector<std::string> args = {LOOKFAR_CLI_PATH,
                                         "horizon",
                                         testRaster("nodata_hole.tif"),
                                         "-o",
                                         out,
                                         "--distance",
                                         dir.file("d" + n + ".tif"),
                                         "--directions",
                                         n,
                                         "--quiet"};
        const ChildRun run = runChild(args);
        EXPECT_EQ(run.exit_code, 0) << n;
        return run.peak_rss_bytes / (1024.0 * 1024.0);
    };
    const double few = peakMiB("8"), many = peakMiB("600");
    EXPECT_LT(many - few, 16.0) << few << " MiB for 8 directions, " << many << " for 600";
}

// The panorama: an SVG with the terrain horizon filled, the eye's horizontal and the sea-horizon
// dip drawn as reference lines, and labelled axes.
TEST(HorizonCliTest, PanoramaShowsTerrainAndReferenceLines) {
    ScratchDir dir;
    const std::string svg = dir.file("p.svg");
    runJson({"horizon", testRaster("demo_coast.tif"), "--at", "422937.5,5598337.5", "--plot", svg});
    const std::string s = readFile(svg);
    EXPECT_EQ(s.rfind("<?xml", 0), 0u);
    EXPECT_NE(s.find("<polygon"), std::string::npos);
    EXPECT_NE(s.find("eye's horizontal"), std::string::npos);
    EXPECT_NE(s.find("sea horizon for this eye: dip"), std::string::npos);
    EXPECT_NE(s.find("azimuth, degrees clockwise from grid north"), std::string::npos);
    EXPECT_NE(s.find("horizon angle, degrees"), std::string::npos);
    EXPECT_NE(s.find(">NE<"), std::string::npos);
}

// Issue 15 item 7: where the DEM ends within the reach. Quarrel Knap stands on cell (277, 224) of
// the 500 × 400 demo DEM of 25 m cells: 4375 m from the line of the last row's centres to the
// south, farther from the other sides. With a 5 km reach the edge cuts the horizon round south
// only: the CSV gives the distance there (plane geometry: 4375 m / |cos az| while the ray meets
// the south side first) and nothing elsewhere, and the panorama shades those directions with a
// legend. With a 1 km reach nothing is cut and nothing is shaded.
TEST(HorizonCliTest, EdgeOfTheDemWithinTheReachIsGivenAndShaded) {
    ScratchDir dir;
    const std::string csv = dir.file("h.csv"), svg = dir.file("h.svg");
    nlohmann::json j =
        runJson({"horizon", testRaster("demo_coast.tif"), "--at", "426937.5,5594387.5", "--reach",
                 "5000", "--step", "10", "--csv", csv, "--plot", svg});
    const auto rows = readCsv(csv);
    ASSERT_EQ(rows.size(), 37u);
    ASSERT_EQ(rows[0].back(), "edge_distance_m");
    // Distances to the four sides' lines of centres, metres (x east, y south of the spot).
    const double west = 277 * 25.0, east = (499 - 277) * 25.0, north = 224 * 25.0,
                 south = (399 - 224) * 25.0;
    int cut = 0;
    for (std::size_t i = 1; i < rows.size(); ++i) {
        ASSERT_EQ(rows[i].size(), 7u);
        const double az = std::stod(rows[i][0]) * kPi / 180.0;
        const double e = std::sin(az), n = std::cos(az);
        double t = 1e300;
        if (e > 1e-12)
            t = std::fmin(t, east / e);
        if (e < -1e-12)
            t = std::fmin(t, west / -e);
        if (n > 1e-12)
            t = std::fmin(t, north / n);
        if (n < -1e-12)
            t = std::fmin(t, south / -n);
        if (t <= 5000) {
            ++cut;
            EXPECT_NEAR(std::stod(rows[i][6]), t, 0.001) << rows[i][0];
        } else {
            EXPECT_EQ(rows[i][6], "") << rows[i][0];
        }
    }
    EXPECT_EQ(cut, 5);  // 160° to 200°: 4375 / cos 20° = 4656 m, cos 30° gives 5052 m
    EXPECT_EQ(j["horizon"]["edge"]["directions_cut"], cut);
    EXPECT_NEAR(j["horizon"]["edge"]["nearest_m"].get<double>(), 4375.0, 1e-6);
    EXPECT_EQ(j["horizon"]["edge"]["nearest_azimuth_deg"], 180.0);
    const std::string s = readFile(svg);
    EXPECT_NE(s.find("shaded: the DEM ends within the reach"), std::string::npos);
    // One shaded span, 155° to 205° (each direction stands for ±5°), and its legend box.
    std::size_t spans = 0;
    for (std::size_t at = s.find("fill=\"#e6def0\""); at != std::string::npos;
         at = s.find("fill=\"#e6def0\"", at + 1))
        ++spans;
    EXPECT_EQ(spans, 2u);

    j = runJson({"horizon", testRaster("demo_coast.tif"), "--at", "426937.5,5594387.5", "--reach",
                 "1000", "--step", "10", "--plot", svg, "--overwrite"});
    EXPECT_EQ(j["horizon"]["edge"]["directions_cut"], 0);
    EXPECT_TRUE(j["horizon"]["edge"]["nearest_m"].is_null());
    EXPECT_EQ(readFile(svg).find("shaded:"), std::string::npos);
}

// The grid summary counts the cells less than the reach from the DEM's edge along their row or
// column (docs/horizon.md): on the demo DEM, counted here cell by cell.
TEST(HorizonCliTest, GridSummaryCountsCellsWhoseHorizonTheEdgeCanCut) {
    ScratchDir dir;
    nlohmann::json j = runJson({"horizon", testRaster("demo_coast.tif"), "--svf",
                                dir.file("svf.tif"), "--directions", "4", "--reach", "3000"});
    std::int64_t want = 0;
    for (int r = 0; r < 400; ++r)
        for (int c = 0; c < 500; ++c)
            want += std::fmin(std::fmin(c, 499 - c), std::fmin(r, 399 - r)) * 25.0 <= 3000;
    EXPECT_EQ(j["edge"]["cells_cut"].get<std::int64_t>(), want);
    EXPECT_EQ(j["edge"]["cells"].get<std::int64_t>(), 200000);
    EXPECT_DOUBLE_EQ(j["edge"]["fraction_cut"].get<double>(), want / 200000.0);
}

// A geographic DEM and --crs: the spot and the CSV's horizon points are in the --crs coordinates.
TEST(HorizonCliTest, GeographicDemAndCoordinatesInAnotherCrs) {
    ScratchDir dir;
    const std::string csv = dir.file("h.csv");
    nlohmann::json j = runJson({"horizon", lookfar::testing::usgsSample(), "--crs", "EPSG:32616",
                                "--at", "746000,4052900", "--step", "10", "--csv", csv});
    EXPECT_EQ(j["horizon"]["directions"], 36);
    EXPECT_EQ(j["horizon"]["directions_with_data"], 36);
    const auto rows = readCsv(csv);
    ASSERT_EQ(rows.size(), 37u);
    for (std::size_t i = 1; i < rows.size(); ++i) {
        EXPECT_NEAR(std::stod(rows[i][3]), 746000, 40000) << rows[i][0];  // UTM 16N metres
        EXPECT_NEAR(std::stod(rows[i][4]), 4052900, 40000) << rows[i][0];
    }
}

// ---------------------------------------------------------------------------------------------
// Bad input (docs/design.md exit codes): one clear sentence, the right code, no output left behind.

namespace {
void expectRefused(const std::vector<std::string>& args, int code, const std::string& needle,
                   const ScratchDir& dir) {
    CliResult r = runLookfar(args);
    EXPECT_EQ(r.exit_code, code) << r.err;
    EXPECT_NE(firstLine(r.err).find(needle), std::string::npos) << r.err;
    EXPECT_TRUE(dir.entries().empty()) << "left behind: " << dir.entries().front();
}
}  // namespace

TEST(HorizonBadInputTest, DirectionsOutsideOneTo3600) {
    ScratchDir dir;
    for (const char* n : {"0", "3601", "-4"}) {
        expectRefused(
            {"horizon", testRaster("wall.tif"), "-o", dir.file("h.tif"), "--directions", n}, 2,
            "--directions", dir);
    }
}

TEST(HorizonBadInputTest, StepOutsideRange) {
    ScratchDir dir;
    for (const char* s : {"0", "-1", "90.5", "0.01", "nan"}) {
        expectRefused({"horizon", testRaster("wall.tif"), "--at", "431005,5589005", "--csv",
                       dir.file("h.csv"), "--step", s},
                      2, "--step", dir);
    }
}

TEST(HorizonBadInputTest, ReachMustBePositive) {
    ScratchDir dir;
    expectRefused({"horizon", testRaster("wall.tif"), "-o", dir.file("h.tif"), "--reach", "0"}, 2,
                  "--reach", dir);
}

TEST(HorizonBadInputTest, SpotOutsideTheDemOrOnNoData) {
    ScratchDir dir;
    expectRefused({"horizon", testRaster("wall.tif"), "--at", "1,2", "--csv", dir.file("h.csv"),
                   "--plot", dir.file("h.svg")},
                  3, "outside the DEM", dir);
    // nodata_hole.tif: cells 45–54 in both directions hold no data.
    expectRefused({"horizon", testRaster("nodata_hole.tif"), "--at", "430505,5589495", "--csv",
                   dir.file("h.csv")},
                  3, "no-data", dir);
}

TEST(HorizonBadInputTest, ModesDoNotMix) {
    ScratchDir dir;
    expectRefused(
        {"horizon", testRaster("wall.tif"), "--at", "431005,5589005", "-o", dir.file("h.tif")}, 2,
        "--at", dir);
    expectRefused({"horizon", testRaster("wall.tif"), "--csv", dir.file("h.csv")}, 2, "--at", dir);
    expectRefused({"horizon", testRaster("wall.tif")}, 2, "output", dir);
    expectRefused(
        {"horizon", testRaster("wall.tif"), "--at", "431005,5589005", "--directions", "8"}, 2,
        "--directions", dir);
    expectRefused(
        {"horizon", testRaster("wall.tif"), "--target-height", "2", "-o", dir.file("h.tif")}, 2,
        "target-height", dir);
}

TEST(HorizonBadInputTest, MissingDemAndExistingOutput) {
    ScratchDir dir;
    expectRefused({"horizon", "/no/such/dem.tif", "-o", dir.file("h.tif")}, 3, "/no/such/dem.tif",
                  dir);
    const std::string out = dir.file("h.tif");
    std::ofstream(out) << "keep me";
    CliResult r =
        runLookfar({"horizon", testRaster("wall.tif"), "-o", out, "--svf", dir.file("svf.tif")});
    EXPECT_EQ(r.exit_code, 4) << r.err;
    EXPECT_NE(firstLine(r.err).find("--overwrite"), std::string::npos) << r.err;
    EXPECT_EQ(readFile(out), "keep me");
    EXPECT_EQ(dir.entries().size(), 1u);  // no svf.tif, no temporary files
}

namespace {

/// A window of nodata_hole.tif (100 × 100 cells of 10 m from 430000, 5590000; no data in rows and
/// columns 45-54, test_rasters/README.md) copied into `dir`.
std::string holeWindow(const ScratchDir& dir, const std::string& name, int col, int row, int size) {
    GDALAllRegister();
    GDALDatasetH src = GDALOpen(testRaster("nodata_hole.tif").c_str(), GA_ReadOnly);
    EXPECT_NE(src, nullptr);
    if (!src)
        return "";
    const std::string path = dir.file(name);
    const bool ok = translateRaster(src, path,
                                    {"-srcwin", std::to_string(col), std::to_string(row),
                                     std::to_string(size), std::to_string(size)});
    GDALClose(src);
    return ok ? path : "";
}

}  // namespace

// Issue 12 item 11: the spot of a one-cell DEM has no terrain in any direction. It was reported as
// "open sectors none (the horizon is at or above the eye's horizontal in every direction)", which
// is false; the table, the summary and the panorama now say there is no terrain within the DEM.
TEST(HorizonNoTerrainTest, OneCellDemSaysThereIsNoTerrainWithinTheDem) {
    ScratchDir dir;
    const std::string dem = holeWindow(dir, "one.tif", 0, 0, 1);
    ASSERT_FALSE(dem.empty());
    const std::vector<std::string> args = {
        "horizon", dem, "--at", "430005,5589995", "--plot", dir.file("p.svg"), "--quiet"};
    CliResult r = runLookfar(args);
    ASSERT_EQ(r.exit_code, 0) << r.err;
    EXPECT_NE(r.out.find("open sectors        - (there is no terrain within the DEM in any "
                         "direction"),
              std::string::npos)
        << r.out;
    EXPECT_EQ(r.out.find("at or above the eye's horizontal"), std::string::npos) << r.out;
    EXPECT_NE(readFile(dir.file("p.svg")).find("There is no terrain within the DEM"),
              std::string::npos);
    const nlohmann::json j = runJson({"horizon", dem, "--at", "430005,5589995", "--reach", "5km"});
    EXPECT_EQ(j["horizon"]["directions_with_data"], 0);
    EXPECT_EQ(j["horizon"]["open_sectors"].size(), 0u);
    EXPECT_EQ(j["horizon"]["no_terrain"],
              "there is no terrain within the DEM and --reach in any direction: no cell with data "
              "around the spot");
    // A spot with terrain around it has no such key.
    const nlohmann::json k = runJson(
        {"horizon", testRaster("nodata_hole.tif"), "--at", "430005,5589995", "--step", "10"});
    EXPECT_GT(k["horizon"]["directions_with_data"].get<int>(), 0);
    EXPECT_FALSE(k["horizon"].contains("no_terrain"));
}

// Issue 12 item 11: `horizon -o` on a DEM with no data at all wrote rasters of no data without a
// word; a DEM whose cells have no terrain around them (one cell) the same. Both say so on stderr,
// also with --quiet, and still write their (no-data) rasters.
TEST(HorizonNoTerrainTest, RastersWithoutAnyHorizonAreExplainedOnStderr) {
    ScratchDir dir;
    const std::string hole = holeWindow(dir, "hole.tif", 45, 45, 10);
    const std::string one = holeWindow(dir, "one.tif", 0, 0, 1);
    ASSERT_FALSE(hole.empty() || one.empty());
    CliResult r = runLookfar({"horizon", hole, "-o", dir.file("h.tif"), "--quiet"});
    EXPECT_EQ(r.exit_code, 0) << r.err;
    EXPECT_NE(r.err.find("hole.tif: every cell is no data, so no cell has a horizon: the rasters "
                         "hold only no data (-9999)"),
              std::string::npos)
        << r.err;
    r = runLookfar({"horizon", one, "--svf", dir.file("s.tif"), "--reach", "1km", "--quiet"});
    EXPECT_EQ(r.exit_code, 0) << r.err;
    EXPECT_NE(r.err.find("no cell has terrain with data around it within the DEM and --reach in "
                         "any direction: the rasters hold only no data (-9999)"),
              std::string::npos)
        << r.err;
    const Raster s = readRaster(dir.file("s.tif"));
    EXPECT_EQ(s.values[0][0], -9999.0);
    // A DEM with horizons says nothing of the kind.
    r = runLookfar({"horizon", testRaster("nodata_hole.tif"), "-o", dir.file("n.tif"),
                    "--directions", "4", "--quiet"});
    EXPECT_EQ(r.exit_code, 0) << r.err;
    EXPECT_EQ(r.err, "");
}
