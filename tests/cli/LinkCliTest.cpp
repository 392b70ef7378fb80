// `lookfar link` on the built binary: path length and azimuths against PROJ's geodesic solver
// (docs/references.md row 11, Karney 2013, called here directly), the outputs of docs/design.md,
// and the bad-input rules.
#include <gtest/gtest.h>
#include <geodesic.h>
#include <proj.h>

#include <nlohmann/json.hpp>

#include <cmath>
#include <sstream>

#include "../support/CliRunner.hpp"
#include "../support/CsvFiles.hpp"

using namespace lookfar::testing;

namespace {

struct LonLat {
    double lon, lat;
};

/// PROJ's own transform from `crs` to WGS 84 lon/lat.
LonLat toLonLat(const char* crs, double x, double y) {
    PJ_CONTEXT* ctx = proj_context_create();
    PJ* op = proj_create_crs_to_crs(ctx, crs, "EPSG:4326", nullptr);
    PJ* norm = proj_normalize_for_visualization(ctx, op);
    PJ_COORD out = proj_trans(norm, PJ_FWD, proj_coord(x, y, 0, 0));
    proj_destroy(norm);
    proj_destroy(op);
    proj_context_destroy(ctx);
    return {out.xy.x, out.xy.y};
}

struct Geo {
    double s12, azi1, azi2;
};
Geo wgs84Inverse(LonLat a, LonLat b) {
    geod_geodesic g;
    geod_init(&g, 6378137.0, 1 / 298.257223563);
    Geo r{};
    geod_inverse(&g, a.lat, a.lon, b.lat, b.lon, &r.s12, &r.azi1, &r.azi2);
    return r;
}
double wrap(double az) {
    az = std::fmod(az, 360.0);
    return az < 0 ? az + 360 : az;
}

}  // namespace

