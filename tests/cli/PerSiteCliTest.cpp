// `lookfar viewshed --sites … --per-site DIR` (issue 15 item 5): each site's own visibility
// raster, cell for cell the raster a single-observer run of that site writes with the same
// options, named after the site; and the bad-input rules of docs/design.md for the folder.
#include <gdal.h>
#include <gtest/gtest.h>
#include <dirent.h>
#include <signal.h>
#include <sys/stat.h>
#include <sys/wait.h>
#include <unistd.h>

#include <nlohmann/json.hpp>

#include <chrono>
#include <fstream>
#include <thread>
#include <string>
#include <vector>

#include "../support/CliRunner.hpp"
#include "../support/RasterFiles.hpp"

using namespace lookfar::testing;

namespace {

const std::string kDemo = testRaster("demo_coast.tif");
const std::string kDemoSites = testRaster("demo_sites.csv");

/// The geotransform and the pixel type of band 1 of the raster at `path`.
void layoutOf(const std::string& path, double gt[6], GDALDataType* type) {
    GDALAllRegister();
    GDALDatasetH ds = GDALOpen(path.c_str(), GA_ReadOnly);
    ASSERT_NE(ds, nullptr) << path;
    GDALGetGeoTransform(ds, gt);
    *type = GDALGetRasterDataType(GDALGetRasterBand(ds, 1));
    GDALClose(ds);
}

struct DemoSite {
    const char* file;  // the name lookfar gives its raster
    const char* xy;
    const char* height;
};

// test_rasters/demo_sites.csv, each with its CSV height.
const DemoSite kSites[] = {{"Skerrow_Head.tif", "422937.5,5598337.5", "15"},
                           {"Saltinghow_Point.tif", "422837.5,5594512.5", "12"},
                           {"Merrowdun_Hill.tif", "425087.5,5597212.5", "25"},
                           {"Quarrel_Knap.tif", "426937.5,5594387.5", "20"},
                           {"Ashgrise_Pike.tif", "431512.5,5592787.5", "40"},
                           {"Brennock_Fell__North_Top.tif", "431162.5,5594962.5", "30"},
                           {"Tollan_Rigg.tif", "429787.5,5598562.5", "10"}};

/// Every entry of a folder, hidden ones included.
std::vector<std::string> entriesOf(const std::string& folder) {
    std::vector<std::string> out;
    if (DIR* d = opendir(folder.c_str())) {
        while (const dirent* e = readdir(d)) {
            const std::string n = e->d_name;
            if (n != "." && n != "..")
                out.push_back(n);
        }
        closedir(d);
    }
    return out;
}

/// Every per-site raster equals, cell for cell and in size, geotransform, type and no-data, the
/// -o raster of a single-observer run of that site with the same options.
void expectPerSiteEqualsSingleRuns(const std::vector<std::string>& options) {
    ScratchDir dir;
    const std::string per = dir.file("per site");  // a folder that does not exist yet
    std::vector<std::string> args = {"viewshed",   kDemo, "--sites",
                                     kDemoSites,   "-o",  dir.file("count.tif"),
                                     "--per-site", per,   "--quiet"};
    args.insert(args.end(), options.begin(), options.end());
    CliResult r = runLookfar(args);
    ASSERT_EQ(r.exit_code, 0) << r.err;
    for (const DemoSite& s : kSites) {
        const std::string mine_path = per + "/" + s.file;
        const Raster mine = readRaster(mine_path);
        ScratchDir one;
        std::vector<std::string> single = {
            "viewshed", kDemo, "--observer",      s.xy,     "--observer-height",
            s.height,   "-o",  one.file("v.tif"), "--quiet"};
        single.insert(single.end(), options.begin(), options.end());
        CliResult q = runLookfar(single);
        ASSERT_EQ(q.exit_code, 0) << q.err;
        const std::string theirs_path = one.file("v.tif");
        const Raster theirs = readRaster(theirs_path);
        ASSERT_EQ(mine.width, theirs.width) << s.file;
        ASSERT_EQ(mine.height, theirs.height) << s.file;
        double gt_mine[6], gt_theirs[6];
        GDALDataType type_mine = GDT_Unknown, type_theirs = GDT_Unknown;
        layoutOf(mine_path, gt_mine, &type_mine);
        layoutOf(theirs_path, gt_theirs, &type_theirs);
        for (int k = 0; k < 6; ++k)
            EXPECT_NEAR(gt_mine[k], gt_theirs[k], 1e-6) << s.file << " geotransform " << k;
        EXPECT_EQ(type_mine, GDT_Byte) << s.file;
        EXPECT_EQ(type_theirs, GDT_Byte) << s.file;
        EXPECT_EQ(mine.nodata, 255.0) << s.file;
        EXPECT_EQ(mine.nodata, theirs.nodata) << s.file;
        std::size_t differ = 0, visible = 0;
        for (std::size_t i = 0; i < mine.values[0].size(); ++i) {
            differ += mine.values[0][i] != theirs.values[0][i];
            visible += mine.values[0][i] == 1;
        }
        EXPECT_EQ(differ, 0u) << s.file;
        EXPECT_GT(visible, 0u) << s.file;  // each site sees something around it
        // The metadata names the site and its own parameters, as the single run's does.
        for (const char* key :
             {"LOOKFAR_OBSERVER", "LOOKFAR_OBSERVER_XY", "LOOKFAR_OBSERVER_CELL",
              "LOOKFAR_OBSERVER_GROUND_M", "LOOKFAR_OBSERVER_EYE_M", "LOOKFAR_OBSERVER_HEIGHT_M",
              "LOOKFAR_REACH_M", "LOOKFAR_TARGET_HEIGHT_M", "LOOKFAR_REFRACTION", "LOOKFAR_WINDOW",
              "LOOKFAR_EXTENT"}) {
            if (key == std::string("LOOKFAR_OBSERVER"))
                continue;  // the single run's observer is called "observer"
            EXPECT_EQ(metadataItem(mine_path, key), metadataItem(theirs_path, key))
                << s.file << " " << key;
        }
        EXPECT_FALSE(metadataItem(mine_path, "LOOKFAR_OBSERVER").empty());
        EXPECT_EQ(metadataItem(mine_path, "LOOKFAR_SITES"), kDemoSites);
        EXPECT_EQ(mine.descriptions[0].rfind("visibility from ", 0), 0u) << mine.descriptions[0];
    }
    // Nothing but the seven rasters in the folder (no temporary left).
    EXPECT_EQ(entriesOf(per).size(), 7u);
}

}  // namespace

