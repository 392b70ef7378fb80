// `lookfar signal` on the built binary: the outputs of docs/design.md (loss, level, served,
// Fresnel clearance, summary, metadata), the free-space value next to the transmitter (ITU-R
// P.525, docs/references.md row 15), identical results for any --threads, and the bad-input rules
// of issue 14 item 8 (one sentence, the documented exit code, nothing written).
#include <gtest/gtest.h>

#include <nlohmann/json.hpp>

#include <cmath>
#include <fstream>
#include <string>
#include <vector>

#include "../support/CliRunner.hpp"
#include "../support/RasterFiles.hpp"

using namespace lookfar::testing;

namespace {

const std::string kDemo = testRaster("demo_coast.tif");  // Harrowby coast, 25 m cells
const std::string kSea = testRaster("flat_sea.tif");     // z = 0, 50 m cells, centre (500, 500)

}  // namespace

TEST(SignalCliTest, OutputsSummaryAndMetadata) {
    ScratchDir dir;
    const CliResult r = runLookfar({"signal",
                                    kSea,
                                    "--tx",
                                    "425025,5624975",
                                    "--frequency-mhz",
                                    "450",
                                    "--reach",
                                    "3000",
                                    "--ground-permittivity",
                                    "80",
                                    "--ground-conductivity",
                                    "5",
                                    "--eirp-dbm",
                                    "40",
                                    "--rx-gain-dbi",
                                    "2",
                                    "--min-level-dbm",
                                    "-60",
                                    "-o",
                                    dir.file("loss.tif"),
                                    "--level",
                                    dir.file("level.tif"),
                                    "--served",
                                    dir.file("served.tif"),
                                    "--fresnel",
                                    dir.file("fresnel.tif"),
                                    "--summary",
                                    dir.file("s.json"),
                                    "--json",
                                    "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const auto j = nlohmann::json::parse(r.out);
    EXPECT_EQ(j["command"], "signal");
    EXPECT_DOUBLE_EQ(j["parameters"]["refraction"].get<double>(), 0.25);  // this command's default
    EXPECT_DOUBLE_EQ(j["radio"]["frequency_mhz"].get<double>(), 450);
    EXPECT_EQ(j["radio"]["polarization"], "vertical");
    EXPECT_DOUBLE_EQ(j["transmitter"]["height_m"].get<double>(), 30);
    EXPECT_GT(j["coverage"]["served_area_m2"].get<double>(), 0);
    EXPECT_LE(j["coverage"]["served_area_m2"].get<double>(),
              j["coverage"]["evaluated_area_m2"].get<double>());
    EXPECT_EQ(j["coverage"]["area_by_level_m2"].size(), 7u);

    const Raster loss = readRaster(dir.file("loss.tif"));
    const Raster level = readRaster(dir.file("level.tif"));
    const Raster served = readRaster(dir.file("served.tif"));
    const Raster fresnel = readRaster(dir.file("fresnel.tif"));
    EXPECT_EQ(loss.units[0], "dB");
    EXPECT_EQ(level.units[0], "dBm");
    EXPECT_EQ(metadataItem(dir.file("loss.tif"), "LOOKFAR_FREQUENCY_MHZ"), "450");
    EXPECT_EQ(metadataItem(dir.file("loss.tif"), "LOOKFAR_POLARIZATION"), "vertical");
    // Next to the transmitter (50 m east), ITU-R P.525 free space over the slant distance between
    // the 30 m and 1.5 m antennas: L = 20 log(4π d / λ) (docs/references.md row 15).
    const double slant = std::hypot(50.0, 28.5);
    const double fsl = 20 * std::log10(4 * M_PI * slant * 450e6 / 299792458.0);
    EXPECT_NEAR(loss.at(0, 501, 500), fsl, 0.01);
    std::size_t evaluated = 0, served_cells = 0;
    for (int r0 = 0; r0 < loss.height; ++r0) {
        for (int c = 0; c < loss.width; ++c) {
            const double l = loss.at(0, c, r0);
            if (std::isnan(l)) {
                EXPECT_EQ(served.at(0, c, r0), 255);
                continue;
            }
            ++evaluated;
            // level = EIRP + receiver gain − loss; served where it reaches −60 dBm.
            EXPECT_NEAR(level.at(0, c, r0), 42 - l, 1e-4);
            EXPECT_EQ(served.at(0, c, r0), 42 - l >= -60 ? 1 : 0);
            served_cells += served.at(0, c, r0) == 1;
        }
    }
    EXPECT_EQ(static_cast<long long>(evaluated), j["coverage"]["evaluated_cells"].get<long long>());
    EXPECT_EQ(static_cast<long long>(served_cells), j["coverage"]["served_cells"].get<long long>());
    // Loss grows outward over the smooth sea; with the receiver 1.5 m up the first Fresnel zone
    // grazes the sea, well short of the 0.6 criterion (docs/references.md row 7).
    EXPECT_GT(loss.at(0, 560, 500), loss.at(0, 530, 500));
    EXPECT_LT(fresnel.at(0, 560, 500), 0.6);
    EXPECT_TRUE(std::isnan(loss.at(0, 500, 400)));  // 5 km: beyond --reach
}

TEST(SignalCliTest, SameRasterForAnyThreadCount) {
    ScratchDir dir;
    for (const char* threads : {"1", "2"}) {
        const CliResult r =
            runLookfar({"signal", kDemo, "--tx", "426000,5595000", "--frequency-mhz", "900",
                        "--reach", "2500", "--threads", threads, "-o",
                        dir.file(std::string("loss") + threads + ".tif"), "--quiet"});
        ASSERT_EQ(r.exit_code, 0) << r.err;
    }
    const Raster a = readRaster(dir.file("loss1.tif"));
    const Raster b = readRaster(dir.file("loss2.tif"));
    ASSERT_EQ(a.values[0].size(), b.values[0].size());
    std::size_t finite = 0;
    for (std::size_t i = 0; i < a.values[0].size(); ++i) {
        const double x = a.values[0][i], y = b.values[0][i];
        EXPECT_TRUE((std::isnan(x) && std::isnan(y)) || x == y) << "cell " << i;
        finite += !std::isnan(x);
    }
    EXPECT_GT(finite, 10000u);
}

TEST(SignalCliTest, BadInputIsRefusedWithNothingWritten) {
    ScratchDir out;
    const std::vector<std::string> base = {
        "signal", kDemo, "--tx", "426000,5595000", "-o", out.file("loss.tif"), "--quiet"};
    auto with = [&](std::vector<std::string> extra) {
        std::vector<std::string> args = base;
        args.insert(args.end(), extra.begin(), extra.end());
        return args;
    };
    // Frequency outside 30 MHz – 50 GHz, where the method applies: exit 2.
    expectRefused(with({"--frequency-mhz", "10"}), 2, {"--frequency-mhz", "10"}, out);
    expectRefused(with({"--frequency-mhz", "60000"}), 2, {"--frequency-mhz"}, out);
    expectRefused(base, 2, {"--frequency-mhz"}, out);  // required
    // Antenna heights must be above the ground.
    expectRefused(with({"--frequency-mhz", "450", "--tx-height", "0"}), 2, {"--tx-height"}, out);
    expectRefused(with({"--frequency-mhz", "450", "--rx-height", "-2"}), 2, {"--rx-height"}, out);
    // A level needs the transmitted power.
    expectRefused(with({"--frequency-mhz", "450", "--min-level-dbm", "-90"}), 2,
                  {"--min-level-dbm", "--eirp-dbm"}, out);
    expectRefused(with({"--frequency-mhz", "450", "--level", out.file("l.tif")}), 2,
                  {"--level", "--eirp-dbm"}, out);
    expectRefused(with({"--frequency-mhz", "450", "--polarization", "circular"}), 2,
                  {"--polarization"}, out);
    // A transmitter outside the DEM is bad input: exit 3.
    expectRefused({"signal", kDemo, "--tx", "10,10", "--frequency-mhz", "450", "-o",
                   out.file("loss.tif"), "--quiet"},
                  3, {"--tx"}, out);
}

TEST(SignalCliTest, HelpCarriesTheCautions) {
    const CliResult r = runLookfar({"signal", "--help"});
    EXPECT_EQ(r.exit_code, 0);
    EXPECT_NE(r.out.find("median predictions for planning, not licensed coverage"),
              std::string::npos)
        << r.out;
    EXPECT_NE(r.out.find("licensed radio engineering prevail"), std::string::npos);
    EXPECT_NE(r.out.find("delta-Bullington"), std::string::npos);
}

TEST(SignalCliTest, SitesGiveTheStrongestLevelAndTheBestServer) {
    ScratchDir in, dir;
    const std::string csv = in.file("masts.csv");
    std::ofstream(csv) << "name,x,y,height,eirp_dbm,azimuth_deg,beamwidth_deg,tilt_deg,gain_dbi\n"
                          "Harrowby Head,426000,5595000,30,47,,,,\n"
                          "Saltmarsh,429000,5596000,20,40,270,65,2,15\n";
    const CliResult r = runLookfar({"signal",
                                    kDemo,
                                    "--sites",
                                    csv,
                                    "--frequency-mhz",
                                    "450",
                                    "--reach",
                                    "2000",
                                    "--min-level-dbm",
                                    "-80",
                                    "-o",
                                    dir.file("loss.tif"),
                                    "--level",
                                    dir.file("level.tif"),
                                    "--best",
                                    dir.file("best.tif"),
                                    "--served",
                                    dir.file("served.tif"),
                                    "--json",
                                    "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const auto j = nlohmann::json::parse(r.out);
    ASSERT_EQ(j["transmitters"].size(), 2u);
    EXPECT_EQ(j["transmitters"][1]["name"], "Saltmarsh");
    EXPECT_DOUBLE_EQ(j["transmitters"][1]["beamwidth_deg"].get<double>(), 65);
    const Raster best = readRaster(dir.file("best.tif"));
    const Raster level = readRaster(dir.file("level.tif"));
    const Raster served = readRaster(dir.file("served.tif"));
    std::size_t by[2] = {0, 0};
    for (int row = 0; row < best.height; ++row) {
        for (int c = 0; c < best.width; ++c) {
            const double b = best.at(0, c, row);
            ASSERT_TRUE(b == 0 || b == 1 || b == 65535) << b;
            if (b == 65535) {
                EXPECT_TRUE(std::isnan(level.at(0, c, row)));
                continue;
            }
            ++by[static_cast<int>(b)];
            EXPECT_EQ(served.at(0, c, row), level.at(0, c, row) >= -80 ? 1 : 0);
        }
    }
    EXPECT_GT(by[0], 1000u);
    EXPECT_GT(by[1], 1000u);
    // Each mast's own cell is served best by it.
    EXPECT_EQ(best.at(0, (426000 - 420000) / 25, (5600000 - 5595000) / 25), 0);
    EXPECT_EQ(best.at(0, (429000 - 420000) / 25, (5600000 - 5596000) / 25), 1);
}

TEST(SignalCliTest, SitesRowsWithoutPowerOrWithBadValuesAreRefused) {
    ScratchDir in, out;
    const std::string no_power = in.file("a.csv");
    std::ofstream(no_power) << "name,x,y\nHead,426000,5595000\n";
    expectRefused({"signal", kDemo, "--sites", no_power, "--frequency-mhz", "450", "-o",
                   out.file("loss.tif"), "--quiet"},
                  3, {"a.csv", "line 2", "eirp_dbm"}, out);
    const std::string bad_f = in.file("b.csv");
    std::ofstream(bad_f) << "name,x,y,frequency_mhz,eirp_dbm\nHead,426000,5595000,5,40\n";
    expectRefused({"signal", kDemo, "--sites", bad_f, "-o", out.file("loss.tif"), "--quiet"}, 3,
                  {"b.csv", "line 2", "frequency_mhz", "'5'"}, out);
    expectRefused({"signal", kDemo, "--sites", bad_f, "--tx", "426000,5595000", "-o",
                   out.file("loss.tif"), "--quiet"},
                  2, {"--tx", "--sites"}, out);
}
