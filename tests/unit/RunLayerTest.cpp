// The run layer in-process: a command's option struct filled without any parser, its declared
// options, its life (validate, open, execute, write, summary) and its progress and cancellation.
#include <gtest/gtest.h>

#include <gdal_priv.h>

#include <algorithm>
#include <array>
#include <cmath>
#include <memory>
#include <fstream>

#include "../support/CliRunner.hpp"
#include "lookfar/core/Errors.hpp"
#include "lookfar/run/InfoRun.hpp"
#include "lookfar/run/IntervisRun.hpp"
#include "lookfar/run/LinkRun.hpp"
#include "lookfar/run/SelectRun.hpp"
#include "lookfar/run/ViewshedRun.hpp"

using namespace lookfar;
using namespace lookfar::testing;

namespace {

/// Records what a run reports, and asks it to stop after `cancel_after` advances (-1: never).
class RecordingProgress final : public Progress {
  public:
    explicit RecordingProgress(int cancel_after = -1) : cancel_after_(cancel_after) {}
    void begin(const std::string& label, std::int64_t total) override {
        labels.push_back(label);
        totals.push_back(total);
    }
    void advance(std::int64_t done) override { advances.push_back(done); }
    bool cancelled() const override {
        return cancel_after_ >= 0 && static_cast<int>(advances.size()) > cancel_after_;
    }
    std::vector<std::string> labels;
    std::vector<std::int64_t> totals, advances;

  private:
    int cancel_after_;
};

/// GDAL's own exact statistics of band 1 (min, max, mean), the outside check of info's figures.
std::array<double, 3> gdalStatistics(const std::string& path) {
    GDALAllRegister();
    // No .aux.xml beside the committed raster: GDAL would store the statistics there.
    CPLSetThreadLocalConfigOption("GDAL_PAM_ENABLED", "NO");
    std::unique_ptr<GDALDataset> ds(static_cast<GDALDataset*>(
        GDALOpenEx(path.c_str(), GDAL_OF_RASTER | GDAL_OF_READONLY, nullptr, nullptr, nullptr)));
    double mn = 0, mx = 0, mean = 0, sd = 0;
    ds->GetRasterBand(1)->ComputeStatistics(FALSE, &mn, &mx, &mean, &sd, nullptr, nullptr);
    ds.reset();
    CPLSetThreadLocalConfigOption("GDAL_PAM_ENABLED", nullptr);
    return {mn, mx, mean};
}

}  // namespace

TEST(RunLayerTest, InfoRunsWithoutAParserAndAgreesWithGdal) {
    run::InfoRun info;
    info.options.common.dem = testRaster("demo_coast.tif");
    RecordingProgress progress;
    const run::RunReport report = info.run({&progress, "test"});
    const auto& j = report.summary;
    EXPECT_EQ(j["command"], "info");
    EXPECT_EQ(j["dem"]["width"], 500);
    EXPECT_EQ(j["dem"]["height"], 400);
    // Outside check: GDAL's exact statistics of the same band (no-data skipped by both).
    const auto stats = gdalStatistics(testRaster("demo_coast.tif"));
    EXPECT_NEAR(j["elevation_m"]["min"].get<double>(), stats[0], 1e-3);
    EXPECT_NEAR(j["elevation_m"]["max"].get<double>(), stats[1], 1e-3);
    EXPECT_NEAR(j["elevation_m"]["mean"].get<double>(), stats[2], 1e-3);
    EXPECT_NE(report.table.find("DEM " + testRaster("demo_coast.tif")), std::string::npos);
    // Progress: one stage over the rows, advancing monotonically to the last row.
    ASSERT_EQ(progress.labels.size(), 1u);
    EXPECT_EQ(progress.totals.front(), 400);
    ASSERT_FALSE(progress.advances.empty());
    EXPECT_TRUE(std::is_sorted(progress.advances.begin(), progress.advances.end()));
    EXPECT_EQ(progress.advances.back(), 400);
}

TEST(RunLayerTest, DeclaredOptionsFillTheStructAndHoldTheDefaults) {
    run::InfoRun info;
    run::OptionTable table = info.declare();
    // The DEM is the one positional argument and is required; --approx fills its field.
    EXPECT_EQ(table.front().flag(), "DEM");
    EXPECT_TRUE(table.front().required);
    EXPECT_EQ(table.front().type_name, "FILE");
    run::OptionDecl& approx = run::findOption(table, "--approx");
    *std::get<bool*>(approx.field) = true;
    EXPECT_TRUE(info.options.approx);
    // The default of --band lives in the struct and the declaration shows it.
    run::OptionDecl& band = run::findOption(table, "--band");
    EXPECT_TRUE(band.show_default);
    EXPECT_EQ(*std::get<int*>(band.field), 1);
    // Range checks run on the text, without CLI11, in the words the CLI prints.
    EXPECT_EQ(band.check("1"), "");
    EXPECT_EQ(band.check("0"), "'0' is not a whole number from 1 to 65535");
    EXPECT_THROW(run::findOption(table, "--reach"), InternalError);  // info has no geometry
}

