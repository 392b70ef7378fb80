// `lookfar link` on the built binary: path length and azimuths against PROJ's geodesic solver
// (docs/references.md row 11, Karney 2013, called here directly), the outputs of docs/design.md,
// and the bad-input rules.
#include <gtest/gtest.h>
#include <geodesic.h>
#include <proj.h>

#include <nlohmann/json.hpp>

#include <cmath>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

#include "../support/CliRunner.hpp"
#include "../support/CsvFiles.hpp"
#include "../support/RasterFiles.hpp"

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

namespace {

void writeText(const std::string& path, const std::string& text) {
    std::ofstream(path, std::ios::binary) << text;
}

/// The figures of a link summary: everything but the keys every command shares.
nlohmann::json figures(nlohmann::json j) {
    for (const char* key :
         {"tool", "version", "command", "command_line", "dem", "parameters", "elapsed_s", "extent"})
        j.erase(key);
    return j;
}

struct PairRow {
    const char *from, *to;
    const char* from_h;
    const char* to_h;
    const char* frequency;  ///< "" = the row gives none
};

}  // namespace

// Issue 14 item 6: every link of a --pairs run gives exactly the figures (bit for bit in the
// JSON) of a single `link --from --to` run with the same ends, heights and frequency: the pairs
// run reads one window for all its paths, the single run only its own. The single run is the
// reference here; its geometry is tested against PROJ above.
TEST(LinkCliTest, PairsGiveExactlyTheFiguresOfSingleLinks) {
    ScratchDir in, dir;
    const std::vector<PairRow> rows = {
        {"426937.5,5594387.5", "429787.5,5598562.5", "20", "10", "2400"},
        {"422937.5,5598337.5", "431512.5,5592787.5", "15", "40", "5800"},
        {"425087.5,5597212.5", "431162.5,5594962.5", "25", "30", ""},    // takes --frequency-mhz
        {"422837.5,5594512.5", "426937.5,5594387.5", "12", "20", "10"},  // no loss below 30 MHz
        {"423000.3,5591234.9", "424987.1,5599876.2", "2", "0", "900"},   // off cell centres
    };
    std::string csv =
        "\xEF\xBB\xBF"
        "from_name,from_x,from_y,from_height,to_name,to_x,to_y,to_height,frequency_mhz\r\n";
    for (std::size_t i = 0; i < rows.size(); ++i) {
        csv += "\"A" + std::to_string(i) + ", mast\"," + rows[i].from + "," + rows[i].from_h +
               ",B" + std::to_string(i) + "," + rows[i].to + "," + rows[i].to_h + "," +
               rows[i].frequency + "\r\n";
    }
    writeText(in.file("pairs.csv"), csv);
    const std::vector<std::string> common = {"--refraction", "0.25",   "--required-clearance",
                                             "0.6",          "--json", "--quiet"};
    std::vector<std::string> args = {"link",
                                     testRaster("demo_coast.tif"),
                                     "--pairs",
                                     in.file("pairs.csv"),
                                     "--frequency-mhz",
                                     "900",
                                     "--csv",
                                     dir.file("links.csv")};
    args.insert(args.end(), common.begin(), common.end());
    CliResult r = runLookfar(args);
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const auto j = nlohmann::json::parse(r.out);
    ASSERT_EQ(j["links"].size(), rows.size());
    EXPECT_EQ(j["link_count"].get<int>(), 5);
    const auto table = readCsv(dir.file("links.csv"));
    ASSERT_EQ(table.size(), rows.size() + 1);
    EXPECT_EQ(table[0].size(), 21u);
    int clear = 0;
    for (std::size_t i = 0; i < rows.size(); ++i) {
        const std::string f = *rows[i].frequency ? rows[i].frequency : "900";
        std::vector<std::string> one = {"link",
                                        testRaster("demo_coast.tif"),
                                        "--from",
                                        rows[i].from,
                                        "--to",
                                        rows[i].to,
                                        "--from-height",
                                        rows[i].from_h,
                                        "--to-height",
                                        rows[i].to_h,
                                        "--frequency-mhz",
                                        f};
        one.insert(one.end(), common.begin(), common.end());
        CliResult single = runLookfar(one);
        ASSERT_EQ(single.exit_code, 0) << single.err;
        const auto s = nlohmann::json::parse(single.out);
        nlohmann::json entry = j["links"][i];
        EXPECT_EQ(entry["from_name"], "A" + std::to_string(i) + ", mast");
        EXPECT_EQ(entry["to_name"], "B" + std::to_string(i));
        EXPECT_EQ(entry["line"].get<int>(), static_cast<int>(i) + 2);
        EXPECT_EQ(entry["frequency_mhz"].get<double>(), std::stod(f));
        for (const char* key : {"index", "line", "from_name", "to_name", "frequency_mhz"})
            entry.erase(key);
        EXPECT_EQ(entry, figures(s))
            << "row " << i << "\npairs: " << entry.dump(1) << "\nsingle: " << figures(s).dump(1);
        clear += s["line_of_sight"] == "clear";
        // The CSV row carries the same figures, rounded.
        const auto& row = table[i + 1];
        EXPECT_EQ(row[0], "A" + std::to_string(i) + ", mast");
        EXPECT_NEAR(std::stod(row[2]), s["path_length_m"].get<double>(), 5e-4);
        EXPECT_EQ(row[3], s["line_of_sight"].get<std::string>());
        EXPECT_NEAR(std::stod(row[7]), s["min_fresnel_fraction"].get<double>(), 5e-5);
        if (s["basic_loss_db"].is_null()) {
            EXPECT_EQ(row[10], "");
        } else {
            EXPECT_NEAR(std::stod(row[10]), s["basic_loss_db"].get<double>(), 5e-3);
        }
        EXPECT_NEAR(std::stod(row[12]), s["from"]["azimuth_grid_deg"].get<double>(), 5e-5);
        EXPECT_NEAR(std::stod(row[18]), s["to"]["elevation_angle_deg"].get<double>(), 5e-5);
        if (!s["required_clearance"]["from_height_m"].is_null()) {
            EXPECT_NEAR(std::stod(row[19]), s["required_clearance"]["from_height_m"].get<double>(),
                        5e-4);
        }
    }
    EXPECT_EQ(j["clear"].get<int>(), clear);
    EXPECT_EQ(j["blocked"].get<int>(), 5 - clear);
    // The loss is there where the method applies (30 MHz to 50 GHz, both antennas above ground).
    EXPECT_TRUE(j["links"][0]["basic_loss_db"].is_number());
    EXPECT_TRUE(j["links"][3]["basic_loss_db"].is_null());
    EXPECT_TRUE(j["links"][4]["basic_loss_db"].is_null());
}

