// `lookfar viewshed` on the built binary, checked against outside values (docs/references.md
// rows named beside each check) and the analytic rasters of test_rasters/ (exact geometry).
#include <gdal.h>
#include <gdal_utils.h>
#include <geodesic.h>
#include <gtest/gtest.h>

#include <nlohmann/json.hpp>

#include <cmath>
#include <string>
#include <vector>

#include "../support/CliRunner.hpp"
#include "../support/RasterFiles.hpp"

using namespace lookfar::testing;

namespace {

constexpr double kR = 6371008.8;  // mean Earth radius R of docs/references.md, metres
constexpr double kMetresPerFoot = 0.3048;
constexpr double kMetresPerNmi = 1852.0;

// flat_sea.tif: 1001² cells of 50 m, z = 0, middle cell (500, 500) centred at (425025, 5624975).
const std::string kSeaCentre = "425025,5624975";
constexpr double kSeaCell = 50.0;

nlohmann::json runJson(std::vector<std::string> args) {
    args.push_back("--json");
    args.push_back("--quiet");
    CliResult r = runLookfar(args);
    EXPECT_EQ(r.exit_code, 0) << r.err;
    if (r.exit_code != 0)
        return nlohmann::json::object();
    return nlohmann::json::parse(r.out);
}

/// Farthest visible distance over a flat sea from a sphere run (k given), metres.
double seaFarthest(const ScratchDir& dir, double h, double target, double k) {
    auto j =
        runJson({"viewshed", testRaster("flat_sea.tif"), "--observer", kSeaCentre, "-o",
                 dir.file("sea_" + std::to_string(h) + "_" + std::to_string(k) + ".tif"),
                 "--observer-height", std::to_string(h), "--target-height", std::to_string(target),
                 "--refraction", std::to_string(k), "--earth-model", "sphere"});
    return j["observers"][0]["farthest_visible_m"].get<double>();
}

}  // namespace

// docs/references.md row 9 (exact geometry): with k = 0 the farthest visible cell over a flat sea
// lies at √(2R′h) + √(2R′T), R′ = R/(1 − k), within one cell (the engines' parabolic drop
// d²/2R′ gives exactly this distance).
TEST(ViewshedCliTest, FlatSeaHorizonDistanceExactGeometry) {
    ScratchDir dir;
    for (auto [h, t] : {std::pair{30.0, 0.0}, std::pair{10.0, 5.0}, std::pair{20.0, 20.0}}) {
        const double expected = std::sqrt(2 * kR * h) + std::sqrt(2 * kR * t);
        ASSERT_LT(expected, 35000.0);  // inside the grid along the diagonals
        EXPECT_NEAR(seaFarthest(dir, h, t, 0.0), expected, kSeaCell * std::sqrt(2.0))
            << "h " << h << " T " << t;
    }
}

// docs/references.md row 1: Bowditch, The American Practical Navigator (NGA Pub. 9), "Distance of
// the horizon": D(nmi) = 1.17 √h(ft), reproduced by k ≈ 0.17 (from memory; tolerance 1 %).
TEST(ViewshedCliTest, FlatSeaHorizonMatchesBowditchTable) {
    ScratchDir dir;
    for (double h_ft : {50.0, 100.0}) {
        const double expected = 1.17 * std::sqrt(h_ft) * kMetresPerNmi;  // 100 ft → 11.7 nmi
        const double d = seaFarthest(dir, h_ft * kMetresPerFoot, 0.0, 0.17);
        EXPECT_NEAR(d, expected, std::max(0.01 * expected, kSeaCell)) << h_ft << " ft";
    }
}

// docs/references.md row 4: ITU-R effective Earth radius, median factor 4/3 (k = 0.25): radio
// horizon d(km) = 4.12 √h(m) (from memory; tolerance 1 %).
TEST(ViewshedCliTest, FlatSeaRadioHorizonFourThirdsEarth) {
    ScratchDir dir;
    for (double h : {10.0, 30.0}) {
        const double expected = 4120.0 * std::sqrt(h);
        EXPECT_NEAR(seaFarthest(dir, h, 0.0, 0.25), expected, 0.01 * expected) << h << " m";
    }
}

