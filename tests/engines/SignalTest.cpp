// The reference signal engine (Signal.hpp): its terrain profiles are the sightline rule's samples
// and its losses the delta-Bullington prediction of Propagation.hpp over them.
#include <gtest/gtest.h>
#include <omp.h>

#include <cmath>
#include <cstring>
#include <limits>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/FractalTerrain.hpp"
#include "lookfar/radio/Signal.hpp"

using namespace lookfar;

namespace {

GridGeometry utmGrid(int w, int h, double cell_m) {
    return GridGeometry(w, h, {400000.0, cell_m, 0, 5600000.0, 0, -cell_m}, false, 1.0,
                        Ellipsoid::wgs84());
}

Observer transmitterAt(int col, int row, double height_m) {
    Observer o;
    o.name = "Harrowby mast";
    o.col = col;
    o.row = row;
    o.height_m = height_m;
    o.latitude_deg = 50.5;
    return o;
}

SignalOptions options(double f_mhz) {
    SignalOptions o;
    o.radio.frequency_mhz = f_mhz;
    o.want_fresnel = true;
    return o;
}

Grid<float> fractal(int size, std::uint64_t seed) {
    FractalSpec spec;
    spec.width = size;
    spec.height = size;
    spec.low_m = 0;
    spec.high_m = 300;
    spec.seed = seed;
    return fractalTerrain(spec);
}

}  // namespace

TEST(SignalTest, RowProfileIsTheDemRow) {
    // Along the transmitter's own row the sightline crosses every column line at a cell centre,
    // so the profile is the DEM row itself and the effective radius is N/(1 − k) (east-west):
    // the engine must give the loss computed here from that row directly.
    const Grid<float> dem = fractal(96, 7);
    const GridGeometry geo = utmGrid(96, 96, 50.0);
    const EarthModel earth(EarthShape::Ellipsoid, Ellipsoid::wgs84(), EarthModel::kMeanRadiusM,
                           0.25);
    const Observer tx = transmitterAt(10, 40, 30);
    const SignalOptions opt = options(450);
    const SignalGrids out = referenceSignal(dem, geo, earth, tx, opt, silentProgress());
    const LocalFrame frame = geo.localFrame(tx.col, tx.row);
    const double ae = earth.effectiveRadius(tx.latitude_deg, 90.0);
    for (int c : {12, 30, 55, 95}) {
        TerrainProfile p;
        for (int i = tx.col; i <= c; ++i) {
            p.distance_m.push_back(frame.east(i, tx.row));
            p.height_m.push_back(dem(i, tx.row));
        }
        const PathLoss expected = deltaBullingtonLoss(p, 30, 1.5, ae, opt.radio);
        // Float32 output; the radius from the parabolic drop equals Euler's radius to ~1e-12.
        EXPECT_NEAR(out.loss_db(c, tx.row), expected.basic_db, 1e-3) << "column " << c;
        EXPECT_NEAR(out.fresnel(c, tx.row), expected.fresnel_fraction, 1e-4) << "column " << c;
    }
}

TEST(SignalTest, ShadowedCellsLoseMoreAndShowBlockedFresnel) {
    // A 60 m ridge across a level plain at 2 km: cells behind it lose more than free space
    // and the Fresnel clearance is negative; cells before it are in the clear.
    Grid<float> dem(80, 5, 10.0f);
    for (int r = 0; r < 5; ++r)
        dem(40, r) = 70.0f;
    const GridGeometry geo = utmGrid(80, 5, 50.0);
    const EarthModel earth(EarthShape::Flat);
    const Observer tx = transmitterAt(0, 2, 20);
    SignalOptions opt = options(900);
    opt.rx_height_m = 15;  // a mast: the first Fresnel zone clears the plain before the ridge
    const SignalGrids out = referenceSignal(dem, geo, earth, tx, opt, silentProgress());
    // ν < −0.78 everywhere before the ridge: free space exactly (P.526-15 §4.1).
    EXPECT_NEAR(out.loss_db(30, 2), freeSpaceLossDb(std::hypot(30 * 50.0, 5.0), 900), 1e-4);
    EXPECT_GT(out.fresnel(30, 2), 0.6);
    EXPECT_GT(out.loss_db(60, 2) - freeSpaceLossDb(60 * 50.0, 900), 15.0);
    EXPECT_LT(out.fresnel(60, 2), 0.0);
    // The transmitter's own cell: free space over the 5 m between the antennas.
    EXPECT_NEAR(out.loss_db(0, 2), freeSpaceLossDb(5.0, 900), 1e-4);
    EXPECT_TRUE(std::isnan(out.fresnel(0, 2)));
}

TEST(SignalTest, ReachAndNoDataLeaveNoValue) {
    Grid<float> dem = fractal(40, 3);
    dem(30, 30) = std::numeric_limits<float>::quiet_NaN();
    const GridGeometry geo = utmGrid(40, 40, 30.0);
    SignalOptions opt = options(150);
    opt.reach_m = 600;
    const SignalGrids out =
        referenceSignal(dem, geo, EarthModel(), transmitterAt(20, 20, 30), opt, silentProgress());
    EXPECT_TRUE(std::isnan(out.loss_db(30, 30)));   // no data
    EXPECT_FALSE(std::isnan(out.loss_db(39, 20)));  // 570 m: within reach
    EXPECT_TRUE(std::isnan(out.loss_db(0, 0)));     // 849 m: beyond reach
}

TEST(SignalTest, SameResultForAnyThreadCount) {
    const Grid<float> dem = fractal(64, 11);
    const GridGeometry geo = utmGrid(64, 64, 40.0);
    const EarthModel earth(EarthShape::Ellipsoid, Ellipsoid::wgs84(), EarthModel::kMeanRadiusM,
                           0.25);
    const int before = omp_get_max_threads();
    SignalGrids runs[2];
    for (int k = 0; k < 2; ++k) {
        omp_set_num_threads(k + 1);
        runs[k] = referenceSignal(dem, geo, earth, transmitterAt(5, 50, 25), options(2400),
                                  silentProgress());
    }
    omp_set_num_threads(before);
    EXPECT_EQ(std::memcmp(runs[0].loss_db.data(), runs[1].loss_db.data(),
                          runs[0].loss_db.size() * sizeof(float)),
              0);
    EXPECT_EQ(std::memcmp(runs[0].fresnel.data(), runs[1].fresnel.data(),
                          runs[0].fresnel.size() * sizeof(float)),
              0);
}

TEST(SignalTest, BadInputIsRefused) {
    const Grid<float> dem = fractal(16, 1);
    const GridGeometry geo = utmGrid(16, 16, 30.0);
    SignalOptions opt = options(10);
    EXPECT_THROW(
        referenceSignal(dem, geo, EarthModel(), transmitterAt(2, 2, 30), opt, silentProgress()),
        UsageError);
    opt = options(100);
    EXPECT_THROW(
        referenceSignal(dem, geo, EarthModel(), transmitterAt(2, 2, 0), opt, silentProgress()),
        UsageError);
    opt.rx_height_m = -1;
    EXPECT_THROW(
        referenceSignal(dem, geo, EarthModel(), transmitterAt(2, 2, 30), opt, silentProgress()),
        UsageError);
    opt = options(100);
    EXPECT_THROW(
        referenceSignal(dem, geo, EarthModel(), transmitterAt(20, 2, 30), opt, silentProgress()),
        InputError);
}
