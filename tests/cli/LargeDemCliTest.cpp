// Large DEMs (issue 13): reach-limited commands read only the window within reach, and write
// rasters either on the DEM's whole grid with only the window's blocks stored (--extent dem) or
// on the window alone (--extent reach). Checked against the engine run on the whole DEM in this
// process (a refactor keeps its results: common practice, no source), against GDAL reading the
// files back (sparse GeoTIFF blocks read as no data: GDAL's GTiff driver documentation,
// SPARSE_OK), and against the same DEM cut into tiles and put together again by GDAL's VRT.
#include <gdal.h>
#include <gdal_utils.h>
#include <gtest/gtest.h>

#include <nlohmann/json.hpp>

#include <cmath>
#include <fstream>
#include <string>
#include <vector>

#include "../support/CliRunner.hpp"
#include "../support/RasterFiles.hpp"
#include "lookfar/earth/EarthModel.hpp"
#include "lookfar/io/Crs.hpp"
#include "lookfar/io/Dem.hpp"
#include "lookfar/viewshed/Viewshed.hpp"

using namespace lookfar;
using namespace lookfar::testing;

namespace {

// demo_coast.tif: 500 × 400 cells of 25 m (UTM 30N), origin (420000, 5600000), 256² blocks.
// The observer's cell is (200, 150); 2 km reach = 80 cells: the window lies in block row 0.
const std::string kCoastObserver = "425012.5,5596237.5";

nlohmann::json runJson(std::vector<std::string> args) {
    args.push_back("--json");
    args.push_back("--quiet");
    const CliResult r = runLookfar(args);
    EXPECT_EQ(r.exit_code, 0) << r.err;
    return r.exit_code == 0 ? nlohmann::json::parse(r.out) : nlohmann::json::object();
}

bool sameValue(double a, double b) {
    return a == b || (std::isnan(a) && std::isnan(b));
}

/// Cells of `a` and `b` (same size) that differ, over every band.
int differingCells(const Raster& a, const Raster& b) {
    EXPECT_EQ(a.width, b.width);
    EXPECT_EQ(a.height, b.height);
    EXPECT_EQ(a.bands, b.bands);
    if (a.width != b.width || a.height != b.height || a.bands != b.bands)
        return -1;
    int n = 0;
    for (int band = 0; band < a.bands; ++band)
        for (std::size_t i = 0; i < a.values[band].size(); ++i)
            n += sameValue(a.values[band][i], b.values[band][i]) ? 0 : 1;
    return n;
}

std::array<double, 6> geotransformOf(const std::string& path) {
    std::array<double, 6> gt{};
    GDALDatasetH ds = GDALOpen(path.c_str(), GA_ReadOnly);
    EXPECT_NE(ds, nullptr) << path;
    if (ds) {
        GDALGetGeoTransform(ds, gt.data());
        GDALClose(ds);
    }
    return gt;
}

/// True when block (bx, by) of band 1 is stored in the GeoTIFF (GDAL reports its offset in the
/// "TIFF" metadata domain; a sparse block has none).
bool blockStored(const std::string& path, int bx, int by) {
    GDALDatasetH ds = GDALOpen(path.c_str(), GA_ReadOnly);
    EXPECT_NE(ds, nullptr) << path;
    if (!ds)
        return false;
    const std::string key = "BLOCK_OFFSET_" + std::to_string(bx) + "_" + std::to_string(by);
    const char* v = GDALGetMetadataItem(GDALGetRasterBand(ds, 1), key.c_str(), "TIFF");
    const bool stored = v && std::atoll(v) > 0;
    GDALClose(ds);
    return stored;
}

/// demo_coast.tif cut into 2 × 2 tiles of unequal size in `dir`, then put together by a GDAL
/// VRT: returns the VRT's path ("" and a test failure when GDAL fails).
std::string coastMosaic(const ScratchDir& dir) {
    GDALAllRegister();
    GDALDatasetH src = GDALOpen(testRaster("demo_coast.tif").c_str(), GA_ReadOnly);
    EXPECT_NE(src, nullptr);
    if (!src)
        return "";
    std::vector<std::string> tiles;
    const int cuts_c[] = {0, 230, 500}, cuts_r[] = {0, 170, 400};
    for (int i = 0; i < 2; ++i) {
        for (int k = 0; k < 2; ++k) {
            const std::string path =
                dir.file("tile" + std::to_string(i) + std::to_string(k) + ".tif");
            const std::vector<std::string> args = {"-srcwin", std::to_string(cuts_c[i]),
                                                   std::to_string(cuts_r[k]),
                                                   std::to_string(cuts_c[i + 1] - cuts_c[i]),
                                                   std::to_string(cuts_r[k + 1] - cuts_r[k])};
            if (!translateRaster(src, path, args))
                return "";
            tiles.push_back(path);
        }
    }
    GDALClose(src);
    std::vector<const char*> names;
    for (const auto& t : tiles)
        names.push_back(t.c_str());
    const std::string vrt = dir.file("mosaic.vrt");
    GDALDatasetH v = GDALBuildVRT(vrt.c_str(), static_cast<int>(names.size()), nullptr,
                                  names.data(), nullptr, nullptr);
    EXPECT_NE(v, nullptr);
    if (!v)
        return "";
    GDALClose(v);
    return vrt;
}

}  // namespace

