// `lookfar intervis` on the built binary: the matrix of docs/design.md, distances against PROJ's
// geodesic solver (docs/references.md row 11), GeoJSON in WGS 84 lon/lat as RFC 7946 asks (checked
// with PROJ's own transform), the radio horizon over the flat sea (row 4), bad input.
#include <gtest/gtest.h>
#include <geodesic.h>
#include <proj.h>

#include <nlohmann/json.hpp>

#include <cmath>
#include <fstream>
#include <map>
#include <sstream>

#include "../support/CliRunner.hpp"
#include "../support/CsvFiles.hpp"
#include "../support/RasterFiles.hpp"
#include "../support/VectorFiles.hpp"

using namespace lookfar::testing;

namespace {

struct LonLat {
    double lon, lat;
};
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
double geodesicM(LonLat a, LonLat b) {
    geod_geodesic g;
    geod_init(&g, 6378137.0, 1 / 298.257223563);
    double s12, a1, a2;
    geod_inverse(&g, a.lat, a.lon, b.lat, b.lon, &s12, &a1, &a2);
    return s12;
}

/// Splits a CSV line with RFC 4180 quotes.
// The demo stations (test_rasters/demo_sites.csv), EPSG:32630.
const std::map<std::string, std::pair<double, double>> kDemo = {
    {"Skerrow Head", {422937.5, 5598337.5}},   {"Saltinghow Point", {422837.5, 5594512.5}},
    {"Merrowdun Hill", {425087.5, 5597212.5}}, {"Quarrel Knap", {426937.5, 5594387.5}},
    {"Ashgrise Pike", {431512.5, 5592787.5}},  {"Brennock Fell, North Top", {431162.5, 5594962.5}},
    {"Tollan Rigg", {429787.5, 5598562.5}}};

}  // namespace

