// Every command, the same way (issue 12 item 20): the same outputs for any number of threads, and
// nothing left behind when a run is interrupted by SIGINT, SIGTERM or SIGHUP.
// Expected behaviour is the project's contract (docs/design.md: "results identical for any
// --threads"; "Exit codes": 130 when interrupted, no output and no temporary left). No outside
// value: the reference is the same command on one thread.
#include <gdal.h>
#include <gtest/gtest.h>
#include <ogr_srs_api.h>
#include <signal.h>
#include <sys/wait.h>
#include <unistd.h>

#include <chrono>
#include <cstring>
#include <cstdio>
#include <fstream>
#include <nlohmann/json.hpp>
#include <string>
#include <thread>
#include <vector>

#include "../support/CliRunner.hpp"
#include "../support/RasterFiles.hpp"
#include "lookfar/core/FractalTerrain.hpp"
#include "lookfar/core/Grid.hpp"

using namespace lookfar::testing;

namespace {

const std::string kDemo = testRaster("demo_coast.tif");
const std::string kSites = testRaster("demo_sites.csv");

struct Output {
    std::string name;  // file name in the run's folder
    enum Kind { Raster, Text, Summary } kind;
};

struct CommandCase {
    std::string label;
    std::vector<std::string> args;  // "@NAME" is replaced by the run folder's file NAME
    std::vector<Output> outputs;
};

// One run of every command with every output it writes, on the demo coast.
std::vector<CommandCase> everyCommand() {
    return {
        {"viewshed",
         {"viewshed", kDemo, "--observer", "425087.5,5597212.5", "--observer-height", "25", "-o",
          "@v.tif", "--margin", "@m.tif", "--angle", "@a.tif", "--summary", "@s.json"},
         {{"v.tif", Output::Raster},
          {"m.tif", Output::Raster},
          {"a.tif", Output::Raster},
          {"s.json", Output::Summary}}},
        {"viewshed_sites",
         {"viewshed", kDemo, "--sites", kSites, "--target-height", "2", "-o", "@c.tif", "--margin",
          "@m.tif", "--summary", "@s.json"},
         {{"c.tif", Output::Raster}, {"m.tif", Output::Raster}, {"s.json", Output::Summary}}},
        {"horizon_grid",
         {"horizon", kDemo, "-o", "@h.tif", "--directions", "16", "--distance", "@d.tif", "--svf",
          "@svf.tif", "--dip", "@dip.tif", "--summary", "@s.json"},
         {{"h.tif", Output::Raster},
          {"d.tif", Output::Raster},
          {"svf.tif", Output::Raster},
          {"dip.tif", Output::Raster},
          {"s.json", Output::Summary}}},
        {"horizon_at",
         {"horizon", kDemo, "--at", "425087.5,5597212.5", "--step", "2", "--csv", "@h.csv",
          "--plot", "@h.svg", "--summary", "@s.json"},
         {{"h.csv", Output::Text}, {"h.svg", Output::Text}, {"s.json", Output::Summary}}},
        {"link",
         {"link", kDemo, "--from", "426937.5,5594387.5", "--to", "429787.5,5598562.5",
          "--from-height", "20", "--to-height", "10", "--frequency-mhz", "2400", "--csv", "@l.csv",
          "--plot", "@l.svg", "--summary", "@s.json"},
         {{"l.csv", Output::Text}, {"l.svg", Output::Text}, {"s.json", Output::Summary}}},
        {"intervis",
         {"intervis", kDemo, "--stations", kSites, "-o", "@i.csv", "--lines", "@i.geojson",
          "--summary", "@s.json"},
         {{"i.csv", Output::Text}, {"i.geojson", Output::Text}, {"s.json", Output::Summary}}},
        {"select",
         {"select", kDemo, "--candidates", kSites, "--count", "3", "--reach", "8000", "-o",
          "@c.tif", "--csv", "@r.csv", "--summary", "@s.json"},
         {{"c.tif", Output::Raster}, {"r.csv", Output::Text}, {"s.json", Output::Summary}}},
        {"info", {"info", kDemo, "--summary", "@s.json"}, {{"s.json", Output::Summary}}},
        {"signal",
         {"signal",
          kDemo,
          "--tx",
          "425087.5,5597212.5",
          "--frequency-mhz",
          "450",
          "--reach",
          "2500",
          "--eirp-dbm",
          "40",
          "--min-level-dbm",
          "-85",
          "-o",
          "@loss.tif",
          "--level",
          "@level.tif",
          "--served",
          "@served.tif",
          "--fresnel",
          "@f.tif",
          "--summary",
          "@s.json"},
         {{"loss.tif", Output::Raster},
          {"level.tif", Output::Raster},
          {"served.tif", Output::Raster},
          {"f.tif", Output::Raster},
          {"s.json", Output::Summary}}},
    };
}

std::vector<std::string> argsIn(const CommandCase& c, const ScratchDir& dir) {
    std::vector<std::string> out;
    for (const auto& a : c.args)
        out.push_back(a.rfind('@', 0) == 0 ? dir.file(a.substr(1)) : a);
    return out;
}

// The summary without what differs between runs by design: the command line, the time taken,
// the folder the outputs went to.
nlohmann::json comparableSummary(const std::string& path, const std::string& folder) {
    std::string text = readFile(path);
    for (std::size_t at; (at = text.find(folder)) != std::string::npos;)
        text.replace(at, folder.size(), "OUT");
    auto j = nlohmann::json::parse(text);
    j.erase("command_line");
    j.erase("elapsed_s");
    j.erase("threads");
    return j;
}

class ThreadsCliTest : public ::testing::TestWithParam<CommandCase> {};

TEST_P(ThreadsCliTest, OutputsAreTheSameForOneTwoAndThreeThreads) {
    const CommandCase& c = GetParam();
    ScratchDir one;
    auto args = argsIn(c, one);
    args.insert(args.end(), {"--threads", "1", "--quiet"});
    CliResult r = runLookfar(args);
    ASSERT_EQ(r.exit_code, 0) << r.err;
    for (const char* threads : {"2", "3"}) {
        ScratchDir many;
        args = argsIn(c, many);
        args.insert(args.end(), {"--threads", threads, "--quiet"});
        r = runLookfar(args);
        ASSERT_EQ(r.exit_code, 0) << r.err;
        for (const auto& o : c.outputs) {
            SCOPED_TRACE(o.name + " with --threads " + threads);
            switch (o.kind) {
                case Output::Raster: {
                    const Raster a = readRaster(one.file(o.name)),
                                 b = readRaster(many.file(o.name));
                    ASSERT_EQ(a.bands, b.bands);
                    for (int band = 0; band < a.bands; ++band) {
                        // Bitwise: NaN equals NaN, −0 differs from +0.
                        ASSERT_EQ(a.values[band].size(), b.values[band].size());
                        EXPECT_EQ(std::memcmp(a.values[band].data(), b.values[band].data(),
                                              a.values[band].size() * sizeof(double)),
                                  0)
                            << "band " << band + 1;
                    }
                    break;
                }
                case Output::Text:
                    EXPECT_EQ(readFile(one.file(o.name)), readFile(many.file(o.name)));
                    break;
                case Output::Summary:
                    EXPECT_EQ(comparableSummary(one.file(o.name), one.path()),
                              comparableSummary(many.file(o.name), many.path()));
                    break;
            }
        }
    }
}

INSTANTIATE_TEST_SUITE_P(EveryCommand, ThreadsCliTest, ::testing::ValuesIn(everyCommand()),
                         [](const ::testing::TestParamInfo<CommandCase>& p) {
                             return p.param.label;
                         });

// A 1200 × 1200 fractal DEM (10 m cells, EPSG:32630) and 400 stations on it, made once: runs on
// it last long enough to be interrupted.
class InterruptEveryCommandTest : public ::testing::TestWithParam<std::tuple<int, int>> {
  public:
    static void SetUpTestSuite() {
        in_ = new ScratchDir;
        lookfar::FractalSpec spec;
        spec.width = spec.height = 1200;
        const lookfar::Grid<float> z = lookfar::fractalTerrain(spec);
        GDALAllRegister();
        GDALDatasetH ds = GDALCreate(GDALGetDriverByName("GTiff"), dem().c_str(), 1200, 1200, 1,
                                     GDT_Float32, nullptr);
        ASSERT_NE(ds, nullptr);
        double gt[6] = {400000, 10, 0, 5600000, 0, -10};
        GDALSetGeoTransform(ds, gt);
        OGRSpatialReferenceH srs = OSRNewSpatialReference(nullptr);
        OSRImportFromEPSG(srs, 32630);
        GDALSetSpatialRef(ds, srs);
        OSRDestroySpatialReference(srs);
        ASSERT_EQ(GDALRasterIO(GDALGetRasterBand(ds, 1), GF_Write, 0, 0, 1200, 1200,
                               const_cast<float*>(z.data()), 1200, 1200, GDT_Float32, 0, 0),
                  CE_None);
        GDALClose(ds);
        // A 7200 × 7200 mosaic of 36 copies of it, for the commands that are quick on 1200².
        std::ofstream vrt(mosaic());
        vrt << "<VRTDataset rasterXSize=\"7200\" rasterYSize=\"7200\">\n"
            << "<SRS>EPSG:32630</SRS>\n"
            << "<GeoTransform>400000, 10, 0, 5600000, 0, -10</GeoTransform>\n"
            << "<VRTRasterBand dataType=\"Float32\" band=\"1\">\n";
        for (int i = 0; i < 36; ++i)
            vrt << "<SimpleSource><SourceFilename relativeToVRT=\"1\">fractal.tif</SourceFilename>"
                << "<SourceBand>1</SourceBand><SrcRect xOff=\"0\" yOff=\"0\" xSize=\"1200\" "
                << "ySize=\"1200\"/><DstRect xOff=\"" << (i % 6) * 1200 << "\" yOff=\""
                << (i / 6) * 1200 << "\" xSize=\"1200\" ySize=\"1200\"/></SimpleSource>\n";
        vrt << "</VRTRasterBand>\n</VRTDataset>\n";
        vrt.close();
        std::ofstream csv(stations());
        csv << "name,x,y,height\n";
        for (int i = 0; i < 400; ++i)
            csv << "S" << i << "," << 400105 + (i % 20) * 590 << "," << 5599895 - (i / 20) * 590
                << ",5\n";
    }
    static void TearDownTestSuite() {
        delete in_;
        in_ = nullptr;
    }
    static std::string dem() { return in_->file("fractal.tif"); }
    static std::string stations() { return in_->file("stations.csv"); }
    static std::string mosaic() { return in_->file("mosaic.vrt"); }