TEST(LargeDemCliTest, ReachRunOnAGeographicDemIsTheEngineOnTheWholeDem) {
    // geographic_hills.tif: lat/lon, 1/1200° cells, origin 47.1° N (not exact in binary).
    ScratchDir dir;
    const std::string dem_path = testRaster("geographic_hills.tif");
    const double x = 11.0837, y = 47.0245, reach = 3000.0;
    auto j = runJson({"viewshed", dem_path, "--observer", "11.0837,47.0245", "--reach", "3000",
                      "--target-height", "2", "-o", dir.file("v.tif"), "--margin",
                      dir.file("m.tif"), "--angle", dir.file("a.tif")});
    ASSERT_TRUE(j.contains("observers"));

    const Dem dem = readDem(dem_path);
    const GridGeometry& g = dem.geometry;
    Observer o;
    o.col = g.cellColOf(x);
    o.row = g.cellRowOf(y);
    o.height_m = 1.7;
    o.latitude_deg = LonLatOf(dem.crs.wkt).apply({g.mapX(o.col), g.mapY(o.row)}).y;
    EXPECT_EQ(j["observers"][0]["col"], o.col);
    EXPECT_EQ(j["observers"][0]["row"], o.row);
    ViewshedOptions opt;
    opt.reach_m = reach;
    opt.target_height_m = 2.0;
    opt.want_margin = opt.want_angle = true;
    const EarthModel earth(EarthShape::Ellipsoid, dem.crs.ellipsoid, 6371008.8,
                           EarthModel::kDefaultRefraction);
    const ViewshedGrids whole = computeViewshed(dem.z, g, earth, o, opt);

    // The window read was smaller than the DEM, and the rasters are on the DEM's whole grid.
    const auto& w = j["extent"]["window"];
    EXPECT_LT(w["width"].get<int>(), g.width());
    EXPECT_LT(w["height"].get<int>(), g.height());
    const Raster v = readRaster(dir.file("v.tif")), m = readRaster(dir.file("m.tif")),
                 a = readRaster(dir.file("a.tif"));
    ASSERT_EQ(v.width, g.width());
    ASSERT_EQ(v.height, g.height());
    int differ = 0, visible = 0;
    for (int r = 0; r < g.height(); ++r) {
        for (int c = 0; c < g.width(); ++c) {
            differ += v.at(0, c, r) == whole.visible(c, r) ? 0 : 1;
            differ += sameValue(m.at(0, c, r), whole.margin(c, r)) ? 0 : 1;
            differ += sameValue(a.at(0, c, r), whole.angle(c, r)) ? 0 : 1;
            visible += whole.visible(c, r) == kVisible ? 1 : 0;
        }
    }
    EXPECT_EQ(differ, 0);
    EXPECT_GT(visible, 100);
}