TEST(IntervisCliTest, MatrixHasOneRowPerOrderedPairWithPROJDistances) {
    ScratchDir dir;
    CliResult r = runLookfar({"intervis", testRaster("demo_coast.tif"), "--stations",
                              testRaster("demo_sites.csv"), "-o", dir.file("m.csv"), "--summary",
                              dir.file("s.json"), "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const auto rows = readCsv(dir.file("m.csv"));
    ASSERT_EQ(rows.size(), 1u + 7 * 6);
    EXPECT_EQ(firstLine(readFile(dir.file("m.csv"))),
              "from,to,visible,margin_m,distance_m,azimuth_deg,back_azimuth_deg,reason,"
              "azimuth_true_deg,zenith_deg,slope_distance_m,grid_distance_m,scale_factor");
    std::map<std::pair<std::string, std::string>, std::vector<std::string>> by_pair;
    int visible = 0;
    for (std::size_t i = 1; i < rows.size(); ++i) {
        const auto& f = rows[i];
        ASSERT_EQ(f.size(), 13u);
        EXPECT_EQ(f[7], f[2] == "yes" ? "clear" : "blocked");
        ASSERT_TRUE(kDemo.count(f[0]) && kDemo.count(f[1])) << f[0] << " / " << f[1];
        EXPECT_TRUE(f[2] == "yes" || f[2] == "no");
        EXPECT_EQ(f[2] == "yes", std::stod(f[3]) >= 0);
        visible += f[2] == "yes";
        by_pair[{f[0], f[1]}] = f;
        // Row 11: the distance is PROJ's geodesic between the stations as given.
        const auto a = kDemo.at(f[0]), b = kDemo.at(f[1]);
        const double s = geodesicM(toLonLat("EPSG:32630", a.first, a.second),
                                   toLonLat("EPSG:32630", b.first, b.second));
        EXPECT_NEAR(std::stod(f[4]), s, 1e-3);
        // Grid azimuths of a projected DEM: the back azimuth is the reverse bearing.
        const double az = std::atan2(b.first - a.first, b.second - a.second) * 180 / M_PI;
        EXPECT_NEAR(std::stod(f[5]), az < 0 ? az + 360 : az, 1e-4);
        EXPECT_NEAR(std::fmod(std::stod(f[6]) - std::stod(f[5]) + 360, 360), 180, 1e-3);
    }
    // Each pair appears both ways with the same distance and swapped azimuths.
    for (const auto& [key, f] : by_pair) {
        const auto& g = by_pair.at({key.second, key.first});
        EXPECT_EQ(f[4], g[4]);
        EXPECT_EQ(f[5], g[6]);
    }
    const auto j = nlohmann::json::parse(readFile(dir.file("s.json")));
    EXPECT_EQ(j["station_count"], 7);
    EXPECT_EQ(j["pairs"], 21);
    EXPECT_EQ(j["pairs_visible"].get<int>() * 2 + j["pairs_visible_one_way"].get<int>(), visible);
    EXPECT_TRUE(j["stations_seen_by_none"].is_array());
}

// RFC 7946: a FeatureCollection of LineStrings in WGS 84 lon/lat (no "crs" member), here one
// per pair that sees each other; the ends are the stations, as PROJ transforms them.
TEST(IntervisCliTest, GeoJsonLinesAreTheVisiblePairsInWgs84LonLat) {
    ScratchDir dir;
    CliResult r = runLookfar({"intervis", testRaster("demo_coast.tif"), "--stations",
                              testRaster("demo_sites.csv"), "-o", dir.file("m.csv"), "--lines",
                              dir.file("l.geojson"), "--json", "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const auto summary = nlohmann::json::parse(r.out);
    const auto g = nlohmann::json::parse(readFile(dir.file("l.geojson")));
    EXPECT_EQ(g["type"], "FeatureCollection");
    EXPECT_FALSE(g.contains("crs"));
    ASSERT_EQ(g["features"].size(), summary["pairs_visible"].get<std::size_t>());
    ASSERT_GT(g["features"].size(), 0u);
    for (const auto& f : g["features"]) {
        EXPECT_EQ(f["type"], "Feature");
        EXPECT_EQ(f["geometry"]["type"], "LineString");
        const auto& c = f["geometry"]["coordinates"];
        ASSERT_EQ(c.size(), 2u);
        const auto a = kDemo.at(f["properties"]["from"]), b = kDemo.at(f["properties"]["to"]);
        const LonLat la = toLonLat("EPSG:32630", a.first, a.second);
        const LonLat lb = toLonLat("EPSG:32630", b.first, b.second);
        EXPECT_NEAR(c[0][0].get<double>(), la.lon, 1e-7);
        EXPECT_NEAR(c[0][1].get<double>(), la.lat, 1e-7);
        EXPECT_NEAR(c[1][0].get<double>(), lb.lon, 1e-7);
        EXPECT_NEAR(c[1][1].get<double>(), lb.lat, 1e-7);
        EXPECT_GE(f["properties"]["margin_at_to_m"].get<double>(), 0);
        EXPECT_GE(f["properties"]["margin_at_from_m"].get<double>(), 0);
    }
}

// Row 4: radio horizon with k = 0.25, d(km) = 4.12 √h(m) (ITU-R, from memory), on the committed
// flat sea (50 m cells). Masts of 20 m and 30 m: 40.99 km. A sees B at 0.97 × that, not C at
// 1.03 × (the margins allow for rounding 4.12 and for the stations standing on cell centres).
TEST(IntervisCliTest, FlatSeaMastsSeeEachOtherUpToTheSumOfRadioHorizons) {
    ScratchDir dir;
    const double sum = 4120 * (std::sqrt(20.0) + std::sqrt(30.0));
    const double x0 = 400500, y = 5624975;
    std::ofstream(dir.file("st.csv"))
        << "name,x,y,height\nA," << x0 << "," << y << ",20\nB," << x0 + 0.97 * sum << "," << y
        << ",30\nC," << x0 + 1.03 * sum << "," << y << ",30\n";
    CliResult r = runLookfar({"intervis", testRaster("flat_sea.tif"), "--stations",
                              dir.file("st.csv"), "-o", dir.file("m.csv"), "--refraction", "0.25",
                              "--earth-model", "sphere", "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    std::map<std::string, std::string> seen;
    for (const auto& f : readCsv(dir.file("m.csv")))
        seen[f[0] + ">" + f[1]] = f[2];
    EXPECT_EQ(seen["A>B"], "yes");
    EXPECT_EQ(seen["B>A"], "yes");
    EXPECT_EQ(seen["A>C"], "no");
    EXPECT_EQ(seen["C>A"], "no");
}

// Pairs beyond --reach are not judged; the matrix lists them only with --all-pairs (visible
// "no", margin empty), so a network of thousands of stations with a short reach writes the pairs
// that matter and not stations² rows.
TEST(IntervisCliTest, ReachLeavesFarPairsUnjudgedAndUnlisted) {
    ScratchDir dir;
    CliResult r = runLookfar({"intervis", testRaster("demo_coast.tif"), "--stations",
                              testRaster("demo_sites.csv"), "-o", dir.file("all.csv"), "--reach",
                              "5000", "--all-pairs", "--json", "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    int far = 0, near = 0, rows = 0;
    for (const auto& f : readCsv(dir.file("all.csv"))) {
        if (f[0] == "from")
            continue;
        ++rows;
        if (f[3].empty()) {
            EXPECT_GT(std::stod(f[4]), 4990);  // cell-centre distances differ by < 1 m
            EXPECT_EQ(f[2], "no");
            ++far;
        } else {
            EXPECT_LT(std::stod(f[4]), 5010);
            ++near;
        }
    }
    const auto j = nlohmann::json::parse(r.out);
    const int n = j["station_count"].get<int>();
    EXPECT_EQ(rows, n * (n - 1));
    EXPECT_GT(far, 10);
    EXPECT_EQ(near, 2 * j["pairs_within_reach"].get<int>());
    EXPECT_LT(j["pairs_within_reach"].get<int>(), 21);

    // Without --all-pairs: the same rows within reach, and those only.
    r = runLookfar({"intervis", testRaster("demo_coast.tif"), "--stations",
                    testRaster("demo_sites.csv"), "-o", dir.file("near.csv"), "--reach", "5000",
                    "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    std::vector<std::vector<std::string>> expected;
    for (const auto& f : readCsv(dir.file("all.csv")))
        if (!f[3].empty() || f[0] == "from")
            expected.push_back(f);
    EXPECT_EQ(readCsv(dir.file("near.csv")), expected);
}

TEST(IntervisCliTest, StationOutsideTheDemNamesTheFileAndLine) {
    ScratchDir dir;
    std::ofstream(dir.file("st.csv")) << "name,x,y\nA,422937.5,5598337.5\nB,999999,5594512.5\n";
    CliResult r =
        runLookfar({"intervis", testRaster("demo_coast.tif"), "--stations", dir.file("st.csv"),
                    "-o", dir.file("m.csv"), "--lines", dir.file("l.geojson"), "--quiet"});
    EXPECT_EQ(r.exit_code, 3);
    EXPECT_NE(firstLine(r.err).find(dir.file("st.csv") + ", line 3"), std::string::npos) << r.err;
    EXPECT_NE(firstLine(r.err).find("outside the DEM"), std::string::npos) << r.err;
    EXPECT_FALSE(fileExists(dir.file("m.csv")));
    EXPECT_FALSE(fileExists(dir.file("l.geojson")));
}

// Issue 15 item 6: surveyors record instrument heights as elevations. With --heights absolute a
// CSV height is the instrument's elevation: stations given at their ground + 10 m and + 12 m give
// the same matrix (to the rounding of the grounds to the millimetre in the summary) as heights of
// 10 m and 12 m above the ground; an elevation below the ground is exit 3 naming the line.
TEST(IntervisCliTest, AbsoluteHeightsAreElevationsOfTheInstruments) {
    ScratchDir dir;
    std::ofstream(dir.file("rel.csv"))
        << "name,x,y,height\nA,422937.5,5598337.5,10\nB,425087.5,5597212.5,12\n"
           "C,426937.5,5594387.5,\n";
    CliResult r =
        runLookfar({"intervis", testRaster("demo_coast.tif"), "--stations", dir.file("rel.csv"),
                    "-o", dir.file("rel_m.csv"), "--json", "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const auto j = nlohmann::json::parse(r.out);
    const double ga = j["stations"][0]["ground_m"].get<double>();
    const double gb = j["stations"][1]["ground_m"].get<double>();
    std::ofstream(dir.file("abs.csv"))
        << "name,x,y,height\nA,422937.5,5598337.5," << ga + 10 << "\nB,425087.5,5597212.5,"
        << gb + 12 << "\nC,426937.5,5594387.5,\n";
    r = runLookfar({"intervis", testRaster("demo_coast.tif"), "--stations", dir.file("abs.csv"),
                    "-o", dir.file("abs_m.csv"), "--heights", "absolute", "--json", "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const auto k = nlohmann::json::parse(r.out);
    EXPECT_NEAR(k["stations"][0]["height_m"].get<double>(), 10.0, 0.001);
    EXPECT_NEAR(k["stations"][1]["height_m"].get<double>(), 12.0, 0.001);
    EXPECT_NEAR(k["stations"][2]["height_m"].get<double>(), 1.7, 1e-12);  // no height: default
    const auto rel = readCsv(dir.file("rel_m.csv")), abs = readCsv(dir.file("abs_m.csv"));
    ASSERT_EQ(rel.size(), abs.size());
    ASSERT_EQ(rel[0], abs[0]);
    int margin = -1;
    for (std::size_t c = 0; c < rel[0].size(); ++c)
        if (rel[0][c] == "margin_m")
            margin = static_cast<int>(c);
    ASSERT_GE(margin, 0);
    for (std::size_t i = 1; i < rel.size(); ++i) {
        for (std::size_t c = 0; c < rel[i].size(); ++c) {
            const bool eye_dependent = static_cast<int>(c) == margin || rel[0][c] == "zenith_deg" ||
                                       rel[0][c] == "slope_distance_m";
            if (eye_dependent && !rel[i][c].empty())
                EXPECT_NEAR(std::stod(abs[i][c]), std::stod(rel[i][c]), 0.002) << rel[0][c];
            else
                EXPECT_EQ(abs[i][c], rel[i][c]) << rel[0][c] << " of row " << i;
        }
    }
    // Below the ground: refused, naming the file and line, nothing written.
    std::ofstream(dir.file("low.csv"))
        << "name,x,y,height\nA,422937.5,5598337.5," << ga - 5 << "\nB,425087.5,5597212.5,500\n";
    ScratchDir out;
    expectRefused({"intervis", testRaster("demo_coast.tif"), "--stations", dir.file("low.csv"),
                   "-o", out.file("m.csv"), "--heights", "absolute", "--quiet"},
                  3, {"low.csv, line 2", "below the ground", "--heights absolute"}, out);
    expectRefused({"intervis", testRaster("demo_coast.tif"), "--stations", dir.file("rel.csv"),
                   "-o", out.file("m.csv"), "--heights", "sea-level", "--quiet"},
                  2, {"--heights"}, out);
}

// Issue 12 item 17: the stations seen by no other are listed so that a name holding a comma
// reads as one name. Three stations 4 km apart on the flat sea with a 1 km reach: none is seen.
TEST(IntervisCliTest, UnseenStationsWithCommasInTheirNamesReadOneWay) {
    ScratchDir dir;
    std::ofstream(dir.file("st.csv"))
        << "name,x,y\n\"CP 7, roof\",421025,5624975\nTRIG 102,425025,5624975\n"
           "\"Mast \"\"B\"\"\",429025,5624975\n";
    const CliResult r =
        runLookfar({"intervis", testRaster("flat_sea.tif"), "--stations", dir.file("st.csv"), "-o",
                    dir.file("m.csv"), "--reach", "1km", "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    EXPECT_NE(r.out.find("seen by no other station  \"CP 7, roof\", TRIG 102, \"Mast \"\"B\"\"\""),
              std::string::npos)
        << r.out;
}

TEST(IntervisCliTest, DuplicateStationNamesAreBadInput) {
    ScratchDir dir;
    std::ofstream(dir.file("st.csv"))
        << "name,x,y\nA,422937.5,5598337.5\nB,425087.5,5597212.5\nA,426937.5,5594387.5\n";
    CliResult r = runLookfar({"intervis", testRaster("demo_coast.tif"), "--stations",
                              dir.file("st.csv"), "-o", dir.file("m.csv"), "--quiet"});
    EXPECT_EQ(r.exit_code, 3);
    EXPECT_NE(firstLine(r.err).find("line 4"), std::string::npos) << r.err;
    EXPECT_NE(firstLine(r.err).find("line 2"), std::string::npos) << r.err;
    EXPECT_FALSE(fileExists(dir.file("m.csv")));
}

// Real terrain (docs/references.md row 13: the USGS 3″ sample, converted at test time): `link`
// (bilinear samples every half cell, exact sphere) and `intervis` (the sightline rule's row and
// column crossings, parabolic drop) are two independent implementations of "visible"; on every
// pair whose verdict is not within a few metres of the limit they must agree.
TEST(IntervisCliTest, LinkAndIntervisAgreeOnTheUsgsSample) {
    ScratchDir dir;
    // Summits of blocks of the sample (their highest cells) and one lower point.
    const int cells[7][2] = {{117, 100}, {285, 43},  {133, 212}, {169, 200},
                             {219, 297}, {268, 276}, {40, 30}};
    std::ofstream csv(dir.file("st.csv"));
    csv << "name,x,y,height\n";
    std::vector<std::string> points;
    for (int i = 0; i < 7; ++i) {
        char p[64];
        std::snprintf(p, sizeof p, "%.9f,%.9f", -84.41375 + (cells[i][0] + 0.5) / 1200.0,
                      36.7329167 - (cells[i][1] + 0.5) / 1200.0);
        points.push_back(p);
        csv << "s" << i << "," << p << ",20\n";
    }
    csv.close();
    CliResult r = runLookfar({"intervis", usgsSample(), "--stations", dir.file("st.csv"), "-o",
                              dir.file("m.csv"), "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    std::map<std::string, double> margin;
    for (const auto& f : readCsv(dir.file("m.csv")))
        if (f[0] != "from")
            margin[f[0] + ">" + f[1]] = std::stod(f[3]);
    int compared = 0, clear = 0;
    for (int i = 0; i < 7; ++i) {
        for (int j = i + 1; j < 7; ++j) {
            const double m = margin["s" + std::to_string(i) + ">s" + std::to_string(j)];
            CliResult l =
                runLookfar({"link", usgsSample(), "--from", points[i], "--to", points[j],
                            "--from-height", "20", "--to-height", "20", "--json", "--quiet"});
            ASSERT_EQ(l.exit_code, 0) << l.err;
            const auto j_link = nlohmann::json::parse(l.out);
            const double least = j_link["min_clearance_m"].get<double>();
            if (std::fabs(m) < 3 || std::fabs(least) < 1)
                continue;  // near the limit the two samplings may differ
            ++compared;
            clear += m >= 0;
            EXPECT_EQ(m >= 0, j_link["line_of_sight"] == "clear")
                << "s" << i << " ↔ s" << j << ": margin " << m << " m, least clearance " << least;
        }
    }
    EXPECT_GE(compared, 12);
    EXPECT_GE(clear, 3);
    EXPECT_LE(clear, compared - 3);
    RecordProperty("pairs_compared", compared);
    RecordProperty("pairs_clear", clear);
}

// Issue 15 item 2: the stations as points, in a GeoPackage in the DEM's CRS (coordinates as given)
// and in RFC 7946 GeoJSON (WGS 84 lon/lat, as PROJ transforms them), with the summary's counts.
TEST(IntervisCliTest, StationsAsPointsCarryTheirCounts) {
    ScratchDir dir;
    CliResult r = runLookfar({"intervis", testRaster("demo_coast.tif"), "--stations",
                              testRaster("demo_sites.csv"), "-o", dir.file("m.csv"), "--points",
                              dir.file("s.gpkg"), "--json", "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const auto summary = nlohmann::json::parse(r.out);
    std::map<std::string, std::pair<int, int>> counts;
    for (const auto& st : summary["stations"])
        counts[st["name"]] = {st["sees"].get<int>(), st["seen_by"].get<int>()};
    const auto gpkg = readVectorFeatures(dir.file("s.gpkg"));
    ASSERT_EQ(gpkg.size(), kDemo.size());
    for (const auto& p : gpkg) {
        const auto at = kDemo.at(p.fields.at("name"));
        EXPECT_DOUBLE_EQ(p.x, at.first);
        EXPECT_DOUBLE_EQ(p.y, at.second);
        EXPECT_EQ(std::stoi(p.fields.at("sees")), counts.at(p.fields.at("name")).first);
        EXPECT_EQ(std::stoi(p.fields.at("seen_by")), counts.at(p.fields.at("name")).second);
    }
    r = runLookfar({"intervis", testRaster("demo_coast.tif"), "--stations",
                    testRaster("demo_sites.csv"), "-o", dir.file("m2.csv"), "--points",
                    dir.file("s.geojson"), "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    for (const auto& p : readVectorFeatures(dir.file("s.geojson"))) {
        const auto at = kDemo.at(p.fields.at("name"));
        const LonLat ll = toLonLat("EPSG:32630", at.first, at.second);
        EXPECT_NEAR(p.x, ll.lon, 1e-7);
        EXPECT_NEAR(p.y, ll.lat, 1e-7);
    }
}

TEST(IntervisCliTest, PointsInAnUnknownFormatAreRefusedBeforeAnyWork) {
    ScratchDir dir;
    CliResult r = runLookfar({"intervis", testRaster("demo_coast.tif"), "--stations",
                              testRaster("demo_sites.csv"), "-o", dir.file("m.csv"), "--points",
                              dir.file("s.shp")});
    EXPECT_EQ(r.exit_code, 2) << r.err;
    EXPECT_NE(firstLine(r.err).find("--points"), std::string::npos) << r.err;
    EXPECT_NE(firstLine(r.err).find(".gpkg"), std::string::npos) << r.err;
    EXPECT_TRUE(dir.entries().empty());
}

// Issue 15 item 6: survey quantities of each pair. Outside checks: the scale factor against PROJ's
// own point scale factors (proj_factors) averaged along the line by Simpson's rule; the true
// azimuth against PROJ's geodesic solver (geod_inverse); the zenith angle and slope distance
// against the exact geometry of a sphere of Euler's radius along the true azimuth (docs/design.md,
// curvature and refraction; Euler's radius 1/R = cos²α/M + sin²α/N, WGS 84's M and N).
TEST(IntervisCliTest, SurveyQuantitiesAgreeWithProjAndExactGeometry) {
    ScratchDir dir;
    CliResult r =
        runLookfar({"intervis", testRaster("demo_coast.tif"), "--stations",
                    testRaster("demo_sites.csv"), "-o", dir.file("m.csv"), "--json", "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const auto summary = nlohmann::json::parse(r.out);
    std::map<std::string, double> eye;
    for (const auto& st : summary["stations"])
        eye[st["name"]] = st["eye_m"].get<double>();
    PJ_CONTEXT* ctx = proj_context_create();
    // UTM zone 30N on WGS 84, the projection of EPSG:32630, as a bare operation (fast factors).
    PJ* utm = proj_create(ctx, "+proj=utm +zone=30 +ellps=WGS84");
    PJ* to_ll = proj_normalize_for_visualization(
        ctx, proj_create_crs_to_crs(ctx, "EPSG:32630", "EPSG:4326", nullptr));
    auto lonLat = [&](double x, double y) {
        const PJ_COORD c = proj_trans(to_ll, PJ_FWD, proj_coord(x, y, 0, 0));
        return LonLat{c.xy.x, c.xy.y};
    };
    auto pointScale = [&](double lon, double lat) {
        const PJ_FACTORS f =
            proj_factors(utm, proj_coord(lon * M_PI / 180, lat * M_PI / 180, 0, 0));
        return f.meridional_scale;
    };
    const double a = 6378137.0, e2 = 0.00669437999014;
    const auto rows = readCsv(dir.file("m.csv"));
    std::map<std::pair<std::string, std::string>, double> slope;
    for (std::size_t i = 1; i < rows.size(); ++i) {
        const auto& f = rows[i];
        const auto pa = kDemo.at(f[0]), pb = kDemo.at(f[1]);
        const LonLat la = lonLat(pa.first, pa.second);
        const LonLat lb = lonLat(pb.first, pb.second);
        const LonLat mid = lonLat((pa.first + pb.first) / 2, (pa.second + pb.second) / 2);
        const double k = (pointScale(la.lon, la.lat) + 4 * pointScale(mid.lon, mid.lat) +
                          pointScale(lb.lon, lb.lat)) /
                         6;
        EXPECT_NEAR(std::stod(f[12]), k, 2e-7) << f[0] << " → " << f[1];
        const double grid = std::hypot(pb.first - pa.first, pb.second - pa.second);
        EXPECT_NEAR(std::stod(f[11]), grid, 1e-3);
        // True azimuth: PROJ's geodesic.
        geod_geodesic g;
        geod_init(&g, a, 1 / 298.257223563);
        double s12, az1, az2;
        geod_inverse(&g, la.lat, la.lon, lb.lat, lb.lon, &s12, &az1, &az2);
        EXPECT_NEAR(std::stod(f[8]), az1 < 0 ? az1 + 360 : az1, 1e-4);
        // Zenith angle on the sphere of Euler's radius along the true azimuth, k = 0.13.
        const double phi = la.lat * M_PI / 180, alpha = az1 * M_PI / 180;
        const double w = 1 - e2 * std::sin(phi) * std::sin(phi);
        const double M = a * (1 - e2) / std::pow(w, 1.5), N = a / std::sqrt(w);
        const double R =
            1 / (std::cos(alpha) * std::cos(alpha) / M + std::sin(alpha) * std::sin(alpha) / N);
        const double Re = R / (1 - 0.13), th = s12 / Re;
        const double h1 = eye.at(f[0]), h2 = eye.at(f[1]);
        const double elev =
            std::atan2((Re + h2) * std::cos(th) - (Re + h1), (Re + h2) * std::sin(th));
        EXPECT_NEAR(std::stod(f[9]), 90 - elev * 180 / M_PI, 2e-5) << f[0] << " → " << f[1];
        // Slope distance: the chord between the eyes on the true sphere.
        const double T = s12 / R;
        const double chord = std::sqrt((R + h1) * (R + h1) + (R + h2) * (R + h2) -
                                       2 * (R + h1) * (R + h2) * std::cos(T));
        EXPECT_NEAR(std::stod(f[10]), chord, 2e-3);
        slope[{f[0], f[1]}] = std::stod(f[10]);
    }
    for (const auto& [key, v] : slope)
        EXPECT_EQ(v, slope.at({key.second, key.first})) << "the same both ways";
    proj_destroy(to_ll);
    proj_destroy(utm);
    proj_context_destroy(ctx);
}

// Issue 12 item 17c: a geographic DEM across the antimeridian (longitudes 179.5° to 180.5°,
// flat ground at 0 m, 0.01° cells). A station written −179.95° is the same place as 180.05° and
// is placed; the line between stations on either side of 180° is written as RFC 7946 §3.1.9
// asks: longitudes within ±180°, cut in two at the antimeridian, the cut at the mean latitude
// (both stations at 9.5°N). The 11 km between 30 m masts over flat ground is clear (radio
// horizons of about 2 × 22 km with k = 0.25, REFERENCES.md row 4).
TEST(IntervisCliTest, StationsAcrossTheAntimeridianArePlacedAndTheirLineIsCutThere) {
    ScratchDir dir;
    const std::string dem = dir.file("date_line.tif");
    writeFloatGrid(dem, 100, 100, 4326, std::vector<float>(100 * 100, 0.0f),
                   {179.5, 0.01, 0, 10.0, 0, -0.01});
    const std::string csv = dir.file("s.csv");
    std::ofstream(csv) << "name,x,y,height\nWest,179.95,9.5,30\nEast,-179.95,9.5,30\n";
    CliResult r = runLookfar({"intervis", dem, "--stations", csv, "--refraction", "0.25", "-o",
                              dir.file("m.csv"), "--lines", dir.file("l.geojson"), "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const auto g = nlohmann::json::parse(readFile(dir.file("l.geojson")));
    ASSERT_EQ(g["features"].size(), 1u);
    const auto& geometry = g["features"][0]["geometry"];
    ASSERT_EQ(geometry["type"], "MultiLineString");
    for (const auto& part : geometry["coordinates"]) {
        for (const auto& p : part) {
            EXPECT_LE(std::fabs(p[0].get<double>()), 180.0);
            EXPECT_NEAR(p[1].get<double>(), 9.5, 1e-7);
        }
    }
    const auto& c = geometry["coordinates"];
    EXPECT_NEAR(std::fabs(c[0][1][0].get<double>()), 180.0, 1e-9);
    EXPECT_DOUBLE_EQ(c[0][1][0].get<double>(), -c[1][0][0].get<double>());
    // The same point given as −179.95° or as 180.05° makes the same viewshed.
    r = runLookfar(
        {"viewshed", dem, "--observer", "-179.95,9.5", "-o", dir.file("a.tif"), "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    r = runLookfar(
        {"viewshed", dem, "--observer", "180.05,9.5", "-o", dir.file("b.tif"), "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    EXPECT_EQ(readRaster(dir.file("a.tif")).values, readRaster(dir.file("b.tif")).values);
}