// Exact geometry: over a flat sea the visible area is a disc, so the area of each distance band
// wholly inside it is π(r₂² − r₁²) (1 % for the cell staircase at the band edges).
TEST(ViewshedCliTest, DistanceBandsOfAVisibleDiscHaveAnnulusAreas) {
    ScratchDir dir;
    auto j = runJson({"viewshed", testRaster("flat_sea.tif"), "--observer", kSeaCentre, "-o",
                      dir.file("v.tif"), "--observer-height", "60", "--refraction", "0",
                      "--earth-model", "sphere"});
    const auto& o = j["observers"][0];
    const auto& bands = o["visible_area_by_distance"];
    ASSERT_EQ(bands.size(), 6u);  // nearest first
    const double pi = 3.14159265358979;
    EXPECT_EQ(bands[1]["band"], "1-5 km");
    EXPECT_NEAR(bands[1]["visible_area_m2"].get<double>(), pi * (25e6 - 1e6), 0.01 * pi * 24e6);
    EXPECT_EQ(bands[2]["band"], "5-10 km");
    EXPECT_NEAR(bands[2]["visible_area_m2"].get<double>(), pi * (100e6 - 25e6), 0.01 * pi * 75e6);
    EXPECT_EQ(bands[3]["band"], "10-25 km");
    EXPECT_NEAR(bands[3]["visible_area_m2"].get<double>(), pi * (625e6 - 100e6), 0.01 * pi * 525e6);
    double sum = 0;
    for (const auto& b : bands)
        sum += b["visible_area_m2"].get<double>();
    EXPECT_NEAR(sum, o["visible_area_m2"].get<double>(), 1.0);
    EXPECT_EQ(bands[5]["band"], ">50 km");
    EXPECT_TRUE(bands[5]["to_m"].is_null());
    EXPECT_DOUBLE_EQ(bands[5]["visible_area_m2"].get<double>(), 0.0);
}

// Issue 12 item 13: the bands include their upper bound as the reach does, and the last band
// ends at the reach. On a flat sea seen from 60 m the whole disc of a 10 km reach is visible, so
// the bands are 0-1, 1-5 and 5-10 km, the last one holding the annulus up to the reach (1 % for
// the cell staircase) and nothing beyond.
TEST(ViewshedCliTest, DistanceBandsEndAtTheReach) {
    ScratchDir dir;
    auto j = runJson({"viewshed", testRaster("flat_sea.tif"), "--observer", kSeaCentre, "-o",
                      dir.file("v.tif"), "--observer-height", "60", "--reach", "10km"});
    const auto& bands = j["observers"][0]["visible_area_by_distance"];
    ASSERT_EQ(bands.size(), 3u) << bands.dump();
    EXPECT_EQ(bands[2]["band"], "5-10 km");
    EXPECT_DOUBLE_EQ(bands[2]["from_m"].get<double>(), 5000.0);
    EXPECT_DOUBLE_EQ(bands[2]["to_m"].get<double>(), 10000.0);
    const double pi = 3.14159265358979;
    EXPECT_NEAR(bands[2]["visible_area_m2"].get<double>(), pi * (100e6 - 25e6), 0.01 * pi * 75e6);
    // A reach between the edges: the last band is named for it.
    j = runJson({"viewshed", testRaster("flat_sea.tif"), "--observer", kSeaCentre, "-o",
                 dir.file("w.tif"), "--observer-height", "60", "--reach", "7.5km", "--overwrite"});
    const auto& b2 = j["observers"][0]["visible_area_by_distance"];
    ASSERT_EQ(b2.size(), 3u) << b2.dump();
    EXPECT_EQ(b2[2]["band"], "5-7.5 km");
    EXPECT_NEAR(b2[2]["visible_area_m2"].get<double>(), pi * (56.25e6 - 25e6), 0.01 * pi * 31.25e6);
}