// Row 11: on a geographic DEM the path runs along the geodesic; its length and azimuths are
// PROJ's geod_inverse, and every sample lies on that geodesic.
TEST(LinkCliTest, PathFollowsThePROJGeodesicOnAGeographicDem) {
    ScratchDir dir;
    const LonLat a{11.013, 47.091}, b{11.187, 46.942};
    CliResult r = runLookfar({"link", testRaster("geographic_hills.tif"), "--from", "11.013,47.091",
                              "--to", "11.187,46.942", "--from-height", "30", "--to-height", "20",
                              "--csv", dir.file("p.csv"), "--json", "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const auto j = nlohmann::json::parse(r.out);
    const Geo g = wgs84Inverse(a, b);
    EXPECT_NEAR(j["path_length_m"].get<double>(), g.s12, 1e-6);
    EXPECT_NEAR(j["from"]["azimuth_true_deg"].get<double>(), wrap(g.azi1), 1e-9);
    EXPECT_NEAR(j["to"]["azimuth_true_deg"].get<double>(), wrap(g.azi2 + 180), 1e-9);
    // On a lat/lon grid, grid north is true north.
    EXPECT_DOUBLE_EQ(j["from"]["azimuth_grid_deg"].get<double>(),
                     j["from"]["azimuth_true_deg"].get<double>());
    const auto rows = readCsv(dir.file("p.csv"));
    ASSERT_GT(rows.size(), 100u);
    // Samples at most half the smaller cell side apart (1/1200° of longitude ≈ 63 m at 47° N).
    EXPECT_LE(j["sample_spacing_m"].get<double>(), 0.5 * 63.5);
    EXPECT_NEAR(std::stod(rows.back()[0]), g.s12, 1e-3);
    for (std::size_t i : {rows.size() / 4, rows.size() / 2, rows.size() - 2}) {
        const LonLat p{std::stod(rows[i][1]), std::stod(rows[i][2])};
        const Geo gp = wgs84Inverse(a, p);
        EXPECT_NEAR(gp.s12, std::stod(rows[i][0]), 1e-3) << "row " << i;
        EXPECT_NEAR(wrap(gp.azi1), wrap(g.azi1), 1e-6) << "row " << i;
    }
}

// Row 11 on a projected DEM: the ends are taken to lon/lat with PROJ, the length and true
// azimuths are geod_inverse's, the grid azimuth is that of the map coordinates (UTM 30N here,
// so they differ by the meridian convergence). --crs EPSG:4326 gives the same link.
TEST(LinkCliTest, LengthAndAzimuthsMatchPROJOnAProjectedDem) {
    const double ax = 422937.5, ay = 5598337.5, bx = 431512.5, by = 5592787.5;
    CliResult r = runLookfar({"link", testRaster("demo_coast.tif"), "--from", "422937.5,5598337.5",
                              "--to", "431512.5,5592787.5", "--from-height", "15", "--to-height",
                              "40", "--frequency-mhz", "5800", "--json", "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const auto j = nlohmann::json::parse(r.out);
    const LonLat a = toLonLat("EPSG:32630", ax, ay), b = toLonLat("EPSG:32630", bx, by);
    const Geo g = wgs84Inverse(a, b);
    EXPECT_NEAR(j["path_length_m"].get<double>(), g.s12, 1e-6);
    EXPECT_NEAR(j["from"]["azimuth_true_deg"].get<double>(), wrap(g.azi1), 1e-9);
    EXPECT_NEAR(j["to"]["azimuth_true_deg"].get<double>(), wrap(g.azi2 + 180), 1e-9);
    const double grid = wrap(std::atan2(bx - ax, by - ay) * 180 / M_PI);
    EXPECT_NEAR(j["from"]["azimuth_grid_deg"].get<double>(), grid, 1e-9);
    EXPECT_NEAR(j["to"]["azimuth_grid_deg"].get<double>(), wrap(grid + 180), 1e-9);
    // West of the central meridian (−3°) grid north lies west of true north by ~0.8° here.
    EXPECT_NEAR(grid - wrap(g.azi1), 0.8, 0.2);
    // Demo heights: the ends stand on cell centres, so bilinear ground = the cell value.
    EXPECT_NEAR(j["from"]["ground_m"].get<double>(), 244.7, 1e-3);
    EXPECT_NEAR(j["to"]["ground_m"].get<double>(), 900.0, 1e-3);
    EXPECT_NEAR(j["to"]["antenna_m"].get<double>(), 940.0, 1e-3);
    EXPECT_EQ(j["line_of_sight"], "clear");
    EXPECT_TRUE(j["blocked_at_m"].is_null());
    EXPECT_TRUE(j["fresnel_60_clear"].get<bool>());

    char from_ll[64], to_ll[64];
    std::snprintf(from_ll, sizeof from_ll, "%.10f,%.10f", a.lon, a.lat);
    std::snprintf(to_ll, sizeof to_ll, "%.10f,%.10f", b.lon, b.lat);
    CliResult ll = runLookfar({"link", testRaster("demo_coast.tif"), "--crs", "EPSG:4326", "--from",
                               from_ll, "--to", to_ll, "--from-height", "15", "--to-height", "40",
                               "--json", "--quiet"});
    ASSERT_EQ(ll.exit_code, 0) << ll.err;
    const auto k = nlohmann::json::parse(ll.out);
    EXPECT_NEAR(k["from"]["x"].get<double>(), ax, 1e-3);
    EXPECT_NEAR(k["to"]["y"].get<double>(), by, 1e-3);
    EXPECT_NEAR(k["path_length_m"].get<double>(), g.s12, 1e-3);
}

TEST(LinkCliTest, WritesTheProfileCsvPlotAndSummaryOfTheDesign) {
    ScratchDir dir;
    CliResult r = runLookfar({"link", testRaster("demo_coast.tif"), "--from", "426937.5,5594387.5",
                              "--to", "429787.5,5598562.5", "--from-height", "20", "--to-height",
                              "10", "--frequency-mhz", "2400", "--csv", dir.file("p.csv"), "--plot",
                              dir.file("p.svg"), "--summary", dir.file("s.json"), "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const auto rows = readCsv(dir.file("p.csv"));
    ASSERT_GT(rows.size(), 3u);
    EXPECT_EQ(firstLine(readFile(dir.file("p.csv"))),
              "distance_m,x,y,terrain_m,earth_bulge_m,sightline_m,clearance_m,fresnel_radius_m,"
              "fresnel_fraction");
    for (const auto& row : rows)
        EXPECT_EQ(row.size(), 9u);
    const auto j = nlohmann::json::parse(readFile(dir.file("s.json")));
    for (const char* key : {"path_length_m", "line_of_sight", "blocked_at_m", "min_clearance_m",
                            "min_clearance_at_m", "min_fresnel_fraction", "fresnel_60_clear",
                            "from", "to", "tool", "version", "dem", "parameters", "elapsed_s"})
        EXPECT_TRUE(j.contains(key)) << key;
    for (const char* key :
         {"ground_m", "antenna_m", "azimuth_grid_deg", "azimuth_true_deg", "elevation_angle_deg"})
        EXPECT_TRUE(j["to"].contains(key)) << key;
    // This path is blocked just before the far end; the profile CSV says the same.
    EXPECT_EQ(j["line_of_sight"], "blocked");
    const double blocked_at = j["blocked_at_m"].get<double>();
    bool found = false;
    for (std::size_t i = 1; i + 1 < rows.size(); ++i) {
        if (!rows[i][6].empty() && std::stod(rows[i][6]) < 0) {
            EXPECT_NEAR(std::stod(rows[i][0]), blocked_at, 1e-3);
            found = true;
            break;
        }
    }
    EXPECT_TRUE(found);
    EXPECT_FALSE(j["fresnel_60_clear"].get<bool>());
    EXPECT_EQ(j["parameters"]["frequency_mhz"].get<double>(), 2400.0);
    const std::string svg = readFile(dir.file("p.svg"));
    EXPECT_EQ(svg.rfind("<?xml", 0), 0u);
    EXPECT_NE(svg.find("distance from the start (--from), km"), std::string::npos);
    EXPECT_NE(svg.find("first Fresnel zone, 2400 MHz"), std::string::npos);
    EXPECT_NE(svg.find("first block"), std::string::npos);
}

TEST(LinkCliTest, FrequencyMustBePositive) {
    ScratchDir dir;
    for (const char* f : {"0", "-900", "nan"}) {
        CliResult r = runLookfar({"link", testRaster("demo_coast.tif"), "--from",
                                  "422937.5,5598337.5", "--to", "431512.5,5592787.5",
                                  "--frequency-mhz", f, "--csv", dir.file("p.csv"), "--quiet"});
        EXPECT_EQ(r.exit_code, 2) << f << ": " << r.err;
        EXPECT_NE(firstLine(r.err).find("--frequency-mhz"), std::string::npos) << r.err;
    }
    EXPECT_TRUE(dir.entries().empty());
}

TEST(LinkCliTest, EndOutsideTheDemIsBadInputAndWritesNothing) {
    ScratchDir dir;
    CliResult r = runLookfar({"link", testRaster("demo_coast.tif"), "--from", "422937.5,5598337.5",
                              "--to", "440000,5592787.5", "--csv", dir.file("p.csv"), "--plot",
                              dir.file("p.svg"), "--quiet"});
    EXPECT_EQ(r.exit_code, 3);
    EXPECT_NE(firstLine(r.err).find("--to 440000,5592787.5 is outside the DEM"), std::string::npos)
        << r.err;
    EXPECT_TRUE(dir.entries().empty());
}

// Issue 12 item 10: the extent in the message is half-open, as the cells are (demo_coast.tif:
// x 420000 to 432500, y 5590000 to 5600000, 25 m cells), so a point on the east edge is plainly
// outside; and lon/lat values given without --crs get the hint that --crs EPSG:4326 may be meant.
TEST(LinkCliTest, OutsideTheDemStatesTheHalfOpenExtentAndHintsAtLonLat) {
    ScratchDir dir;
    CliResult r = runLookfar({"link", testRaster("demo_coast.tif"), "--from", "422937.5,5598337.5",
                              "--to", "432500,5595000", "--quiet"});
    EXPECT_EQ(r.exit_code, 3) << r.err;
    EXPECT_NE(firstLine(r.err).find("(it holds 420000 ≤ x < 432500 and 5590000 < y ≤ 5600000)"),
              std::string::npos)
        << r.err;
    EXPECT_EQ(firstLine(r.err).find("longitude"), std::string::npos) << r.err;
    r = runLookfar({"link", testRaster("demo_coast.tif"), "--from", "-3.95,50.52", "--to",
                    "422937.5,5598337.5", "--quiet"});
    EXPECT_EQ(r.exit_code, 3) << r.err;
    EXPECT_NE(firstLine(r.err).find("--from -3.95,50.52 is outside the DEM"), std::string::npos)
        << r.err;
    EXPECT_NE(firstLine(r.err).find("look like longitude,latitude"), std::string::npos) << r.err;
    EXPECT_NE(firstLine(r.err).find("--crs EPSG:4326"), std::string::npos) << r.err;
    // With --crs given, no hint: the values were read as the user said.
    r = runLookfar({"link", testRaster("demo_coast.tif"), "--from", "-9.95,50.52", "--to",
                    "-9.9,50.5", "--crs", "EPSG:4326", "--quiet"});
    EXPECT_EQ(r.exit_code, 3) << r.err;
    EXPECT_EQ(firstLine(r.err).find("longitude"), std::string::npos) << r.err;
}

TEST(LinkCliTest, EndOnNoDataIsBadInputAndWritesNothing) {
    ScratchDir dir;
    // nodata_hole.tif: rows and columns 45–54 hold no data (x 430455–430545).
    CliResult r = runLookfar({"link", testRaster("nodata_hole.tif"), "--from", "430500,5589500",
                              "--to", "430905,5589095", "--csv", dir.file("p.csv"), "--quiet"});
    EXPECT_EQ(r.exit_code, 3);
    EXPECT_NE(firstLine(r.err).find("--from 430500,5589500 lies on a no-data cell"),
              std::string::npos)
        << r.err;
    EXPECT_TRUE(dir.entries().empty());
    // Across the hole is fine: no-data does not block.
    CliResult across =
        runLookfar({"link", testRaster("nodata_hole.tif"), "--from", "430305,5589695", "--to",
                    "430705,5589295", "--json", "--quiet"});
    ASSERT_EQ(across.exit_code, 0) << across.err;
}

TEST(LinkCliTest, SameEndTwiceIsAUsageError) {
    CliResult r = runLookfar({"link", testRaster("demo_coast.tif"), "--from", "422937.5,5598337.5",
                              "--to", "422937.5,5598337.5", "--quiet"});
    EXPECT_EQ(r.exit_code, 2);
    EXPECT_NE(firstLine(r.err).find("same point"), std::string::npos) << r.err;
}
