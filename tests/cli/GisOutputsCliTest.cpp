// Rasters GIS users open as they are (issue 15 item 3), through the commands: colour tables on
// class and count layers, internal overviews, the cloud-optimised layout. Read back with GDAL;
// GDAL reports LAYOUT=COG in IMAGE_STRUCTURE for a file in the COG layout (GDAL COG driver
// documentation). The values are the same in every layout (the contract: docs/design.md).
#include <gdal.h>
#include <gtest/gtest.h>

#include <cstring>
#include <nlohmann/json.hpp>

#include "../support/CliRunner.hpp"
#include "../support/RasterFiles.hpp"
#include "../support/VectorFiles.hpp"

using namespace lookfar::testing;

namespace {

const std::string kDemo = testRaster("demo_coast.tif");
const std::string kSites = testRaster("demo_sites.csv");

struct Layout {
    std::string layout;  // IMAGE_STRUCTURE LAYOUT ("" for a plain GeoTIFF)
    int overviews = 0;
    bool palette = false;
    int palette_entries = 0;
};

Layout layoutOf(const std::string& path) {
    GDALAllRegister();
    Layout l;
    GDALDatasetH ds = GDALOpen(path.c_str(), GA_ReadOnly);
    EXPECT_NE(ds, nullptr) << path;
    if (!ds)
        return l;
    const char* v = GDALGetMetadataItem(ds, "LAYOUT", "IMAGE_STRUCTURE");
    l.layout = v ? v : "";
    GDALRasterBandH b = GDALGetRasterBand(ds, 1);
    l.overviews = GDALGetOverviewCount(b);
    if (GDALColorTableH t = GDALGetRasterColorTable(b)) {
        l.palette = true;
        l.palette_entries = GDALGetColorEntryCount(t);
    }
    GDALClose(ds);
    return l;
}

}  // namespace