// Exact geometry (wall.tif): an eye h above flat ground a metres west of a wall of height H
// sees the ground again a·H/(h − H) east of the wall; on a flat Earth every row agrees, within
// one cell. Here a = 600 m, H = 50 m, h = 77 m: a hidden strip of 1111.1 m.
TEST(ViewshedCliTest, WallCastsShadowOfKnownLength) {
    ScratchDir dir;
    const std::string out = dir.file("wall.tif");
    // Observer cell (40, 100): centre (430405, 5588995); the wall is column 100 (x = 431005).
    auto j = runJson({"viewshed", testRaster("wall.tif"), "--observer", "430405,5588995", "-o", out,
                      "--observer-height", "77", "--earth-model", "flat"});
    const Raster v = readRaster(out);
    ASSERT_EQ(v.width, 401);
    const double shadow_m = 600.0 * 50.0 / (77.0 - 50.0);
    const int first_visible_col = 100 + static_cast<int>(std::ceil(shadow_m / 10.0));  // 212
    for (int r = 0; r < v.height; ++r) {
        int first = -1;
        for (int c = 101; c < v.width; ++c) {
            if (v.at(0, c, r) == 1) {
                first = c;
                break;
            }
        }
        EXPECT_NEAR(first, first_visible_col, 1) << "row " << r;
        for (int c = first; c >= 0 && c < v.width; ++c)
            ASSERT_EQ(v.at(0, c, r), 1) << "beyond the shadow, row " << r << " col " << c;
    }
    // Curvature and refraction only lengthen the strip.
    const std::string curved = dir.file("wall_curved.tif");
    runJson({"viewshed", testRaster("wall.tif"), "--observer", "430405,5588995", "-o", curved,
             "--observer-height", "77"});
    const Raster vc = readRaster(curved);
    int first = -1;
    for (int c = 101; c < vc.width && first < 0; ++c) {
        if (vc.at(0, c, 100) == 1)
            first = c;
    }
    EXPECT_GE(first, first_visible_col - 1);
}

// The twin rasters hold one terrain in metres (EPSG:32617) and in US survey feet (EPSG:2264,
// heights and cells in US ft): the same cell seen from the same cell gives the same visible
// fraction and area (a sphere, so that the two places' latitudes do not matter).
TEST(ViewshedCliTest, MetresAndUsSurveyFeetGiveTheSameViewshed) {
    ScratchDir dir;
    // Centre of cell (100, 100) in each raster.
    auto m =
        runJson({"viewshed", testRaster("twin_metres.tif"), "--observer", "503025,3956985", "-o",
                 dir.file("m.tif"), "--observer-height", "5", "--earth-model", "sphere"});
    auto f = runJson({"viewshed", testRaster("twin_usft.tif"), "--observer",
                      "2109891.7125,690108.2875", "-o", dir.file("f.tif"), "--observer-height",
                      "16.404ft", "--earth-model", "sphere"});
    const auto& om = m["observers"][0];
    const auto& of = f["observers"][0];
    EXPECT_EQ(om["col"], of["col"]);
    EXPECT_EQ(om["row"], of["row"]);
    EXPECT_NEAR(of["eye_m"].get<double>(), om["eye_m"].get<double>(), 0.01);
    EXPECT_NEAR(of["visible_fraction"].get<double>(), om["visible_fraction"].get<double>(), 1e-4);
    EXPECT_NEAR(of["visible_area_m2"].get<double>(), om["visible_area_m2"].get<double>(),
                1e-3 * om["visible_area_m2"].get<double>());
    EXPECT_NEAR(of["farthest_visible_m"].get<double>(), om["farthest_visible_m"].get<double>(),
                1.0);
    EXPECT_GT(om["visible_fraction"].get<double>(), 0.01);
}