TEST(LargeDemCliTest, DemExtentWritesOnlyTheBlocksOfTheWindow) {
    ScratchDir dir;
    auto j = runJson({"viewshed", testRaster("demo_coast.tif"), "--observer", kCoastObserver,
                      "--reach", "2km", "-o", dir.file("v.tif"), "--margin", dir.file("m.tif")});
    ASSERT_TRUE(j.contains("extent"));
    EXPECT_EQ(j["extent"]["mode"], "dem");
    EXPECT_EQ(j["extent"]["raster_width"], 500);
    EXPECT_EQ(j["extent"]["raster_height"], 400);
    const auto& w = j["extent"]["window"];
    const int c0 = w["col"], r0 = w["row"], ww = w["width"], wh = w["height"];
    EXPECT_EQ(metadataItem(dir.file("v.tif"), "LOOKFAR_EXTENT"), "dem");
    EXPECT_EQ(metadataItem(dir.file("v.tif"), "LOOKFAR_WINDOW"),
              std::to_string(c0) + "," + std::to_string(r0) + "," + std::to_string(ww) + "," +
                  std::to_string(wh));
    // Every cell outside the window reads as no data; inside, some are visible.
    const Raster v = readRaster(dir.file("v.tif")), m = readRaster(dir.file("m.tif"));
    ASSERT_EQ(v.width, 500);
    int outside_with_data = 0, inside_visible = 0;
    for (int r = 0; r < v.height; ++r) {
        for (int c = 0; c < v.width; ++c) {
            const bool inside = c >= c0 && r >= r0 && c < c0 + ww && r < r0 + wh;
            if (!inside) {
                outside_with_data += v.at(0, c, r) != 255 ? 1 : 0;
                outside_with_data += std::isnan(m.at(0, c, r)) ? 0 : 1;
            } else {
                inside_visible += v.at(0, c, r) == 1 ? 1 : 0;
            }
        }
    }
    EXPECT_EQ(outside_with_data, 0);
    EXPECT_GT(inside_visible, 100);
    // The window (rows 69 to 231) lies in the first row of 256² blocks: the second is not stored.
    EXPECT_LT(r0 + wh, 256);
    EXPECT_TRUE(blockStored(dir.file("v.tif"), 0, 0));
    EXPECT_FALSE(blockStored(dir.file("v.tif"), 0, 1));
    EXPECT_FALSE(blockStored(dir.file("v.tif"), 1, 1));
    EXPECT_FALSE(blockStored(dir.file("m.tif"), 1, 1));
}