TEST(PerSiteCliTest, EachSiteRasterEqualsItsSingleObserverRunOverTheWholeDem) {
    expectPerSiteEqualsSingleRuns({"--reach", "4000", "--target-height", "2"});
}

TEST(PerSiteCliTest, EachSiteRasterEqualsItsSingleObserverRunWithReachExtent) {
    expectPerSiteEqualsSingleRuns({"--reach", "3000", "--extent", "reach", "--refraction", "0.25"});
}

TEST(PerSiteCliTest, NamesAreMadeSafeAndClashesGetANumber) {
    ScratchDir dir;
    const std::string csv = dir.file("sites.csv");
    // Four names that all become "Hill_Top", one that is "Hill_Top_2" itself, letters beyond
    // ASCII kept, and a character that no file name should hold.
    std::ofstream(csv) << "name,x,y,height\n"
                          "Hill Top,426937.5,5594387.5,20\n"
                          "Hill/Top,425087.5,5597212.5,25\n"
                          "Hill_Top_2,422837.5,5594512.5,12\n"
                          "hill.top,429787.5,5598562.5,10\n"
                          "Ærøskøbing Fell,431162.5,5594962.5,30\n"
                          "Ash*Pike?,431512.5,5592787.5,40\n";
    const std::string per = dir.file("per");
    CliResult r = runLookfar({"viewshed", kDemo, "--sites", csv, "-o", dir.file("c.tif"),
                              "--per-site", per, "--reach", "2000", "--json", "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const std::vector<std::string> want = {"Hill_Top.tif",        "Hill_Top_3.tif",
                                           "Hill_Top_2.tif",      "hill_top_4.tif",
                                           "Ærøskøbing_Fell.tif", "Ash_Pike_.tif"};
    for (const std::string& name : want)
        EXPECT_TRUE(fileExists(per + "/" + name)) << name;
    // The summary gives each site its file.
    const auto j = nlohmann::json::parse(r.out);
    ASSERT_EQ(j["observers"].size(), want.size());
    for (std::size_t i = 0; i < want.size(); ++i)
        EXPECT_EQ(j["observers"][i]["raster"], per + "/" + want[i]) << i;
    EXPECT_EQ(j["outputs"]["per_site"], per);
    // Each raster names its own site.
    EXPECT_EQ(metadataItem(per + "/Hill_Top_3.tif", "LOOKFAR_OBSERVER"), "Hill/Top");
    EXPECT_EQ(metadataItem(per + "/Hill_Top_3.tif", "LOOKFAR_SITE_LINE"), "3");
}

TEST(PerSiteCliTest, AFolderThatIsNotEmptyIsRefusedWithoutOverwrite) {
    ScratchDir dir;
    const std::string per = dir.file("per");
    mkdir(per.c_str(), 0777);
    std::ofstream(per + "/notes.txt") << "field notes\n";
    const std::string count = dir.file("count.tif");
    CliResult r = runLookfar({"viewshed", kDemo, "--sites", kDemoSites, "-o", count, "--per-site",
                              per, "--reach", "2000", "--quiet"});
    EXPECT_EQ(r.exit_code, 4) << r.err;  // docs/design.md: cannot write output
    EXPECT_NE(firstLine(r.err).find("--per-site"), std::string::npos) << r.err;
    EXPECT_NE(firstLine(r.err).find("not empty"), std::string::npos) << r.err;
    EXPECT_EQ(r.err.find('\n'), r.err.size() - 1) << "one sentence: " << r.err;
    EXPECT_FALSE(fileExists(count));  // nothing written, no temporary left
    EXPECT_EQ(dir.entries(), std::vector<std::string>({"per"}));
    EXPECT_EQ(entriesOf(per), std::vector<std::string>({"notes.txt"}));
    EXPECT_FALSE(fileExists(per + "/Quarrel_Knap.tif"));

    // With --overwrite the rasters go in beside the notes, which stay.
    r = runLookfar({"viewshed", kDemo, "--sites", kDemoSites, "-o", count, "--per-site", per,
                    "--reach", "2000", "--quiet", "--overwrite"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    EXPECT_TRUE(fileExists(per + "/notes.txt"));
    EXPECT_TRUE(fileExists(per + "/Quarrel_Knap.tif"));
}

TEST(PerSiteCliTest, BadFoldersAndMisuseAreRefusedWithNothingWritten) {
    ScratchDir dir;
    const std::string count = dir.file("count.tif");
    // A file where the folder should be: exit 4.
    const std::string file = dir.file("a-file");
    std::ofstream(file) << "x\n";
    CliResult r = runLookfar(
        {"viewshed", kDemo, "--sites", kDemoSites, "-o", count, "--per-site", file, "--quiet"});
    EXPECT_EQ(r.exit_code, 4) << r.err;
    EXPECT_NE(firstLine(r.err).find("not a folder"), std::string::npos) << r.err;
    // A missing parent folder: exit 4, nothing made.
    r = runLookfar({"viewshed", kDemo, "--sites", kDemoSites, "-o", count, "--per-site",
                    dir.file("no/such"), "--quiet"});
    EXPECT_EQ(r.exit_code, 4) << r.err;
    EXPECT_NE(firstLine(r.err).find("does not exist"), std::string::npos) << r.err;
    // --per-site with one observer: exit 2.
    r = runLookfar({"viewshed", kDemo, "--observer", "426937.5,5594387.5", "-o", count,
                    "--per-site", dir.file("per"), "--quiet"});
    EXPECT_EQ(r.exit_code, 2) << r.err;
    EXPECT_NE(firstLine(r.err).find("--per-site"), std::string::npos) << r.err;
    // A site on no data (bad input, exit 3) after the folder was checked: the new folder is not
    // made.
    const std::string csv = dir.file("sites.csv");
    std::ofstream(csv) << "name,x,y\nOut at sea,1e9,1e9\n";
    r = runLookfar(
        {"viewshed", kDemo, "--sites", csv, "-o", count, "--per-site", dir.file("per"), "--quiet"});
    EXPECT_EQ(r.exit_code, 3) << r.err;
    EXPECT_FALSE(fileExists(dir.file("per")));
    // -o inside the (empty) folder under a site's name: exit 2 naming both.
    mkdir(dir.file("per").c_str(), 0777);
    r = runLookfar({"viewshed", kDemo, "--sites", kDemoSites, "-o",
                    dir.file("per/Quarrel_Knap.tif"), "--per-site", dir.file("per"), "--quiet"});
    EXPECT_EQ(r.exit_code, 2) << r.err;
    EXPECT_NE(firstLine(r.err).find("--per-site raster"), std::string::npos) << r.err;
    std::vector<std::string> left = dir.entries();
    EXPECT_EQ(left, std::vector<std::string>({"a-file", "per", "sites.csv"}));
    EXPECT_TRUE(entriesOf(dir.file("per")).empty());
}

// An interrupted run leaves nothing: neither the per-site rasters already finished in their
// temporaries nor the folder it made (docs/design.md: a failed or interrupted run leaves no
// partial file).
TEST(PerSiteCliTest, AnInterruptedRunLeavesNeitherRastersNorTheFolder) {
    ScratchDir in, out, capture;
    const std::string csv = in.file("sites.csv");
    {
        std::ofstream f(csv);
        f << "name,x,y\n";
        for (int i = 0; i < 24; ++i)  // a 6 × 4 lattice over the demo DEM
            f << "mast " << i << "," << 421000 + 2000 * (i % 6) << "," << 5591000 + 2400 * (i / 6)
              << "\n";
    }
    const std::string per = out.file("per");
    const std::string err = capture.file("err");
    const pid_t pid =
        startLookfar({"viewshed", kDemo, "--sites", csv, "--method", "reference", "--threads", "1",
                      "-o", out.file("count.tif"), "--per-site", per},
                     err);
    // Wait until a site's raster is finished in its temporary, then press Ctrl-C.
    const auto deadline = std::chrono::steady_clock::now() + std::chrono::seconds(30);
    bool temporary_seen = false;
    while (!temporary_seen && std::chrono::steady_clock::now() < deadline) {
        for (const std::string& e : entriesOf(per))
            temporary_seen = temporary_seen || e.find(".lookfar-") != std::string::npos;
        std::this_thread::sleep_for(std::chrono::milliseconds(10));
    }
    EXPECT_TRUE(temporary_seen) << readFile(err);
    kill(pid, SIGINT);
    int status = 0;
    waitpid(pid, &status, 0);
    ASSERT_TRUE(WIFEXITED(status));
    EXPECT_EQ(WEXITSTATUS(status), 130) << readFile(err);
    EXPECT_TRUE(out.entries().empty()) << "left behind: " << out.entries().front();
}