  private:
    static ScratchDir* in_;
};
ScratchDir* InterruptEveryCommandTest::in_ = nullptr;

// The long runs, one per command (info and horizon --at on the 7200² mosaic). `link` computes one
// profile in milliseconds: there is no run long enough to interrupt, and it is left out.
std::vector<std::vector<std::string>> longRuns(const std::string& dem, const std::string& mosaic,
                                               const std::string& stations, const ScratchDir& out) {
    return {
        {"viewshed", dem, "--observer", "406000,5594000", "--method", "reference", "-o",
         out.file("v.tif"), "--margin", out.file("m.tif"), "--summary", out.file("s.json")},
        {"horizon", dem, "-o", out.file("h.tif"), "--directions", "64", "--method", "reference",
         "--svf", out.file("svf.tif"), "--summary", out.file("s.json")},
        {"horizon", mosaic, "--at", "436000,5564000", "--step", "0.05", "--csv", out.file("h.csv"),
         "--plot", out.file("h.svg"), "--summary", out.file("s.json")},
        {"intervis", dem, "--stations", stations, "-o", out.file("i.csv"), "--lines",
         out.file("i.geojson"), "--summary", out.file("s.json")},
        {"select", dem, "--candidates", stations, "--count", "3", "--method", "reference", "-o",
         out.file("c.tif"), "--csv", out.file("r.csv"), "--summary", out.file("s.json")},
        {"info", mosaic, "--summary", out.file("s.json")},
        {"signal", dem, "--tx", "406000,5594000", "--frequency-mhz", "450", "--reach", "6000",
         "--eirp-dbm", "40", "-o", out.file("loss.tif"), "--level", out.file("level.tif"),
         "--fresnel", out.file("f.tif"), "--summary", out.file("s.json")},
    };
}
const char* const kRunNames[] = {"viewshed", "horizon_grid", "horizon_at", "intervis",
                                 "select",   "info",         "signal"};

TEST_P(InterruptEveryCommandTest, LeavesNoFileBehind) {
    const int run = std::get<0>(GetParam()), sig = std::get<1>(GetParam());
    ScratchDir out, capture;
    const auto args = longRuns(dem(), mosaic(), stations(), out)[run];
    const std::string err = capture.file("err");
    const pid_t pid = fork();
    if (pid == 0) {
        if (!std::freopen(err.c_str(), "w", stderr) || !std::freopen("/dev/null", "w", stdout))
            _exit(126);
        std::vector<char*> argv{const_cast<char*>("lookfar")};
        for (const auto& a : args)
            argv.push_back(const_cast<char*>(a.c_str()));
        argv.push_back(nullptr);
        execv(LOOKFAR_CLI_PATH, argv.data());
        _exit(127);
    }
    // Wait until the work shows progress, then send the signal.
    int status = 0;
    bool exited = false;
    const auto deadline = std::chrono::steady_clock::now() + std::chrono::seconds(20);
    while (readFile(err).find('%') == std::string::npos &&
           std::chrono::steady_clock::now() < deadline) {
        if (waitpid(pid, &status, WNOHANG) == pid) {
            exited = true;
            break;
        }
        std::this_thread::sleep_for(std::chrono::milliseconds(10));
    }
    if (!exited) {
        std::this_thread::sleep_for(std::chrono::milliseconds(50));
        if (waitpid(pid, &status, WNOHANG) == pid)
            exited = true;
    }
    ASSERT_FALSE(exited) << kRunNames[run] << " finished before the signal: " << readFile(err);
    kill(pid, sig);
    waitpid(pid, &status, 0);
    ASSERT_TRUE(WIFEXITED(status)) << "ended by signal " << WTERMSIG(status);
    EXPECT_EQ(WEXITSTATUS(status), 130) << readFile(err);
    EXPECT_NE(readFile(err).find("interrupted"), std::string::npos) << readFile(err);
    EXPECT_TRUE(out.entries().empty()) << "left behind: " << out.entries().front();
}

INSTANTIATE_TEST_SUITE_P(EveryCommand, InterruptEveryCommandTest,
                         ::testing::Combine(::testing::Range(0, 7),
                                            ::testing::Values(SIGINT, SIGTERM, SIGHUP)),
                         [](const ::testing::TestParamInfo<std::tuple<int, int>>& p) {
                             const int sig = std::get<1>(p.param);
                             return std::string(kRunNames[std::get<0>(p.param)]) + "_" +
                                    (sig == SIGINT    ? "SIGINT"
                                     : sig == SIGTERM ? "SIGTERM"
                                                      : "SIGHUP");
                         });

}  // namespace