TEST(RunLayerTest, CancelledRunWritesNothingAndLeavesAnExistingFileAlone) {
    ScratchDir dir;
    const std::string summary = dir.file("summary.json");
    { std::ofstream(summary) << "earlier"; }
    run::InfoRun info;
    info.options.common.dem = testRaster("demo_coast.tif");
    info.options.common.summary = summary;
    info.options.common.overwrite = true;
    RecordingProgress stop_at_once(0);
    EXPECT_THROW(info.run({&stop_at_once, "test"}), Interrupted);
    EXPECT_EQ(readFile(summary), "earlier");
    EXPECT_EQ(dir.entries(), std::vector<std::string>{"summary.json"});  // no temporary left
    // Without --overwrite the existing file is refused before any work (exit 4).
    info.options.common.overwrite = false;
    RecordingProgress progress;
    EXPECT_THROW(info.run({&progress, "test"}), OutputError);
    EXPECT_TRUE(progress.labels.empty());
    EXPECT_EQ(readFile(summary), "earlier");
}

TEST(RunLayerTest, BadOptionValuesAreUsageErrorsNamingTheFlag) {
    run::InfoRun info;
    info.options.common.dem = testRaster("demo_coast.tif");
    info.options.common.z_unit = "furlong";
    try {
        info.run({});
        FAIL() << "a bad --z-unit was accepted";
    } catch (const UsageError& e) {
        EXPECT_EQ(std::string(e.what()), "--z-unit: 'furlong' is not m, ft or us-ft");
    }
}

TEST(RunLayerTest, LinkOverTheFlatSeaClearsAtTheGeometricHorizon) {
    // docs/references.md row 9: on a sphere of radius R (k = 0) two masts of height h over a
    // smooth sea see each other up to 2·√(2Rh + h²) apart, i.e. the path of length D is clear
    // when h ≥ R (1 / cos(D / 2R) − 1). The flat sea's row 500 runs 50 km between cell centres.
    auto linkWithMasts = [](const std::string& height) {
        run::LinkRun link;
        link.options.common.dem = testRaster("flat_sea.tif");
        link.options.common.earth_model = "sphere";
        link.options.common.refraction = 0.0;
        link.options.from = "400025,5624975";
        link.options.to = "450025,5624975";
        link.options.from_height = link.options.to_height = height;
        return link.run({}).summary;
    };
    const nlohmann::json low = linkWithMasts("45");
    const double d = low["path_length_m"].get<double>();
    const double r = 6371008.8;
    const double h_clear = r * (1.0 / std::cos(d / (2.0 * r)) - 1.0);
    ASSERT_GT(h_clear, 46.0);
    ASSERT_LT(h_clear, 52.0);
    EXPECT_EQ(low["line_of_sight"], "blocked");
    EXPECT_EQ(linkWithMasts(std::to_string(h_clear - 0.05))["line_of_sight"], "blocked");
    EXPECT_EQ(linkWithMasts(std::to_string(h_clear + 0.05))["line_of_sight"], "clear");
}

