// Several transmitters (MultiSignal.hpp) and the sector antenna pattern (AntennaPattern.hpp).
#include <gtest/gtest.h>

#include <cmath>

#include "lookfar/core/Errors.hpp"
#include "lookfar/radio/MultiSignal.hpp"

using namespace lookfar;

namespace {

GridGeometry utmGrid(int w, int h, double cell_m) {
    return GridGeometry(w, h, {400000.0, cell_m, 0, 5600000.0, 0, -cell_m}, false, 1.0,
                        Ellipsoid::wgs84());
}

SignalSite siteAt(const std::string& name, int col, int row, double eirp_dbm) {
    SignalSite s;
    s.transmitter.name = name;
    s.transmitter.col = col;
    s.transmitter.row = row;
    s.transmitter.height_m = 25;
    s.transmitter.latitude_deg = 50.5;
    s.frequency_mhz = 450;
    s.eirp_dbm = eirp_dbm;
    return s;
}

}  // namespace

TEST(AntennaPatternTest, ParabolicSectorPattern) {
    // The 3 dB beamwidth is where the pattern is 3 dB down: 12 (½)² = 3 (the definition of the
    // parabolic reference pattern, ITU-R F.1336 §3 form, common practice).
    AntennaPattern p;
    EXPECT_EQ(p.relativeGainDb(123, -4), 0.0);  // omnidirectional by default
    p.azimuth_deg = 120;
    p.beamwidth_deg = 65;
    EXPECT_NEAR(p.relativeGainDb(120, 0), 0.0, 1e-12);
    EXPECT_NEAR(p.relativeGainDb(120 + 32.5, 0), -3.0, 1e-12);
    EXPECT_NEAR(p.relativeGainDb(120 - 32.5 + 360, 0), -3.0, 1e-12);
    EXPECT_NEAR(p.relativeGainDb(300, 0), -25.0, 1e-12);  // behind: the front-to-back limit
    // Vertical: 18 dBi and 65° give θ_3dB = 31000 · 10^−1.8 / 65 = 491.32 / 65 = 7.5587°
    // (the relation of ITU-R F.1336 §3.1, from memory; worked by hand).
    p.vertical_beamwidth_deg = verticalBeamwidthDeg(18, 65);
    EXPECT_NEAR(p.vertical_beamwidth_deg, 7.5587, 0.0001);
    p.tilt_deg = 4;
    EXPECT_NEAR(p.relativeGainDb(120, -4), 0.0, 1e-12);  // the beam points 4° down
    EXPECT_NEAR(p.relativeGainDb(120, -4 + p.vertical_beamwidth_deg / 2), -3.0, 1e-9);
    EXPECT_NEAR(p.relativeGainDb(120 + 32.5, -4 + p.vertical_beamwidth_deg / 2), -6.0, 1e-9);
}

TEST(MultiSignalTest, OneSiteIsTheSignalEngine) {
    Grid<float> dem(60, 40, 0.0f);
    for (int r = 0; r < 40; ++r)
        for (int c = 0; c < 60; ++c)
            dem(c, r) = static_cast<float>(40 + 25 * std::sin(c * 0.3) * std::cos(r * 0.2));
    const GridGeometry geo = utmGrid(60, 40, 30.0);
    const EarthModel earth(EarthShape::Ellipsoid, Ellipsoid::wgs84(), EarthModel::kMeanRadiusM,
                           0.25);
    MultiSignalOptions opt;
    opt.rx_gain_dbi = 2;
    opt.min_level_dbm = -70;
    const SignalSite site = siteAt("Harrowby mast", 20, 20, 40);
    const MultiSignalResult m = multiSignal(dem, geo, earth, {site}, opt, silentProgress());
    SignalOptions so;
    so.radio.frequency_mhz = 450;
    const SignalGrids g = referenceSignal(dem, geo, earth, site.transmitter, so, silentProgress());
    std::int64_t served = 0;
    for (int r = 0; r < 40; ++r) {
        for (int c = 0; c < 60; ++c) {
            EXPECT_EQ(m.loss_db(c, r), g.loss_db(c, r));
            EXPECT_NEAR(m.level_dbm(c, r), 42.0 - g.loss_db(c, r), 1e-4);
            EXPECT_EQ(m.best(c, r), 0);
            served += 42.0 - g.loss_db(c, r) >= -70;
        }
    }
    EXPECT_EQ(m.served_cells[0], served);
    EXPECT_NEAR(m.best_area_m2[0], 60 * 40 * 900.0, 1e-3);
}

TEST(MultiSignalTest, NearerSiteServesAndSectorsTurnAway) {
    // Two equal masts on a level plain: each cell is served by the nearer one; the cells
    // midway tie and go to the lower index.
    const Grid<float> dem(41, 5, 10.0f);
    const GridGeometry geo = utmGrid(41, 5, 50.0);
    const EarthModel earth(EarthShape::Flat);
    MultiSignalOptions opt;
    std::vector<SignalSite> sites = {siteAt("west", 5, 2, 40), siteAt("east", 35, 2, 40)};
    MultiSignalResult m = multiSignal(dem, geo, earth, sites, opt, silentProgress());
    EXPECT_EQ(m.best(10, 2), 0);
    EXPECT_EQ(m.best(30, 2), 1);
    EXPECT_EQ(m.best(20, 2), 0);  // equidistant: the lower index
    // The west mast's sector faces west: east of it the signal is 25 dB down, so the east
    // mast serves a cell 200 m east of the west one (free space alone favours the west by 16 dB).
    sites[0].pattern.azimuth_deg = 270;
    sites[0].pattern.beamwidth_deg = 65;
    m = multiSignal(dem, geo, earth, sites, opt, silentProgress());
    EXPECT_EQ(m.best(9, 2), 1);
    EXPECT_EQ(m.best(2, 2), 0);
    EXPECT_THROW(multiSignal(dem, geo, earth, {}, opt, silentProgress()), UsageError);
}