// Geographic DEM (the USGS sample, docs/references.md row 13): the farthest visible distance the
// summary reports is the engines' fast distance, within 0.1 % or 1 m of PROJ's geodesic
// (docs/references.md row 11, geod_inverse, Karney 2013) to the farthest visible cell of the
// raster.
TEST(ViewshedCliTest, GeographicDistancesAgreeWithPROJGeodesic) {
    ScratchDir dir;
    const std::string out = dir.file("usgs.tif");
    // A point near the sample's summit ridge, given in lon/lat.
    auto j = runJson({"viewshed", usgsSample(), "--observer", "-84.2,36.6", "--crs", "EPSG:4326",
                      "-o", out, "--observer-height", "20"});
    const auto& o = j["observers"][0];
    const Raster v = readRaster(out);
    ASSERT_GT(v.width, 0);
    // Cell centres of the geographic grid: origin (−84.41375, 36.7329167), 1/1200°.
    const double west = -84.41375, north = 36.73291666666667, step = 1.0 / 1200.0;
    const int oc = o["col"], orow = o["row"];
    const double lon0 = west + (oc + 0.5) * step, lat0 = north - (orow + 0.5) * step;
    geod_geodesic geod;
    geod_init(&geod, 6378137.0, 1 / 298.257223563);
    double farthest_geodesic = 0;
    for (int r = 0; r < v.height; ++r) {
        for (int c = 0; c < v.width; ++c) {
            if (v.at(0, c, r) != 1)
                continue;
            double s12, a1, a2;
            geod_inverse(&geod, lat0, lon0, north - (r + 0.5) * step, west + (c + 0.5) * step, &s12,
                         &a1, &a2);
            farthest_geodesic = std::max(farthest_geodesic, s12);
        }
    }
    const double fast = o["farthest_visible_m"].get<double>();
    EXPECT_NEAR(fast, farthest_geodesic, std::max(1.0, 1e-3 * farthest_geodesic));
    EXPECT_GT(fast, 5000.0);
}

// docs/references.md row 14 (reference library, GDAL's warper): the USGS sample warped to its UTM
// zone (EPSG:32616; cubic resampling, GDAL's default resolution) gives visible areas within a
// few per cent (3 %) of the geographic run. One point alone can differ much more on this rough
// terrain (resampling moves ridge crests and the eye's cell), so the check sums four observers;
// measured: −0.9 % with nearest-neighbour, +0.9 % with cubic, +6 % with bilinear resampling
// (which smooths the relief, so more is seen).
TEST(ViewshedCliTest, ReprojectedDemGivesTheSameVisibleArea) {
    ScratchDir dir;
    const std::string utm = dir.file("usgs_utm.tif");
    GDALAllRegister();
    GDALDatasetH src = GDALOpen(usgsSample().c_str(), GA_ReadOnly);
    ASSERT_NE(src, nullptr);
    const char* argv[] = {"-t_srs", "EPSG:32616", "-r",      "cubic", "-dstnodata",
                          "-32768", "-ot",        "Float32", nullptr};
    GDALWarpAppOptions* wo = GDALWarpAppOptionsNew(const_cast<char**>(argv), nullptr);
    int failed = 0;
    GDALDatasetH dst = GDALWarp(utm.c_str(), nullptr, 1, &src, wo, &failed);
    GDALWarpAppOptionsFree(wo);
    ASSERT_NE(dst, nullptr);
    ASSERT_EQ(failed, 0);
    GDALClose(dst);
    GDALClose(src);
    double totals[2] = {0, 0};
    const std::string dems[2] = {usgsSample(), utm};
    for (const char* point : {"-84.25,36.58", "-84.2,36.6", "-84.3,36.65", "-84.15,36.52"}) {
        for (int k = 0; k < 2; ++k) {
            auto j = runJson({"viewshed", dems[k], "--observer", point, "--crs", "EPSG:4326", "-o",
                              dir.file("v" + std::to_string(k) + ".tif"), "--overwrite",
                              "--observer-height", "30"});
            totals[k] += j["observers"][0]["visible_area_m2"].get<double>();
        }
    }
    EXPECT_GT(totals[0], 1e8);
    EXPECT_NEAR(totals[1], totals[0], 0.03 * totals[0])
        << "geographic " << totals[0] << " m², UTM " << totals[1] << " m²";
}