TEST(GisOutputsCliTest, ClassAndCountLayersCarryColourTables) {
    ScratchDir dir;
    CliResult r = runLookfar({"viewshed", kDemo, "--observer", "425087.5,5597212.5", "-o",
                              dir.file("v.tif"), "--margin", dir.file("m.tif"), "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    EXPECT_TRUE(layoutOf(dir.file("v.tif")).palette);
    EXPECT_FALSE(layoutOf(dir.file("m.tif")).palette) << "continuous values have no palette";
    r = runLookfar({"viewshed", kDemo, "--sites", kSites, "-o", dir.file("c.tif"), "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    EXPECT_TRUE(layoutOf(dir.file("c.tif")).palette);
    r = runLookfar({"select", kDemo, "--candidates", kSites, "--count", "2", "-o",
                    dir.file("s.tif"), "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    EXPECT_TRUE(layoutOf(dir.file("s.tif")).palette);
}

TEST(GisOutputsCliTest, OverviewsAndCloudOptimisedLayoutKeepTheValues) {
    ScratchDir dir;
    const std::vector<std::string> base{"viewshed", kDemo, "--observer", "425087.5,5597212.5",
                                        "--quiet"};
    auto run = [&](const std::string& stem, std::vector<std::string> extra) {
        std::vector<std::string> args = base;
        args.insert(args.end(),
                    {"-o", dir.file(stem + "-v.tif"), "--margin", dir.file(stem + "-m.tif")});
        args.insert(args.end(), extra.begin(), extra.end());
        const CliResult r = runLookfar(args);
        EXPECT_EQ(r.exit_code, 0) << r.err;
    };
    run("plain", {});
    run("ovr", {"--overviews"});
    run("cog", {"--format", "COG"});
    EXPECT_EQ(layoutOf(dir.file("plain-v.tif")).overviews, 0);
    EXPECT_GE(layoutOf(dir.file("ovr-v.tif")).overviews, 1);
    EXPECT_GE(layoutOf(dir.file("ovr-m.tif")).overviews, 1);
    EXPECT_EQ(layoutOf(dir.file("cog-v.tif")).layout, "COG");
    EXPECT_GE(layoutOf(dir.file("cog-m.tif")).overviews, 1);
    for (const char* layer : {"-v.tif", "-m.tif"}) {
        const auto plain = readRaster(dir.file(std::string("plain") + layer));
        for (const char* other : {"ovr", "cog"}) {
            const auto o = readRaster(dir.file(other + std::string(layer)));
            ASSERT_EQ(o.values[0].size(), plain.values[0].size());
            EXPECT_EQ(std::memcmp(o.values[0].data(), plain.values[0].data(),
                                  plain.values[0].size() * sizeof(double)),
                      0)
                << other << layer;
        }
    }
}

TEST(GisOutputsCliTest, UnknownFormatIsRefusedBeforeAnyWork) {
    ScratchDir dir;
    const CliResult r = runLookfar({"viewshed", kDemo, "--observer", "425087.5,5597212.5", "-o",
                                    dir.file("v.tif"), "--format", "PNG"});
    EXPECT_EQ(r.exit_code, 2) << r.err;
    EXPECT_NE(firstLine(r.err).find("--format"), std::string::npos) << r.err;
    EXPECT_TRUE(dir.entries().empty());
}

// Issue 12 item 7: a raster output named for another format (or for none) was written as a
// GeoTIFF in silence. Every raster option of every command is refused before any work, naming
// the option and the path; the DEM is not even opened (a missing DEM would be exit 3).
TEST(GisOutputsCliTest, RasterNamesWithoutATiffExtensionAreRefusedBeforeAnyWork) {
    ScratchDir dir;
    const std::string missing_dem = dir.file("no-such-dem.tif");
    const std::string obs = "425087.5,5597212.5";
    struct Case {
        std::vector<std::string> args;
        std::string option;
    };
    const std::vector<Case> cases = {
        {{"viewshed", missing_dem, "--observer", obs, "-o", dir.file("v.png")}, "-o"},
        {{"viewshed", missing_dem, "--observer", obs, "-o", dir.file("v")}, "-o"},
        {{"viewshed", missing_dem, "--observer", obs, "-o", dir.file("v.tif"), "--margin",
          dir.file("m.jpg")},
         "--margin"},
        {{"viewshed", missing_dem, "--observer", obs, "-o", dir.file("v.tif"), "--angle",
          dir.file("a.tif.bak")},
         "--angle"},
        {{"select", missing_dem, "--candidates", kSites, "--count", "2", "-o", dir.file("s.img")},
         "-o"},
        {{"signal", missing_dem, "--tx", obs, "--frequency-mhz", "446", "--eirp-dbm", "40", "-o",
          dir.file("l.tif"), "--level", dir.file("level.asc")},
         "--level"},
        // horizon checks its raster names too since it became a run class (HorizonRun).
        {{"horizon", missing_dem, "-o", dir.file("h.png")}, "-o"},
        {{"horizon", missing_dem, "-o", dir.file("h.tif"), "--distance", dir.file("d.tif"), "--dip",
          dir.file("dip.tif"), "--svf", dir.file("svf")},
         "--svf"},
    };
    for (const auto& c : cases) {
        SCOPED_TRACE(c.args.back());
        expectRefused(c.args, 2, {c.option, c.args.back(), ".tif extension"}, dir);
    }
    // Upper case and .tiff are GeoTIFF names too.
    const CliResult r = runLookfar({"viewshed", kDemo, "--observer", obs, "-o", dir.file("V.TIFF"),
                                    "--reach", "500", "--quiet"});
    EXPECT_EQ(r.exit_code, 0) << r.err;
}

// Issue 15 item 1: the visible area as polygons. Their areas add up to the summary's visible area
// (the same cells), and OGR's own planar area of the traced outlines agrees (projected DEM: the
// outlines follow cell edges, so within rounding).
TEST(GisOutputsCliTest, VisibleAreaPolygonsAddUpToTheSummary) {
    ScratchDir dir;
    CliResult r =
        runLookfar({"viewshed", kDemo, "--observer", "425087.5,5597212.5", "-o", dir.file("v.tif"),
                    "--polygons", dir.file("v.gpkg"), "--json", "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    auto j = nlohmann::json::parse(r.out);
    const double visible = j["observers"][0]["visible_area_m2"].get<double>();
    double attr = 0, planar = 0;
    const auto features = readVectorFeatures(dir.file("v.gpkg"));
    for (const auto& f : features) {
        EXPECT_EQ(f.fields.at("visible"), "1");
        EXPECT_EQ(f.fields.at("observers"), "observer");
        attr += std::stod(f.fields.at("area_m2"));
        planar += f.planar_area;
    }
    EXPECT_EQ(features.size(), j["polygons"]["features"].get<std::size_t>());
    EXPECT_NEAR(attr, visible, 0.005 * visible);
    EXPECT_NEAR(planar, visible, 1e-6 * visible);

    r = runLookfar({"viewshed", kDemo, "--sites", kSites, "-o", dir.file("c.tif"), "--polygons",
                    dir.file("c.geojson"), "--json", "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    j = nlohmann::json::parse(r.out);
    attr = 0;
    for (const auto& f : readVectorFeatures(dir.file("c.geojson"))) {
        const int count = std::stoi(f.fields.at("count"));
        EXPECT_GE(count, 1);
        EXPECT_LE(count, 7);
        EXPECT_GT(f.ring_signed_area, 0) << "RFC 7946: exterior rings counter-clockwise";
        attr += std::stod(f.fields.at("area_m2"));
    }
    const double any = j["coverage"]["area_seen_by_any_m2"].get<double>();
    EXPECT_NEAR(attr, any, 0.005 * any);
}

TEST(GisOutputsCliTest, PolygonsInAnUnknownFormatAreRefusedBeforeAnyWork) {
    ScratchDir dir;
    const CliResult r = runLookfar({"viewshed", kDemo, "--observer", "425087.5,5597212.5", "-o",
                                    dir.file("v.tif"), "--polygons", dir.file("v.shp")});
    EXPECT_EQ(r.exit_code, 2) << r.err;
    EXPECT_NE(firstLine(r.err).find("--polygons"), std::string::npos) << r.err;
    EXPECT_TRUE(dir.entries().empty());
}

// Issue 15 item 2: viewshed --points writes every site (or the one observer) as a point where it
// was placed, in the CSV's order, with the summary's figures for it.
TEST(GisOutputsCliTest, ViewshedWritesItsSitesAsPointsWithTheirFigures) {
    ScratchDir dir;
    CliResult r =
        runLookfar({"viewshed", kDemo, "--sites", kSites, "--reach", "3000", "-o",
                    dir.file("c.tif"), "--points", dir.file("sites.gpkg"), "--json", "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    auto j = nlohmann::json::parse(r.out);
    EXPECT_EQ(j["outputs"]["points"], dir.file("sites.gpkg"));
    const auto points = readVectorFeatures(dir.file("sites.gpkg"));
    ASSERT_EQ(points.size(), j["observers"].size());
    ASSERT_EQ(points.size(), 7u);
    for (std::size_t i = 0; i < points.size(); ++i) {
        const auto& o = j["observers"][i];
        SCOPED_TRACE(o["name"].get<std::string>());
        EXPECT_EQ(points[i].fields.at("name"), o["name"].get<std::string>());
        EXPECT_DOUBLE_EQ(points[i].x, o["x"].get<double>());  // no --crs: the DEM's CRS
        EXPECT_DOUBLE_EQ(points[i].y, o["y"].get<double>());
        EXPECT_EQ(std::stoll(points[i].fields.at("visible_cells")),
                  o["visible_cells"].get<long long>());
        EXPECT_NEAR(std::stod(points[i].fields.at("visible_area_m2")),
                    o["visible_area_m2"].get<double>(), 1e-6 * o["visible_area_m2"].get<double>());
        EXPECT_NEAR(std::stod(points[i].fields.at("eye_m")), o["eye_m"].get<double>(), 1e-9);
    }
    // One observer: one point, in lon/lat in GeoJSON (RFC 7946). UTM 30N (425087.5, 5597212.5)
    // lies near 4.05° W, 50.52° N (PROJ gives the exact value; 0.1° is the check's tolerance).
    r = runLookfar({"viewshed", kDemo, "--observer", "425087.5,5597212.5", "--name", "Kestle Cairn",
                    "--reach", "2000", "-o", dir.file("v.tif"), "--points", dir.file("o.geojson"),
                    "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const auto one = readVectorFeatures(dir.file("o.geojson"));
    ASSERT_EQ(one.size(), 1u);
    EXPECT_EQ(one[0].fields.at("name"), "Kestle Cairn");
    EXPECT_NEAR(one[0].x, -4.05, 0.1);
    EXPECT_NEAR(one[0].y, 50.52, 0.1);
}

// Issue 15 items 1, 2: select writes the chosen sites' coverage as polygons (adding up to the
// summary's area seen by any chosen site) and the chosen sites as points in the order chosen.
TEST(GisOutputsCliTest, SelectWritesItsCoverageAndItsChosenSites) {
    ScratchDir dir;
    const CliResult r =
        runLookfar({"select", kDemo, "--candidates", kSites, "--count", "3", "--reach", "8000",
                    "-o", dir.file("s.tif"), "--polygons", dir.file("s.gpkg"), "--points",
                    dir.file("p.gpkg"), "--json", "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const auto j = nlohmann::json::parse(r.out);
    double area = 0;
    for (const auto& f : readVectorFeatures(dir.file("s.gpkg")))
        area += std::stod(f.fields.at("area_m2"));
    const double any = j["coverage"]["area_seen_by_any_m2"].get<double>();
    EXPECT_NEAR(area, any, 0.005 * any);
    const auto points = readVectorFeatures(dir.file("p.gpkg"));
    ASSERT_EQ(points.size(), 3u);
    for (std::size_t i = 0; i < points.size(); ++i) {
        EXPECT_EQ(points[i].fields.at("rank"), std::to_string(i + 1));
        EXPECT_EQ(points[i].fields.at("name"), j["selected"][i]["name"].get<std::string>());
    }
}