TEST(LargeDemCliTest, ReachExtentIsTheWindowOnTheDemsGridLines) {
    ScratchDir dir;
    auto jd = runJson({"viewshed", testRaster("demo_coast.tif"), "--observer", kCoastObserver,
                       "--reach", "2000", "-o", dir.file("dem.tif")});
    auto jr = runJson({"viewshed", testRaster("demo_coast.tif"), "--observer", kCoastObserver,
                       "--reach", "2000", "--extent", "reach", "-o", dir.file("reach.tif")});
    ASSERT_TRUE(jr.contains("extent"));
    EXPECT_EQ(jr["extent"]["mode"], "reach");
    EXPECT_EQ(jr["extent"]["window"], jd["extent"]["window"]);
    EXPECT_EQ(jr["observers"], jd["observers"]);  // cells of the whole DEM in both
    const int c0 = jr["extent"]["window"]["col"], r0 = jr["extent"]["window"]["row"];
    const Raster whole = readRaster(dir.file("dem.tif")), part = readRaster(dir.file("reach.tif"));
    EXPECT_EQ(part.width, jr["extent"]["window"]["width"].get<int>());
    EXPECT_EQ(part.height, jr["extent"]["window"]["height"].get<int>());
    EXPECT_EQ(jr["extent"]["raster_width"], part.width);
    EXPECT_LT(part.width, whole.width);
    int differ = 0;
    for (int r = 0; r < part.height; ++r)
        for (int c = 0; c < part.width; ++c)
            differ += part.at(0, c, r) == whole.at(0, c0 + c, r0 + r) ? 0 : 1;
    EXPECT_EQ(differ, 0);
    // Same cell size; the origin moved by whole cells (c0, r0) of the DEM's grid.
    const auto gd = geotransformOf(testRaster("demo_coast.tif"));
    const auto gr = geotransformOf(dir.file("reach.tif"));
    EXPECT_EQ(gr[1], gd[1]);
    EXPECT_EQ(gr[5], gd[5]);
    EXPECT_EQ(gr[0], gd[0] + c0 * gd[1]);
    EXPECT_EQ(gr[3], gd[3] + r0 * gd[5]);
    EXPECT_EQ(metadataItem(dir.file("reach.tif"), "LOOKFAR_EXTENT"), "reach");
}

TEST(LargeDemCliTest, ReachExtentWithoutReachCoversTheDem) {
    ScratchDir dir;
    auto j = runJson({"select", testRaster("demo_coast.tif"), "--candidates",
                      testRaster("demo_sites.csv"), "--count", "2", "--extent", "reach", "-o",
                      dir.file("s.tif")});
    ASSERT_TRUE(j.contains("extent"));
    EXPECT_EQ(j["extent"]["window"]["width"], 500);
    EXPECT_EQ(j["extent"]["window"]["height"], 400);
    const Raster s = readRaster(dir.file("s.tif"));
    EXPECT_EQ(s.width, 500);
    EXPECT_EQ(s.height, 400);
    EXPECT_EQ(geotransformOf(dir.file("s.tif")), geotransformOf(testRaster("demo_coast.tif")));
}

TEST(LargeDemCliTest, UnknownExtentIsAUsageErrorAndWritesNothing) {
    ScratchDir dir;
    const CliResult r = runLookfar({"viewshed", testRaster("demo_coast.tif"), "--observer",
                                    kCoastObserver, "--reach", "2000", "--extent", "window", "-o",
                                    dir.file("v.tif"), "--summary", dir.file("s.json")});
    EXPECT_EQ(r.exit_code, 2) << r.err;
    EXPECT_NE(r.err.find("--extent"), std::string::npos) << r.err;
    EXPECT_NE(r.err.find("window"), std::string::npos) << r.err;
    EXPECT_TRUE(dir.entries().empty());
}

TEST(LargeDemCliTest, VrtMosaicOfTilesWorksLikeOneFile) {
    ScratchDir dir;
    const std::string vrt = coastMosaic(dir);
    ASSERT_FALSE(vrt.empty());
    // The observer's 2 km window (cols 119 to 281, rows 69 to 231) spans all four tiles.
    for (const std::string extent : {"dem", "reach"}) {
        auto a = runJson({"viewshed", testRaster("demo_coast.tif"), "--observer", kCoastObserver,
                          "--reach", "2000", "--extent", extent, "-o", dir.file("one.tif"),
                          "--margin", dir.file("one_m.tif"), "--overwrite"});
        auto b = runJson({"viewshed", vrt, "--observer", kCoastObserver, "--reach", "2000",
                          "--extent", extent, "-o", dir.file("vrt.tif"), "--margin",
                          dir.file("vrt_m.tif"), "--overwrite"});
        EXPECT_EQ(a["observers"], b["observers"]) << extent;
        EXPECT_EQ(a["extent"], b["extent"]) << extent;
        EXPECT_EQ(differingCells(readRaster(dir.file("one.tif")), readRaster(dir.file("vrt.tif"))),
                  0)
            << extent;
        EXPECT_EQ(
            differingCells(readRaster(dir.file("one_m.tif")), readRaster(dir.file("vrt_m.tif"))), 0)
            << extent;
    }
    auto a = runJson({"select", testRaster("demo_coast.tif"), "--candidates",
                      testRaster("demo_sites.csv"), "--count", "3", "--reach", "3000", "-o",
                      dir.file("s1.tif")});
    auto b = runJson({"select", vrt, "--candidates", testRaster("demo_sites.csv"), "--count", "3",
                      "--reach", "3000", "-o", dir.file("s2.tif")});
    EXPECT_EQ(a["selected"], b["selected"]);
    EXPECT_EQ(differingCells(readRaster(dir.file("s1.tif")), readRaster(dir.file("s2.tif"))), 0);
}