TEST(RunLayerTest, IntervisOverTheFlatSeaWritesTheMatrixAndCountsThePairs) {
    // docs/references.md row 9: on a sphere (k = 0) masts of height h, 50 km apart over the flat
    // sea, see each other when 2·√(2Rh) ≥ 50 km, i.e. h ≥ 49.05 m (the parabolic drop the engines
    // use differs from the exact sphere by millimetres here). C, 2 m high and 1 km from A, sees
    // A but not B: 49 km is beyond √(2R·2 m) + √(2R·49.6 m) = 5.0 + 25.1 km.
    ScratchDir dir;
    auto intervis = [&](double h) {
        const std::string csv = dir.file("stations.csv");
        std::ofstream(csv) << "name,x,y,height\nA,400025,5624975," << h << "\nB,450025,5624975,"
                           << h << "\nC,401025,5624975,2\n";
        run::IntervisRun run;
        run.options.common.dem = testRaster("flat_sea.tif");
        run.options.common.earth_model = "sphere";
        run.options.common.refraction = 0.0;
        run.options.common.overwrite = true;
        run.options.stations = csv;
        run.options.matrix = dir.file("matrix.csv");
        return run.run({}).summary;
    };
    const nlohmann::json low = intervis(48.5);
    EXPECT_EQ(low["pairs"], 3);
    EXPECT_EQ(low["pairs_visible"], 1);  // A–C
    EXPECT_EQ(low["stations"][0]["sees"], 1);
    EXPECT_EQ(low["stations_seen_by_none"], nlohmann::json::array({"B"}));
    const nlohmann::json high = intervis(49.6);
    EXPECT_EQ(high["pairs_visible"], 2);  // A–B and A–C
    const std::string matrix = readFile(dir.file("matrix.csv"));
    EXPECT_EQ(
        matrix.rfind("from,to,visible,margin_m,distance_m,azimuth_deg,back_azimuth_deg,reason,"
                     "azimuth_true_deg,zenith_deg,slope_distance_m,grid_distance_m,"
                     "scale_factor\n",
                     0),
        0u);
    EXPECT_NE(matrix.find("\nA,B,yes,"), std::string::npos);
}

TEST(RunLayerTest, ViewshedOverTheFlatSeaReachesTheGeometricHorizon) {
    // docs/references.md row 9: from an eye h above a smooth sea on a sphere (k = 0) the sea
    // surface is seen out to d = √(2Rh + h²): 11.29 km for h = 10 m. The flat sea has 50 m cells.
    ScratchDir dir;
    run::ViewshedRun viewshed;
    viewshed.options.common.dem = testRaster("flat_sea.tif");
    viewshed.options.common.earth_model = "sphere";
    viewshed.options.common.refraction = 0.0;
    viewshed.options.common.observer_height = "10";
    viewshed.options.observer = "425025,5624975";
    viewshed.options.output = dir.file("visible.tif");
    const nlohmann::json j = viewshed.run({}).summary;
    const double r = 6371008.8, h = 10.0;
    const double horizon = std::sqrt(2.0 * r * h + h * h);
    EXPECT_NEAR(j["observers"][0]["farthest_visible_m"].get<double>(), horizon, 75.0);
    EXPECT_EQ(j["extent"]["mode"], "dem");  // the struct's default for a raster command
    EXPECT_TRUE(fileExists(dir.file("visible.tif")));
}

TEST(RunLayerTest, SelectNeedsACountOrACoverageGoal) {
    ScratchDir dir;
    run::SelectRun select;
    select.options.common.dem = testRaster("demo_coast.tif");
    select.options.candidates = testRaster("demo_sites.csv");
    select.options.output = dir.file("count.tif");
    EXPECT_THROW(select.run({}), UsageError);  // neither --count nor --coverage
    select.options.count = 1;
    select.options.count_given = true;
    select.options.common.reach = "2km";
    const nlohmann::json j = select.run({}).summary;
    EXPECT_EQ(j["selected"].size(), 1u);
    EXPECT_EQ(j["stop_reason"], "count");
    EXPECT_TRUE(fileExists(dir.file("count.tif")));
}

TEST(RunLayerTest, LibraryErrorsNameTheFieldAndTheRunNamesTheFlag) {
    // The library knows fields, not flags.
    try {
        EarthModel(EarthShape::Sphere, Ellipsoid::wgs84(), EarthModel::kMeanRadiusM, 1.5);
        FAIL() << "k = 1.5 was accepted";
    } catch (const InvalidOption& e) {
        EXPECT_EQ(e.field(), "refraction");
        EXPECT_EQ(std::string(e.what()).rfind("refraction: k = 1.500000 would bend", 0), 0u);
    }
    EXPECT_EQ(run::flagOfField("target_height_m"), "--target-height");
    EXPECT_EQ(run::flagOfField("earth_model"), "--earth-model");
    // The run maps the field to the flag its command declares (a caller without CLI11 skips the
    // parser's range check, so the library's check is the one that speaks).
    run::LinkRun link;
    link.options.common.dem = testRaster("flat_sea.tif");
    link.options.common.refraction = 1.5;
    link.options.from = "400025,5624975";
    link.options.to = "450025,5624975";
    try {
        run::runCommand(link, {});
        FAIL() << "k = 1.5 was accepted";
    } catch (const UsageError& e) {
        EXPECT_EQ(std::string(e.what()).rfind("--refraction: k = 1.500000 would bend", 0), 0u)
            << e.what();
    }
}
