// `horizon -o` on a DEM over --memory (issue 13 items 3, 4, 7, 8): worked tile by tile, every
// raster the same values as the run that holds the whole DEM, for several budgets and thread
// counts; a DEM that does not fit without a reach, an unparsable --memory and one below a tile are
// refused before any work, writing nothing. The whole-DEM run is the reference (common practice,
// no source: tiling changes how, not what). The DEMs are demo_coast.tif resampled by GDAL
// (gdal_translate -outsize, bilinear) to more cells than the small budgets hold.
#include <gdal.h>
#include <gdal_utils.h>
#include <gtest/gtest.h>

#include <nlohmann/json.hpp>

#include <cstring>
#include <string>
#include <vector>

#include "../support/CliRunner.hpp"
#include "../support/RasterFiles.hpp"

using namespace lookfar::testing;

namespace {

/// demo_coast.tif resampled to `width` × `height` cells into `dir` ("" and a failure when GDAL
/// fails).
std::string resampledCoast(const ScratchDir& dir, int width, int height) {
    GDALAllRegister();
    GDALDatasetH src = GDALOpen(testRaster("demo_coast.tif").c_str(), GA_ReadOnly);
    EXPECT_NE(src, nullptr);
    if (!src)
        return "";
    const std::string path = dir.file("coast_" + std::to_string(width) + ".tif");
    const std::vector<std::string> args = {
        "-outsize", std::to_string(width), std::to_string(height), "-r", "bilinear", "-co",
        "TILED=YES"};
    const bool ok = translateRaster(src, path, args);
    GDALClose(src);
    return ok ? path : "";
}

/// Bit-for-bit equal values in every band (NaN never occurs: no data is −9999).
bool sameValues(const Raster& a, const Raster& b) {
    if (a.width != b.width || a.height != b.height || a.bands != b.bands)
        return false;
    for (int band = 0; band < a.bands; ++band) {
        if (std::memcmp(a.values[band].data(), b.values[band].data(),
                        a.values[band].size() * sizeof(double)) != 0)
            return false;
    }
    return true;
}

nlohmann::json horizonRun(const std::string& dem, const ScratchDir& dir, const std::string& tag,
                          const std::vector<std::string>& extra) {
    std::vector<std::string> args = {"horizon",      dem,
                                     "--directions", "7",
                                     "--reach",      "1km",
                                     "-o",           dir.file("a" + tag + ".tif"),
                                     "--distance",   dir.file("d" + tag + ".tif"),
                                     "--svf",        dir.file("s" + tag + ".tif"),
                                     "--dip",        dir.file("p" + tag + ".tif"),
                                     "--json",       "--quiet"};
    args.insert(args.end(), extra.begin(), extra.end());
    const CliResult r = runLookfar(args);
    EXPECT_EQ(r.exit_code, 0) << r.err;
    return r.exit_code == 0 ? nlohmann::json::parse(r.out) : nlohmann::json::object();
}

}  // namespace

TEST(HorizonTilesCliTest, TiledRastersEqualTheWholeDemRunForAnyBudgetAndThreads) {
    ScratchDir dir;
    const std::string dem = resampledCoast(dir, 1000, 800);  // 12.5 m cells
    ASSERT_FALSE(dem.empty());
    const nlohmann::json whole = horizonRun(dem, dir, "0", {});
    EXPECT_FALSE(whole["horizon"].contains("tiles"));
    const std::vector<std::vector<std::string>> runs = {
        {"--memory", "32M", "--threads", "1"}, {"--memory", "32M"}, {"--memory", "40m"}};
    for (std::size_t i = 0; i < runs.size(); ++i) {
        const std::string tag = std::to_string(i + 1);
        const nlohmann::json t = horizonRun(dem, dir, tag, runs[i]);
        SCOPED_TRACE(runs[i][1] + (runs[i].size() > 2 ? " --threads 1" : ""));
        ASSERT_TRUE(t["horizon"].contains("tiles")) << t.dump();
        EXPECT_GT(t["horizon"]["tiles"]["count"].get<int>(), 1);
        for (const char* r : {"a", "d", "s", "p"}) {
            EXPECT_TRUE(sameValues(readRaster(dir.file(r + std::string("0.tif"))),
                                   readRaster(dir.file(r + tag + ".tif"))))
                << r;
        }
        EXPECT_EQ(t["svf"], whole["svf"]);
        EXPECT_EQ(t["dip_deg"], whole["dip_deg"]);
    }
}

