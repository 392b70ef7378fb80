// `lookfar viewshed --sites` on the demo sites, and the bad-input rules of docs/design.md for the
// viewshed command: one clear sentence, DESIGN's exit code, no file left at any output path.
#include <gdal.h>
#include <ogr_srs_api.h>
#include <gtest/gtest.h>
#include <signal.h>
#include <sys/wait.h>
#include <unistd.h>

#include <nlohmann/json.hpp>

#include <chrono>
#include <cmath>
#include <fstream>
#include <string>
#include <thread>
#include <vector>

#include "../support/CliRunner.hpp"
#include "lookfar/core/FractalTerrain.hpp"

using namespace lookfar::testing;

namespace {

const std::string kDemo = testRaster("demo_coast.tif");
const std::string kDemoSites = testRaster("demo_sites.csv");

std::vector<double> readBand(const std::string& path, int* width = nullptr) {
    GDALAllRegister();
    GDALDatasetH ds = GDALOpen(path.c_str(), GA_ReadOnly);
    EXPECT_NE(ds, nullptr) << path;
    if (!ds)
        return {};
    const int w = GDALGetRasterXSize(ds), h = GDALGetRasterYSize(ds);
    std::vector<double> v(static_cast<std::size_t>(w) * h);
    EXPECT_EQ(GDALRasterIO(GDALGetRasterBand(ds, 1), GF_Read, 0, 0, w, h, v.data(), w, h,
                           GDT_Float64, 0, 0),
              CE_None);
    if (width)
        *width = w;
    GDALClose(ds);
    return v;
}

std::string writeCsv(const ScratchDir& dir, const std::string& name, const std::string& text) {
    const std::string path = dir.file(name);
    std::ofstream(path) << text;
    return path;
}

/// Runs a command that must fail: its exit code, its first line naming `needle`, and no file
/// left in `out_dir` (also no temporary file).
void expectRefused(const std::vector<std::string>& args, int code, const std::string& needle,
                   const ScratchDir& out_dir) {
    CliResult r = runLookfar(args);
    EXPECT_EQ(r.exit_code, code) << r.err;
    EXPECT_NE(firstLine(r.err).find(needle), std::string::npos) << r.err;
    EXPECT_TRUE(out_dir.entries().empty()) << "left behind: " << out_dir.entries().front();
}

}  // namespace