TEST(LargeDemCliTest, InfoReadsStripByStripWithTheSameFigures) {
    // The figures of the mosaic of tiles are those of the single file (each of its 200 000 cells
    // read once), and their sum is the one over the whole grid in the same order.
    ScratchDir dir;
    const std::string vrt = coastMosaic(dir);
    ASSERT_FALSE(vrt.empty());
    auto a = runJson({"info", testRaster("demo_coast.tif")});
    auto b = runJson({"info", vrt});
    EXPECT_EQ(a["cells_read"], 500 * 400);
    EXPECT_EQ(b["cells_read"], 500 * 400);
    EXPECT_EQ(a["elevation_m"], b["elevation_m"]);
    EXPECT_EQ(a["dem"]["nodata_cells"], b["dem"]["nodata_cells"]);
    const Dem dem = readDem(testRaster("demo_coast.tif"));
    double sum = 0;
    std::int64_t valid = 0;
    for (float v : dem.z.cells()) {
        if (!std::isnan(v)) {
            sum += v;
            ++valid;
        }
    }
    EXPECT_EQ(a["elevation_m"]["cells_with_data"], valid);
    EXPECT_EQ(a["elevation_m"]["mean"].get<double>(), sum / valid);
}

TEST(LargeDemCliTest, InfoApproxReadsAnOverview) {
    // A copy of demo_coast.tif with 2×, 4× and 8× overviews averaged by GDAL: --approx reads
    // the finest (none has a million cells), whose mean is the mean of the cells (each overview
    // cell averages 2 × 2 whole cells: 500 × 400 divides evenly).
    ScratchDir dir;
    const std::string copy = dir.file("coast.tif");
    {
        std::ofstream(copy, std::ios::binary) << readFile(testRaster("demo_coast.tif"));
        GDALAllRegister();
        GDALDatasetH ds = GDALOpen(copy.c_str(), GA_Update);
        ASSERT_NE(ds, nullptr);
        int levels[] = {2, 4, 8};
        EXPECT_EQ(GDALBuildOverviews(ds, "AVERAGE", 3, levels, 0, nullptr, nullptr, nullptr),
                  CE_None);
        GDALClose(ds);
    }
    auto exact = runJson({"info", copy});
    auto approx = runJson({"info", copy, "--approx"});
    EXPECT_EQ(exact["cells_read"], 500 * 400);
    EXPECT_FALSE(exact.contains("approximate"));
    EXPECT_EQ(approx["cells_read"], 250 * 200);
    EXPECT_EQ(approx["approximate"]["overview_width"], 250);
    EXPECT_NEAR(approx["elevation_m"]["mean"].get<double>(),
                exact["elevation_m"]["mean"].get<double>(), 1e-3);
    // Without overviews, --approx reads every cell and says so.
    auto none = runJson({"info", testRaster("demo_coast.tif"), "--approx"});
    EXPECT_EQ(none["cells_read"], 500 * 400);
    EXPECT_TRUE(none["approximate"].is_string());
    EXPECT_EQ(none["elevation_m"], exact["elevation_m"]);
}