TEST(HorizonTilesCliTest, UnlimitedReachOverTheBudgetIsRefusedBeforeAnyWork) {
    ScratchDir dir;
    const std::string dem = resampledCoast(dir, 1500, 1200);
    ASSERT_FALSE(dem.empty());
    ScratchDir out;
    CliResult r = runLookfar({"horizon", dem, "-o", out.file("h.tif"), "--svf", out.file("s.tif"),
                              "--memory", "32M", "--summary", out.file("s.json")});
    EXPECT_EQ(r.exit_code, 2) << r.err;
    EXPECT_NE(r.err.find("1500 × 1200 cells"), std::string::npos) << r.err;
    EXPECT_NE(r.err.find("32 MiB"), std::string::npos) << r.err;
    EXPECT_NE(r.err.find("give --reach"), std::string::npos) << r.err;
    EXPECT_NE(r.err.find("raise --memory"), std::string::npos) << r.err;
    EXPECT_TRUE(out.entries().empty());
    // The other commands that hold the whole DEM without a reach: the same refusal.
    r = runLookfar({"viewshed", dem, "--observer", "425012.5,5596237.5", "-o", out.file("v.tif"),
                    "--memory", "32M"});
    EXPECT_EQ(r.exit_code, 2) << r.err;
    EXPECT_NE(r.err.find("1500 × 1200 cells"), std::string::npos) << r.err;
    EXPECT_NE(r.err.find("give --reach"), std::string::npos) << r.err;
    r = runLookfar({"select", dem, "--candidates", testRaster("demo_sites.csv"), "--count", "2",
                    "-o", out.file("sel.tif"), "--memory", "32M"});
    EXPECT_EQ(r.exit_code, 2) << r.err;
    EXPECT_NE(r.err.find("raise --memory"), std::string::npos) << r.err;
    // A reach so long that one tile and its halo do not fit: the smallest budget is named.
    r = runLookfar({"horizon", dem, "-o", out.file("h.tif"), "--reach", "20km", "--memory", "32M"});
    EXPECT_EQ(r.exit_code, 2) << r.err;
    EXPECT_NE(r.err.find("--memory: 32 MiB is below what one tile"), std::string::npos) << r.err;
    EXPECT_NE(r.err.find("give at least"), std::string::npos) << r.err;
    EXPECT_TRUE(out.entries().empty());
}

TEST(HorizonTilesCliTest, BadMemoryIsAUsageErrorAndWritesNothing) {
    ScratchDir out;
    const std::string dem = testRaster("demo_coast.tif");
    CliResult r = runLookfar({"horizon", dem, "-o", out.file("h.tif"), "--memory", "12X"});
    EXPECT_EQ(r.exit_code, 2) << r.err;
    EXPECT_NE(r.err.find("--memory: '12X' is not a memory size"), std::string::npos) << r.err;
    r = runLookfar({"viewshed", dem, "--observer", "425012.5,5596237.5", "-o", out.file("v.tif"),
                    "--memory", "1M"});
    EXPECT_EQ(r.exit_code, 2) << r.err;
    EXPECT_NE(r.err.find("--memory: 1 MiB is below the smallest budget"), std::string::npos)
        << r.err;
    EXPECT_NE(r.err.find("32 MiB"), std::string::npos) << r.err;
    EXPECT_TRUE(out.entries().empty());
}