// docs/design.md's summary keys, the raster's values and its metadata.
TEST(ViewshedCliTest, SummaryKeysRasterValuesAndMetadata) {
    ScratchDir dir;
    const std::string out = dir.file("v.tif"), margin = dir.file("m.tif"),
                      angle = dir.file("a.tif"), summary = dir.file("s.json");
    CliResult r =
        runLookfar({"viewshed", testRaster("demo_coast.tif"), "--observer", "422937.5,5598337.5",
                    "--observer-height", "15", "-o", out, "--margin", margin, "--angle", angle,
                    "--summary", summary, "--reach", "8000", "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    EXPECT_NE(r.out.find("visible fraction"), std::string::npos) << r.out;
    EXPECT_NE(r.out.find("5-8 km"), std::string::npos) << r.out;  // the last band ends at reach
    EXPECT_EQ(r.out.find("10-25 km"), std::string::npos) << r.out;
    auto j = nlohmann::json::parse(readFile(summary));
    for (const char* key :
         {"tool", "version", "command", "dem", "parameters", "elapsed_s", "observers"})
        EXPECT_TRUE(j.contains(key)) << key;
    for (const char* key : {"path", "crs", "width", "height", "cell_size_m"})
        EXPECT_TRUE(j["dem"].contains(key)) << key;
    for (const char* key : {"refraction", "earth_model", "earth_radius_m", "reach_m",
                            "observer_height_m", "target_height_m", "method"})
        EXPECT_TRUE(j["parameters"].contains(key)) << key;
    const auto& o = j["observers"][0];
    for (const char* key :
         {"name", "x", "y", "ground_m", "eye_m", "visible_cells", "evaluated_cells",
          "visible_area_m2", "visible_fraction", "farthest_visible_m"})
        EXPECT_TRUE(o.contains(key)) << key;
    EXPECT_EQ(j["command"], "viewshed");
    EXPECT_DOUBLE_EQ(j["parameters"]["reach_m"].get<double>(), 8000.0);
    EXPECT_NEAR(o["ground_m"].get<double>(), 244.7, 0.01);  // test_rasters/README.md
    EXPECT_NEAR(o["eye_m"].get<double>(), 259.7, 0.01);
    // Heights to the millimetre, written as typed, not as the Float32 cell's binary value
    // (issue 15 item 8: 244.6999969482422 and 259.6999969482422 before).
    EXPECT_EQ(o["ground_m"].dump(), "244.7");
    EXPECT_EQ(o["eye_m"].dump(), "259.7");
    EXPECT_LE(o["farthest_visible_m"].get<double>(), 8000.0);

    const Raster v = readRaster(out), m = readRaster(margin), a = readRaster(angle);
    ASSERT_EQ(v.width, 500);
    std::int64_t visible = 0, evaluated = 0;
    for (std::size_t i = 0; i < v.values[0].size(); ++i) {
        const double x = v.values[0][i];
        ASSERT_TRUE(x == 0 || x == 1 || x == 255) << x;
        visible += x == 1;
        evaluated += x != 255;
        if (x != 255) {
            ASSERT_EQ(x == 1, m.values[0][i] >= 0)
                << "margin ≥ 0 exactly where visible, cell " << i;
            ASSERT_TRUE(std::isfinite(a.values[0][i]));
        } else {
            ASSERT_TRUE(std::isnan(m.values[0][i]));
        }
    }
    EXPECT_EQ(visible, o["visible_cells"].get<std::int64_t>());
    EXPECT_EQ(evaluated, o["evaluated_cells"].get<std::int64_t>());
    EXPECT_EQ(v.nodata, 255);
    // Every parameter is recorded in the raster's metadata.
    EXPECT_EQ(metadataItem(out, "LOOKFAR_COMMAND"), "viewshed");
    EXPECT_EQ(metadataItem(out, "LOOKFAR_REACH_M"), "8000");
    EXPECT_EQ(metadataItem(out, "LOOKFAR_REFRACTION"), "0.13");
    EXPECT_EQ(metadataItem(out, "LOOKFAR_OBSERVER_HEIGHT_M"), "15");
    EXPECT_EQ(metadataItem(out, "LOOKFAR_METHOD"), "fast");
    EXPECT_EQ(metadataItem(out, "LOOKFAR_EARTH_MODEL"), "ellipsoid");
    EXPECT_EQ(metadataItem(margin, "LOOKFAR_OBSERVER_CELL"), "117,66");
    // The CRS of the observer's point: the DEM's, by its code (no --crs given).
    EXPECT_EQ(metadataItem(out, "LOOKFAR_COORDINATE_CRS"), "EPSG:32630");
}

// The reference engine gives the same raster as the fast one (they are meant to be identical).
TEST(ViewshedCliTest, ReferenceMethodGivesTheSameRaster) {
    ScratchDir dir;
    std::vector<Raster> bands;
    for (const char* method : {"fast", "reference"}) {
        const std::string out = dir.file(std::string(method) + ".tif");
        runJson({"viewshed", testRaster("geographic_hills.tif"), "--observer", "11.1,47.02", "-o",
                 out, "--method", method, "--observer-height", "10", "--reach", "6000"});
        bands.push_back(readRaster(out));
    }
    EXPECT_EQ(bands[0].values, bands[1].values);
}

// --crs: the observer given in another CRS lands on the same cell and gives the same result.
TEST(ViewshedCliTest, ObserverCoordinatesInAnyCrs) {
    ScratchDir dir;
    // The centre of cell (117, 66) of demo_coast (EPSG:32630) in lon/lat, from PROJ
    // (gdaltransform -s_srs EPSG:32630 -t_srs EPSG:4326).
    auto utm = runJson({"viewshed", testRaster("demo_coast.tif"), "--observer",
                        "422937.5,5598337.5", "-o", dir.file("a.tif")});
    auto ll = runJson({"viewshed", testRaster("demo_coast.tif"), "--crs", "EPSG:4326", "--observer",
                       "-4.08734051105243,50.5319042569007", "-o", dir.file("b.tif")});
    const auto& a = utm["observers"][0];
    const auto& b = ll["observers"][0];
    EXPECT_EQ(b["col"], a["col"]);
    EXPECT_EQ(b["row"], a["row"]);
    EXPECT_EQ(b["visible_cells"], a["visible_cells"]);
    EXPECT_DOUBLE_EQ(b["x"].get<double>(), -4.08734051105243);  // as given, in --crs
}

// docs/design.md: results are identical for any --threads (one observer, and several sites, which
// run in parallel when there are at least as many sites as threads).
TEST(ViewshedCliTest, IdenticalRastersForAnyThreadCount) {
    ScratchDir dir;
    std::vector<Raster> single, multi;
    for (const char* t : {"1", "2", "5"}) {
        const std::string a = dir.file(std::string("v") + t + ".tif");
        const std::string b = dir.file(std::string("c") + t + ".tif");
        runJson({"viewshed", testRaster("demo_coast.tif"), "--observer", "425087.5,5597212.5",
                 "--observer-height", "25", "-o", a, "--threads", t});
        runJson({"viewshed", testRaster("demo_coast.tif"), "--sites", testRaster("demo_sites.csv"),
                 "-o", b, "--threads", t});
        single.push_back(readRaster(a));
        multi.push_back(readRaster(b));
    }
    for (std::size_t k = 1; k < single.size(); ++k) {
        EXPECT_EQ(single[k].values, single[0].values);
        EXPECT_EQ(multi[k].values, multi[0].values);
    }
}