// The same on a geographic DEM, with the ends given in another CRS (--crs), along geodesics.
TEST(LinkCliTest, PairsOnAGeographicDemMatchSingleLinks) {
    ScratchDir in;
    writeText(in.file("pairs.csv"),
              "from_name,from_x,from_y,from_height,to_name,to_x,to_y,to_height\n"
              "a,11.013,47.091,30,b,11.187,46.942,20\n"
              "c,11.05,46.95,10m,d,11.15,47.08,100ft\n");
    CliResult r = runLookfar({"link", testRaster("geographic_hills.tif"), "--pairs",
                              in.file("pairs.csv"), "--json", "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const auto j = nlohmann::json::parse(r.out);
    const char* ends[2][4] = {{"11.013,47.091", "11.187,46.942", "30", "20"},
                              {"11.05,46.95", "11.15,47.08", "10m", "100ft"}};
    for (int i = 0; i < 2; ++i) {
        CliResult single = runLookfar({"link", testRaster("geographic_hills.tif"), "--from",
                                       ends[i][0], "--to", ends[i][1], "--from-height", ends[i][2],
                                       "--to-height", ends[i][3], "--json", "--quiet"});
        ASSERT_EQ(single.exit_code, 0) << single.err;
        nlohmann::json entry = j["links"][i];
        for (const char* key : {"index", "line", "from_name", "to_name", "frequency_mhz"})
            entry.erase(key);
        EXPECT_EQ(entry, figures(nlohmann::json::parse(single.out))) << "row " << i;
        EXPECT_TRUE(j["links"][i]["min_fresnel_fraction"].is_null());
    }
}

// Bad input of --pairs and --required-clearance: one sentence, the documented exit code, nothing
// written.
TEST(LinkCliTest, BadPairsAndRequiredClearanceWriteNothing) {
    ScratchDir in, dir;
    const std::string header =
        "from_name,from_x,from_y,from_height,to_name,to_x,to_y,to_height,frequency_mhz\n";
    const std::string good = "A,426937.5,5594387.5,20,B,429787.5,5598562.5,10,2400\n";
    const std::string dem = testRaster("demo_coast.tif");
    const std::string out = dir.file("links.csv");
    auto pairsRun = [&](const std::string& text, std::vector<std::string> extra = {}) {
        writeText(in.file("p.csv"), text);
        std::vector<std::string> args = {"link",  dem, "--pairs", in.file("p.csv"),
                                         "--csv", out, "--quiet"};
        args.insert(args.end(), extra.begin(), extra.end());
        return runLookfar(args);
    };
    struct Case {
        std::string text;
        std::vector<std::string> extra;
        int exit;
        std::string says;
    };
    const std::vector<Case> cases = {
        {header + good + "A,426937.5,5594387.5,20,B,429787.5\n",
         {},
         3,
         "p.csv, line 3: 6 fields where the header has 9"},
        {header + good + "A,426937.5,,20,B,429787.5,5598562.5,10,\n",
         {},
         3,
         "p.csv, line 3: from_y is empty"},
        {header + "A,426937.5,5594387.5,20,B,440000,5598562.5,10,\n",
         {},
         3,
         "p.csv, line 2: to 'B' at 440000,5598562.5 is outside the DEM"},
        {header + "A,426937.5,5594387.5,20,B,426937.5,5594387.5,10,\n",
         {},
         3,
         "p.csv, line 2: from and to are the same point"},
        {header + good + "A,426937.5,5594387.5,20,B,429787.5,5598562.5,10,\n",
         {"--required-clearance", "0.6"},
         3,
         "p.csv, line 3: the link from 'A' to 'B' has no frequency_mhz and no --frequency-mhz"},
        {header + good, {"--from", "426937.5,5594387.5"}, 2, "--pairs"},
        {header + good, {"--to-height", "3"}, 2, "--from-height and --to-height are for one link"},
        {header + good, {"--plot", dir.file("p.svg")}, 2, "--plot draws the profile of one link"},
        {header + good,
         {"--required-clearance", "-0.1"},
         2,
         "--required-clearance: '-0.1' is not a fraction"},
    };
    for (const Case& c : cases) {
        CliResult r = pairsRun(c.text, c.extra);
        EXPECT_EQ(r.exit_code, c.exit) << c.says << ": " << r.err;
        EXPECT_NE(firstLine(r.err).find(c.says), std::string::npos) << r.err;
        EXPECT_TRUE(dir.entries().empty()) << c.says;
    }
    // One link: --required-clearance needs --frequency-mhz; neither end point given.
    CliResult r = runLookfar({"link", dem, "--from", "426937.5,5594387.5", "--to",
                              "429787.5,5598562.5", "--required-clearance", "0.6", "--quiet"});
    EXPECT_EQ(r.exit_code, 2);
    EXPECT_NE(firstLine(r.err).find("--required-clearance needs --frequency-mhz"),
              std::string::npos)
        << r.err;
    r = runLookfar({"link", dem, "--to", "429787.5,5598562.5", "--quiet"});
    EXPECT_EQ(r.exit_code, 2);
    EXPECT_NE(firstLine(r.err).find("give --from X,Y and --to X,Y"), std::string::npos) << r.err;
}

// The single link reports the loss of the delta-Bullington method of `signal` (tested against
// ITU-R P.525/P.526 in PropagationTest): over a clear path the diffraction part is small and the
// free-space part is P.525's 32.45 + 20 log f(MHz) + 20 log d(km) over the slant distance.
TEST(LinkCliTest, LossIsFreeSpaceOverTheSlantDistancePlusDiffraction) {
    CliResult r =
        runLookfar({"link", testRaster("demo_coast.tif"), "--from", "422937.5,5598337.5", "--to",
                    "431512.5,5592787.5", "--from-height", "15", "--to-height", "40",
                    "--frequency-mhz", "5800", "--refraction", "0.25", "--json", "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const auto j = nlohmann::json::parse(r.out);
    const double d = j["path_length_m"].get<double>();
    const double dz = j["to"]["antenna_m"].get<double>() - j["from"]["antenna_m"].get<double>();
    const double slant_km = std::hypot(d, dz) / 1000.0;
    // P.525-4 eq. (4): L_bf = 32.4 + 20 log f + 20 log d; 32.45 with c exact (from memory).
    EXPECT_NEAR(j["free_space_loss_db"].get<double>(),
                32.45 + 20 * std::log10(5800.0) + 20 * std::log10(slant_km), 0.01);
    EXPECT_NEAR(j["basic_loss_db"].get<double>(),
                j["free_space_loss_db"].get<double>() + j["diffraction_loss_db"].get<double>(),
                1e-9);
    EXPECT_EQ(j["line_of_sight"], "clear");
    EXPECT_GE(j["diffraction_loss_db"].get<double>(), 0.0);
    EXPECT_LT(j["diffraction_loss_db"].get<double>(), 1.0);  // 60 % of F1 clear: no real loss
    // Without a frequency: no loss, and no required heights asked.
    r = runLookfar({"link", testRaster("demo_coast.tif"), "--from", "422937.5,5598337.5", "--to",
                    "431512.5,5592787.5", "--json", "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const auto k = nlohmann::json::parse(r.out);
    EXPECT_TRUE(k["basic_loss_db"].is_null());
    EXPECT_FALSE(k.contains("required_clearance"));
}

// Issue 14 item 6: --refraction takes a list. The figures are those of the first k; each k's
// line in the summary is what a run with that k alone gives; the plot labels every sightline.
TEST(LinkCliTest, RefractionListDrawsEachKAndAgreesWithSingleRuns) {
    ScratchDir dir;
    const std::vector<std::string> base = {"link",
                                           testRaster("demo_coast.tif"),
                                           "--from",
                                           "422937.5,5598337.5",
                                           "--to",
                                           "431512.5,5592787.5",
                                           "--from-height",
                                           "15",
                                           "--to-height",
                                           "40",
                                           "--frequency-mhz",
                                           "900",
                                           "--json",
                                           "--quiet"};
    std::vector<std::string> args = base;
    args.insert(args.end(), {"--refraction", "0.25, -0.33,0.5", "--plot", dir.file("p.svg")});
    CliResult r = runLookfar(args);
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const auto j = nlohmann::json::parse(r.out);
    EXPECT_EQ(j["parameters"]["refraction"].get<double>(), 0.25);
    ASSERT_EQ(j["refractions"].size(), 3u);
    const double ks[] = {0.25, -0.33, 0.5};
    for (int i = 0; i < 3; ++i) {
        std::vector<std::string> one = base;
        one.insert(one.end(), {"--refraction", std::to_string(ks[i])});
        CliResult single = runLookfar(one);
        ASSERT_EQ(single.exit_code, 0) << single.err;
        const auto s = nlohmann::json::parse(single.out);
        const auto& e = j["refractions"][i];
        EXPECT_EQ(e["refraction"].get<double>(), ks[i]);
        for (const char* key :
             {"effective_radius_m", "line_of_sight", "blocked_at_m", "min_clearance_m",
              "min_clearance_at_m", "min_fresnel_fraction", "min_fresnel_at_m"})
            EXPECT_EQ(e[key], s[key]) << "k " << ks[i] << ", " << key;
        if (i == 0) {
            nlohmann::json main = figures(j);
            main.erase("refractions");
            EXPECT_EQ(main, figures(s));
        }
    }
    // A lower k bends the sightline less: the effective radius is smaller, the clearance less.
    EXPECT_LT(j["refractions"][1]["min_clearance_m"].get<double>(),
              j["refractions"][2]["min_clearance_m"].get<double>());
    const std::string svg = readFile(dir.file("p.svg"));
    EXPECT_NE(svg.find("sightline, k = 0.25"), std::string::npos);
    EXPECT_NE(svg.find("sightline and F1, k = -0.33"), std::string::npos);
    EXPECT_NE(svg.find("sightline and F1, k = 0.5"), std::string::npos);

    // Refused: a bad value (named), five values, a list with --pairs.
    for (const auto& [k, says] : std::vector<std::pair<std::string, std::string>>{
             {"0.25,1.2", "--refraction: 1.2 is outside -1 <= k < 1"},
             {"0.1,0.2,0.3,0.4,0.5", "at most 4"},
             {"0.25,", "--refraction: '' is not a decimal number"}}) {
        std::vector<std::string> bad = base;
        bad.insert(bad.end(), {"--refraction", k, "--plot", dir.file("q.svg")});
        CliResult e = runLookfar(bad);
        EXPECT_EQ(e.exit_code, 2) << k;
        EXPECT_NE(firstLine(e.err).find(says), std::string::npos) << e.err;
    }
    ScratchDir in;
    writeText(in.file("p.csv"),
              "from_name,from_x,from_y,from_height,to_name,to_x,to_y,to_height\n"
              "A,426937.5,5594387.5,20,B,429787.5,5598562.5,10\n");
    CliResult e = runLookfar({"link", testRaster("demo_coast.tif"), "--pairs", in.file("p.csv"),
                              "--refraction", "0.25,-0.33", "--quiet"});
    EXPECT_EQ(e.exit_code, 2);
    EXPECT_NE(firstLine(e.err).find("with --pairs give one k"), std::string::npos) << e.err;
    EXPECT_FALSE(fileExists(dir.file("q.svg")));
}

// The link's loss is signal's: over the flat sea (analytic terrain: all 0 m) the loss `link`
// gives from one cell centre to another 10 km east equals the loss `signal` writes at that cell,
// for land, for sea and for horizontal polarization, to 0.02 dB (the two sample the path
// differently and take the effective radius from the drop or from the middle: common practice,
// no source). The method itself is checked against ITU-R P.525/P.526 in PropagationTest. At
// 30 MHz with 2 m masts the ground matters: the sea loses over 20 dB less than land.
TEST(LinkCliTest, LossWithTheGroundConstantsIsSignalsLoss) {
    ScratchDir dir;
    const std::string sea = testRaster("flat_sea.tif");
    double land_loss = 0, sea_loss = 0;
    for (const std::vector<std::string>& ground :
         {std::vector<std::string>{},
          std::vector<std::string>{"--ground-permittivity", "80", "--ground-conductivity", "5"},
          std::vector<std::string>{"--polarization", "horizontal"}}) {
        std::vector<std::string> signal = {
            "signal",  sea,           "--tx", "400025,5624975",     "--tx-height",
            "2",       "--rx-height", "2",    "--frequency-mhz",    "30",
            "--reach", "10100",       "-o",   dir.file("loss.tif"), "--overwrite",
            "--json",  "--quiet"};
        signal.insert(signal.end(), ground.begin(), ground.end());
        CliResult s = runLookfar(signal);
        ASSERT_EQ(s.exit_code, 0) << s.err;
        const auto sj = nlohmann::json::parse(s.out);
        const int col = sj["transmitter"]["col"].get<int>() + 200, row = sj["transmitter"]["row"];
        const double expected = readRaster(dir.file("loss.tif")).at(0, col, row);
        std::vector<std::string> link = {"link",
                                         sea,
                                         "--from",
                                         "400025,5624975",
                                         "--to",
                                         "410025,5624975",
                                         "--from-height",
                                         "2",
                                         "--to-height",
                                         "2",
                                         "--frequency-mhz",
                                         "30",
                                         "--refraction",
                                         "0.25",
                                         "--json",
                                         "--quiet"};
        link.insert(link.end(), ground.begin(), ground.end());
        CliResult l = runLookfar(link);
        ASSERT_EQ(l.exit_code, 0) << l.err;
        const auto lj = nlohmann::json::parse(l.out);
        EXPECT_NEAR(lj["basic_loss_db"].get<double>(), expected, 0.02) << ground.size();
        if (ground.empty())
            land_loss = expected;
        if (ground.size() == 4) {
            sea_loss = expected;
            EXPECT_EQ(lj["parameters"]["ground_permittivity"].get<double>(), 80.0);
            EXPECT_EQ(lj["parameters"]["ground_conductivity_s_m"].get<double>(), 5.0);
        }
    }
    EXPECT_GT(land_loss - sea_loss, 20.0);
}

// With --crs the pairs' ends are transformed as --from/--to are: still the same figures.
TEST(LinkCliTest, PairsGivenInAnotherCrsMatchSingleLinks) {
    ScratchDir in;
    writeText(in.file("p.csv"),
              "from_name,from_x,from_y,from_height,to_name,to_x,to_y,to_height\n"
              "a,-4.08,50.52,10,b,-3.97,50.49,20\n");
    CliResult r = runLookfar({"link", testRaster("demo_coast.tif"), "--crs", "EPSG:4326", "--pairs",
                              in.file("p.csv"), "--json", "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    CliResult single = runLookfar({"link", testRaster("demo_coast.tif"), "--crs", "EPSG:4326",
                                   "--from=-4.08,50.52", "--to=-3.97,50.49", "--from-height", "10",
                                   "--to-height", "20", "--json", "--quiet"});
    ASSERT_EQ(single.exit_code, 0) << single.err;
    nlohmann::json entry = nlohmann::json::parse(r.out)["links"][0];
    for (const char* key : {"index", "line", "from_name", "to_name", "frequency_mhz"})
        entry.erase(key);
    EXPECT_EQ(entry, figures(nlohmann::json::parse(single.out)));
}