// Ground heights of the demo sites are listed in test_rasters/README.md; each eye is the ground
// plus the CSV's height column (which overrides --observer-height).
TEST(ViewshedSitesCliTest, DemoSitesGiveCountsAndPerSiteSummaries) {
    ScratchDir dir;
    const std::string count = dir.file("count.tif"), margin = dir.file("best.tif");
    CliResult r = runLookfar({"viewshed", kDemo, "--sites", kDemoSites, "-o", count, "--margin",
                              margin, "--observer-height", "99", "--json", "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    auto j = nlohmann::json::parse(r.out);
    const auto& obs = j["observers"];
    ASSERT_EQ(obs.size(), 7u);
    const double ground[] = {244.7, 198.1, 232.9, 157.2, 900.0, 712.1, 637.5};
    const double height[] = {15, 12, 25, 20, 40, 30, 10};
    for (int i = 0; i < 7; ++i) {
        EXPECT_NEAR(obs[i]["ground_m"].get<double>(), ground[i], 0.01) << i;
        EXPECT_NEAR(obs[i]["eye_m"].get<double>(), ground[i] + height[i], 0.01) << i;
    }
    EXPECT_EQ(obs[5]["name"], "Brennock Fell, North Top");  // a quoted field with a comma
    const auto& cov = j["coverage"];
    ASSERT_TRUE(cov.contains("cells_seen_by_any"));
    ASSERT_TRUE(cov.contains("area_seen_by_any_m2"));
    const auto& by_count = cov["cells_by_count"];
    ASSERT_EQ(by_count.size(), 8u);  // index = number of sites, 0 … 7
    std::int64_t total = 0;
    for (const auto& n : by_count)
        total += n.get<std::int64_t>();
    EXPECT_EQ(total, 200000);  // every cell of the 500 × 400 demo DEM is within reach
    EXPECT_EQ(cov["cells_seen_by_any"].get<std::int64_t>(),
              total - by_count[0].get<std::int64_t>());
    EXPECT_DOUBLE_EQ(cov["area_seen_by_any_m2"].get<double>(),
                     cov["cells_seen_by_any"].get<double>() * 625.0);  // 25 m cells

    // The count raster: UInt16 values 0 … 7, its histogram the summary's.
    std::vector<double> c = readBand(count);
    ASSERT_EQ(c.size(), 200000u);
    std::vector<std::int64_t> hist(8, 0);
    for (double v : c) {
        ASSERT_TRUE(v >= 0 && v <= 7) << v;
        ++hist[static_cast<int>(v)];
    }
    for (int k = 0; k < 8; ++k)
        EXPECT_EQ(hist[k], by_count[k].get<std::int64_t>()) << k;
    // A site's own run gives its line of the summary, and its cells are counted.
    ScratchDir one;
    CliResult s =
        runLookfar({"viewshed", kDemo, "--observer", "426937.5,5594387.5", "--observer-height",
                    "20", "-o", one.file("q.tif"), "--json", "--quiet"});
    ASSERT_EQ(s.exit_code, 0) << s.err;
    auto js = nlohmann::json::parse(s.out);
    EXPECT_EQ(js["observers"][0]["visible_cells"], obs[3]["visible_cells"]);
    std::vector<double> q = readBand(one.file("q.tif"));
    std::vector<double> best = readBand(margin);
    for (std::size_t i = 0; i < q.size(); ++i) {
        if (q[i] == 1) {
            ASSERT_GE(c[i], 1) << i;
        }
        ASSERT_EQ(best[i] >= 0, c[i] >= 1) << "best margin ≥ 0 exactly where a site sees, " << i;
    }
}

TEST(ViewshedSitesCliTest, ObserverHeightAppliesToSitesWithoutAHeight) {
    ScratchDir dir;
    const std::string csv = writeCsv(dir, "s.csv",
                                     "name,x,y\n"
                                     "Skerrow Head,422937.5,5598337.5\n"
                                     "Tollan Rigg,429787.5,5598562.5\n");
    ScratchDir out;
    CliResult r = runLookfar({"viewshed", kDemo, "--sites", csv, "-o", out.file("c.tif"),
                              "--observer-height", "7", "--json", "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    auto j = nlohmann::json::parse(r.out);
    EXPECT_NEAR(j["observers"][0]["eye_m"].get<double>(), 244.7 + 7, 0.01);
    EXPECT_NEAR(j["observers"][1]["eye_m"].get<double>(), 637.5 + 7, 0.01);
    EXPECT_EQ(j["coverage"]["cells_by_count"].size(), 3u);
}

TEST(ViewshedBadInputCliTest, ObserverOutsideTheDemOrOnNoData) {
    ScratchDir out;
    expectRefused({"viewshed", kDemo, "--observer", "10,10", "-o", out.file("v.tif")}, 3,
                  "outside the DEM", out);
    // nodata_hole.tif: no-data block rows/cols 45–54 (centres x 430455–430545).
    expectRefused({"viewshed", testRaster("nodata_hole.tif"), "--observer", "430505,5589505", "-o",
                   out.file("v.tif")},
                  3, "no-data", out);
}

TEST(ViewshedBadInputCliTest, ReachHeightsAndRefractionOutOfRange) {
    ScratchDir out;
    const std::vector<std::string> base = {"viewshed",           kDemo, "--observer",
                                           "422937.5,5598337.5", "-o",  out.file("v.tif")};
    auto with = [&](std::vector<std::string> extra) {
        std::vector<std::string> a = base;
        a.insert(a.end(), extra.begin(), extra.end());
        return a;
    };
    expectRefused(with({"--reach", "0"}), 2, "--reach", out);
    expectRefused(with({"--reach", "-5"}), 2, "--reach", out);
    expectRefused(with({"--observer-height", "-1"}), 2, "--observer-height", out);
    expectRefused(with({"--observer-height", "nan"}), 2, "--observer-height", out);
    expectRefused(with({"--target-height", "inf"}), 2, "--target-height", out);
    expectRefused(with({"--refraction", "1"}), 2, "--refraction", out);
    expectRefused(with({"--refraction", "1.5"}), 2, "--refraction", out);
    expectRefused(with({"--observer", "1,2,3"}), 2, "--observer", out);
}

TEST(ViewshedBadInputCliTest, ObserverAndSitesTogetherOrNeither) {
    ScratchDir out;
    expectRefused({"viewshed", kDemo, "-o", out.file("v.tif")}, 2, "--observer", out);
    CliResult r = runLookfar({"viewshed", kDemo, "--observer", "422937.5,5598337.5", "--sites",
                              kDemoSites, "-o", out.file("v.tif")});
    EXPECT_EQ(r.exit_code, 2) << r.err;
    expectRefused({"viewshed", kDemo, "--sites", kDemoSites, "-o", out.file("v.tif"), "--angle",
                   out.file("a.tif")},
                  2, "--angle", out);
}

TEST(ViewshedBadInputCliTest, EmptyOrMalformedSitesCsvNamesTheRow) {
    ScratchDir in, out;
    const std::vector<std::pair<std::string, std::string>> cases = {
        {"", "empty"},
        {"name,x,y\n", "no sites"},
        {"name,x,y,height\nA,422937.5,5598337.5,15\nB,42x,5598337.5,10\n", "line 3"},
        {"name,x,y,height\nA,422937.5,5598337.5,-4\n", "line 2"},
        {"name,x,y,height\nA,422937.5,5598337.5,nan\n", "line 2"},
        {"name,easting,northing\nA,1,2\n", "line 1"},
        {"name,x,y\nA,422937.5,5598337.5\nFar,10,10\n", "line 3"},  // outside the DEM
    };
    int k = 0;
    for (const auto& [text, needle] : cases) {
        const std::string csv = writeCsv(in, "s" + std::to_string(k++) + ".csv", text);
        expectRefused({"viewshed", kDemo, "--sites", csv, "-o", out.file("c.tif")}, 3, needle, out);
    }
    expectRefused({"viewshed", kDemo, "--sites", in.file("missing.csv"), "-o", out.file("c.tif")},
                  3, "missing.csv", out);
}

TEST(ViewshedBadInputCliTest, OutputsAreCheckedBeforeTheWork) {
    ScratchDir out;
    const std::string existing = out.file("v.tif");
    std::ofstream(existing) << "keep me";
    CliResult r = runLookfar({"viewshed", kDemo, "--observer", "422937.5,5598337.5", "-o",
                              out.file("new.tif"), "--margin", existing});
    EXPECT_EQ(r.exit_code, 4) << r.err;
    EXPECT_NE(firstLine(r.err).find("--overwrite"), std::string::npos) << r.err;
    EXPECT_EQ(readFile(existing), "keep me");
    EXPECT_EQ(out.entries().size(), 1u);  // nothing else was written
    r = runLookfar(
        {"viewshed", kDemo, "--observer", "422937.5,5598337.5", "-o", "/no/such/folder/v.tif"});
    EXPECT_EQ(r.exit_code, 4) << r.err;
    r = runLookfar(
        {"viewshed", kDemo, "--observer", "422937.5,5598337.5", "-o", kDemo, "--overwrite"});
    EXPECT_EQ(r.exit_code, 4) << r.err;
    EXPECT_NE(firstLine(r.err).find("same file"), std::string::npos) << r.err;
}

// Ctrl-C, SIGTERM, or SIGHUP (a closed terminal or SSH session) during a run: exit code 130 and
// no file, not even a temporary one, in the output folder. The reference method on a 1200² DEM
// runs for seconds, long enough to interrupt.
class InterruptCliTest : public ::testing::TestWithParam<int> {};

TEST_P(InterruptCliTest, InterruptLeavesNoFileBehind) {
    ScratchDir in, out, capture;
    const std::string dem = in.file("big.tif");
    {
        lookfar::FractalSpec spec;
        spec.width = spec.height = 1200;
        lookfar::Grid<float> z = lookfar::fractalTerrain(spec);
        GDALAllRegister();
        GDALDatasetH ds = GDALCreate(GDALGetDriverByName("GTiff"), dem.c_str(), 1200, 1200, 1,
                                     GDT_Float32, nullptr);
        ASSERT_NE(ds, nullptr);
        double gt[6] = {400000, 10, 0, 5600000, 0, -10};
        GDALSetGeoTransform(ds, gt);
        GDALSetProjection(ds, "EPSG:32630");
        OGRSpatialReferenceH srs = OSRNewSpatialReference(nullptr);
        OSRImportFromEPSG(srs, 32630);
        GDALSetSpatialRef(ds, srs);
        OSRDestroySpatialReference(srs);
        ASSERT_EQ(GDALRasterIO(GDALGetRasterBand(ds, 1), GF_Write, 0, 0, 1200, 1200, z.data(), 1200,
                               1200, GDT_Float32, 0, 0),
                  CE_None);
        GDALClose(ds);
    }
    const std::string err = capture.file("err");
    const pid_t pid = startLookfar({"viewshed", dem, "--observer", "406000,5594000", "--method",
                                    "reference", "-o", out.path() + "/v.tif", "--margin",
                                    out.path() + "/m.tif", "--summary", out.path() + "/s.json"},
                                   err);
    // Wait until the engine has started (its progress line), then press Ctrl-C.
    const auto deadline = std::chrono::steady_clock::now() + std::chrono::seconds(20);
    while (readFile(err).find("reference viewshed") == std::string::npos &&
           std::chrono::steady_clock::now() < deadline) {
        std::this_thread::sleep_for(std::chrono::milliseconds(20));
    }
    std::this_thread::sleep_for(std::chrono::milliseconds(200));
    kill(pid, GetParam());
    int status = 0;
    waitpid(pid, &status, 0);
    ASSERT_TRUE(WIFEXITED(status));
    EXPECT_EQ(WEXITSTATUS(status), 130) << readFile(err);
    EXPECT_NE(readFile(err).find("interrupted"), std::string::npos) << readFile(err);
    EXPECT_TRUE(out.entries().empty()) << "left behind: " << out.entries().front();
}

INSTANTIATE_TEST_SUITE_P(Signals, InterruptCliTest, ::testing::Values(SIGINT, SIGTERM, SIGHUP),
                         [](const ::testing::TestParamInfo<int>& param) {
                             return std::string(param.param == SIGINT    ? "SIGINT"
                                                : param.param == SIGTERM ? "SIGTERM"
                                                                         : "SIGHUP");
                         });
