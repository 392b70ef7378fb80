// The path profile of `lookfar link` against outside values (docs/references.md rows in
// the comments) and exact sphere geometry.
#include <gtest/gtest.h>

#include <cmath>
#include <limits>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Units.hpp"
#include "lookfar/earth/EarthModel.hpp"
#include "lookfar/link/PathProfile.hpp"

using namespace lookfar;

namespace {

constexpr double R = EarthModel::kMeanRadiusM;
constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

EarthModel sphere(double k) {
    return EarthModel(EarthShape::Sphere, Ellipsoid::wgs84(), R, k);
}

/// Samples along row `row` of a grid of `cell_m` cells, from column c0 eastwards over
/// `length_m`, `step_m` apart (the last one exactly at the end).
PathProfileInput eastward(double c0, double row, double length_m, double cell_m, double step_m) {
    PathProfileInput in;
    const int n = static_cast<int>(std::ceil(length_m / step_m));
    for (int i = 0; i <= n; ++i) {
        const double d = length_m * i / n;
        in.samples.push_back({c0 + d / cell_m, row, d});
    }
    in.azimuth_deg = 90;
    return in;
}

}  // namespace

// Row 6: ITU-R P.530, F1 = 17.32 √(d1 d2 / (f d)) (d in km, f in GHz); 10 km path, midpoint,
// 5.8 GHz → 11.4 m (from memory). 17.32 is √(c · 10⁻⁶) = 17.314 rounded, hence 0.1 %.
TEST(LinkProfileTest, FresnelRadiusMatchesItuP530) {
    EXPECT_NEAR(firstFresnelRadiusM(5000, 5000, 5800), 11.4, 0.05);
    for (double f_mhz : {150.0, 900.0, 2400.0, 5800.0, 23000.0}) {
        for (double d1_km : {0.3, 2.0, 7.5, 19.0}) {
            const double d2_km = 20.0 - d1_km;
            const double itu = 17.32 * std::sqrt(d1_km * d2_km / (f_mhz / 1000.0 * 20.0));
            EXPECT_NEAR(firstFresnelRadiusM(d1_km * 1000, d2_km * 1000, f_mhz), itu, 1e-3 * itu)
                << f_mhz << " MHz, d1 " << d1_km << " km";
        }
    }
    EXPECT_EQ(firstFresnelRadiusM(0, 10000, 5800), 0.0);
    EXPECT_TRUE(std::isnan(firstFresnelRadiusM(100, 100, 0)));
}

// Row 4: radio horizon over a smooth Earth with k = 0.25, d(km) = 4.12 √h(m) (ITU-R effective
// radius, from memory): two masts over a flat sea see each other up to the sum of their horizon
// distances. 4.12 is rounded (4.1219 at R = 6 371 008.8 m), so ±1 % either side.
TEST(LinkProfileTest, FlatSeaMastsClearUpToTheSumOfRadioHorizons) {
    const double cell = 25;
    const Grid<float> sea(3000, 3, 0.0f);  // 75 km of sea
    const EarthModel earth = sphere(0.25);
    for (auto [h1, h2] : {std::pair{30.0, 50.0}, std::pair{10.0, 100.0}, std::pair{5.0, 5.0}}) {
        const double sum_m = 4120.0 * (std::sqrt(h1) + std::sqrt(h2));
        for (double f : {0.99, 1.01}) {
            PathProfileInput in = eastward(10, 1, f * sum_m, cell, 0.5 * cell);
            in.from_height_m = h1;
            in.to_height_m = h2;
            const PathProfileResult r = computePathProfile(sea, earth, in);
            EXPECT_EQ(r.line_of_sight, f < 1)
                << h1 << " m and " << h2 << " m masts at " << f << " × the sum of their horizons";
        }
    }
}

// Row 9 (exact geometry): at exactly the sum of the two geometric horizon arcs
// R′·arccos(R′/(R′+h)) the sightline grazes the sea: the least clearance is zero.
TEST(LinkProfileTest, SightlineGrazesTheSeaAtTheSumOfHorizonArcs) {
    const double cell = 25;
    const Grid<float> sea(3000, 3, 0.0f);
    const EarthModel earth = sphere(0.25);
    const double r_eff = R / 0.75;
    const double h1 = 30, h2 = 50;
    const double d =
        EarthModel::sphereHorizonArcM(h1, r_eff) + EarthModel::sphereHorizonArcM(h2, r_eff);
    PathProfileInput in = eastward(10, 1, d, cell, 0.5 * cell);
    in.from_height_m = h1;
    in.to_height_m = h2;
    const PathProfileResult r = computePathProfile(sea, earth, in);
    // Samples are ≤ 12.5 m from the tangent point, where the clearance is Δ²/2R′ ≈ 1e-5 m.
    EXPECT_NEAR(r.min_clearance_m, 0.0, 1e-3);
    EXPECT_NEAR(r.min_clearance_at_m, EarthModel::sphereHorizonArcM(h1, r_eff), 13.0);
    EXPECT_NEAR(r.effective_radius_m, r_eff, 1e-6);
}

// Exact sphere geometry: the elevation angles at the two ends of a link add up to minus the
// central angle D/R plus the refraction k·D/R (each end sees the other raised by k·D/2R).
// Checked against an independent vector construction in the plane of the path.
TEST(LinkProfileTest, ReciprocalElevationAnglesDifferByCentralAngleLessRefraction) {
    const double cell = 30;
    Grid<float> plane(2000, 3);
    for (int r = 0; r < 3; ++r)
        for (int c = 0; c < 2000; ++c)
            plane(c, r) = static_cast<float>(0.02 * c);  // a gentle rise to the east
    for (double k : {0.0, 0.13, 0.25}) {
        const EarthModel earth = sphere(k);
        for (double length : {2000.0, 17000.0, 55000.0}) {
            PathProfileInput in = eastward(5, 1, length, cell, 15);
            in.from_height_m = 12;
            in.to_height_m = 45;
            const PathProfileResult r = computePathProfile(plane, earth, in);
            const double gamma_deg = length / R * kRadToDeg;
            EXPECT_NEAR(r.from_elevation_deg + r.to_elevation_deg, -gamma_deg + k * gamma_deg, 1e-9)
                << "k " << k << ", " << length << " m";
            // Vectors on the effective sphere R′ = R/(1 − k): A on the y axis, B at angle Θ.
            const double rp = R / (1 - k), th = length / rp;
            const double ax = 0, ay = rp + r.from_antenna_m;
            const double bx = (rp + r.to_antenna_m) * std::sin(th);
            const double by = (rp + r.to_antenna_m) * std::cos(th);
            const double elev_a = std::asin((by - ay) / std::hypot(bx - ax, by - ay)) * kRadToDeg;
            EXPECT_NEAR(r.from_elevation_deg, elev_a, 1e-9);
        }
    }
}

// Exact sphere geometry: the sightline between two points at equal height h over a sea of
// effective radius R′ passes the middle at (R′ + h) cos(Θ/2) − R′; the bulge there is
// R′(1 − cos(Θ/2)), within the documented 0.1 m of the parabola d1·d2/(2R′) at 100 km.
TEST(LinkProfileTest, SightlineIsTheExactChordOverTheSphere) {
    const double cell = 50;
    const Grid<float> sea(2100, 3, 0.0f);
    const EarthModel earth = sphere(0.13);
    const double rp = R / (1 - 0.13);
    const double length = 100000, h = 400;
    PathProfileInput in = eastward(20, 1, length, cell, 25);
    in.from_height_m = in.to_height_m = h;
    const PathProfileResult r = computePathProfile(sea, earth, in);
    const ProfilePoint& mid = r.points[r.points.size() / 2];
    ASSERT_NEAR(mid.distance_m, length / 2, 1e-6);
    const double th2 = length / rp / 2;
    EXPECT_NEAR(mid.sightline_m, (rp + h) * std::cos(th2) - rp, 1e-6);
    EXPECT_NEAR(mid.earth_bulge_m, rp * (1 - std::cos(th2)), 1e-6);
    EXPECT_NEAR(mid.earth_bulge_m, 0.25 * length * length / (2 * rp), 0.1);
    EXPECT_NEAR(mid.clearance_m, mid.sightline_m, 1e-9);  // terrain 0
    EXPECT_DOUBLE_EQ(r.points.front().sightline_m, h);
    EXPECT_DOUBLE_EQ(r.points.back().sightline_m, h);
    // Flat Earth: the sightline is the straight line between the antennas.
    const EarthModel flat(EarthShape::Flat);
    in.to_height_m = 100;
    const PathProfileResult f = computePathProfile(sea, flat, in);
    EXPECT_NEAR(f.points[f.points.size() / 2].sightline_m, 250.0, 1e-9);
    EXPECT_EQ(f.points[f.points.size() / 2].earth_bulge_m, 0.0);
}

// Analytic terrain: a 50 m wall one cell thick blocks the path at its distance.
TEST(LinkProfileTest, WallBlocksAtItsDistance) {
    const double cell = 10;
    Grid<float> wall(201, 3, 0.0f);
    for (int r = 0; r < 3; ++r)
        wall(100, r) = 50.0f;
    PathProfileInput in = eastward(10, 1, 1800, cell, 5);
    in.from_height_m = in.to_height_m = 10;
    const PathProfileResult r = computePathProfile(wall, sphere(0.13), in);
    EXPECT_FALSE(r.line_of_sight);
    // Bilinear heights rise from column 99 to 100: the first sample above 10 m lies past 99.2.
    EXPECT_GT(r.blocked_at_m, (99 - 10) * cell);
    EXPECT_LE(r.blocked_at_m, (100 - 10) * cell);
    EXPECT_NEAR(r.min_clearance_at_m, 900.0, 1e-9);
    // The sightline passes the middle 10 m up less its sag (R′+10)(1 − cos(Θ/2)) ≈ 0.055 m.
    EXPECT_NEAR(r.min_clearance_m, -40.055, 0.001);
    EXPECT_GT(r.blocked_samples, 0);
    // A 60 m mast at each end clears it.
    in.from_height_m = in.to_height_m = 60;
    EXPECT_TRUE(computePathProfile(wall, sphere(0.13), in).line_of_sight);
}

// The 60 % rule (row 7, common practice): a path just clear of a ridge fails it, a path with
// the full zone clear passes.
TEST(LinkProfileTest, SixtyPercentRuleOfTheFirstFresnelZone) {
    const double cell = 10;
    Grid<float> ridge(1100, 3, 0.0f);
    for (int r = 0; r < 3; ++r)
        ridge(550, r) = 30.0f;
    const EarthModel flat(EarthShape::Flat);
    PathProfileInput in = eastward(50, 1, 10000, cell, 5);
    in.frequency_mhz = 5800;  // F1 at the middle of 10 km: 11.4 m (row 6)
    const double f1 = firstFresnelRadiusM(5000, 5000, 5800);
    in.from_height_m = in.to_height_m = 30 + 0.5 * f1;  // half the zone clear
    PathProfileResult r = computePathProfile(ridge, flat, in);
    EXPECT_TRUE(r.line_of_sight);
    EXPECT_NEAR(r.min_fresnel_fraction, 0.5, 1e-6);
    EXPECT_NEAR(r.min_fresnel_at_m, 5000, 1e-6);
    EXPECT_FALSE(r.fresnel_60_clear);
    in.from_height_m = in.to_height_m = 30 + 0.7 * f1;
    r = computePathProfile(ridge, flat, in);
    EXPECT_NEAR(r.min_fresnel_fraction, 0.7, 1e-6);
    EXPECT_TRUE(r.fresnel_60_clear);
    // Without a frequency there is no zone.
    in.frequency_mhz = kNaN;
    r = computePathProfile(ridge, flat, in);
    EXPECT_TRUE(std::isnan(r.min_fresnel_fraction));
    EXPECT_TRUE(std::isnan(r.points[10].fresnel_radius_m));
    EXPECT_FALSE(r.fresnel_60_clear);
}

// Analytic terrain: bilinear interpolation reproduces a tilted plane exactly, also in the
// outer half cell (clamped to the edge cells) and beside no-data (weights renormalised).
TEST(LinkProfileTest, BilinearHeightsReproduceATiltedPlane) {
    Grid<float> plane(20, 10);
    for (int r = 0; r < 10; ++r)
        for (int c = 0; c < 20; ++c)
            plane(c, r) = static_cast<float>(2 * c + 3 * r);
    for (double c : {0.0, 0.25, 3.5, 7.9, 18.99, 19.0})
        for (double r : {0.0, 0.6, 4.5, 8.01, 9.0})
            EXPECT_NEAR(bilinearHeight(plane, c, r), 2 * c + 3 * r, 1e-5) << c << "," << r;
    EXPECT_NEAR(bilinearHeight(plane, -0.4, 2), 6.0, 1e-6);      // clamped to column 0
    EXPECT_NEAR(bilinearHeight(plane, 19.45, 9.3), 65.0, 1e-6);  // clamped to the last cell
    EXPECT_TRUE(std::isnan(bilinearHeight(plane, -0.6, 2)));     // outside the raster
    plane(5, 5) = std::numeric_limits<float>::quiet_NaN();
    EXPECT_TRUE(std::isnan(bilinearHeight(plane, 5.2, 4.9)));  // own cell has no data
    // Between (4,4), (5,4), (4,5) and the missing (5,5): the three others, renormalised.
    const double fx = 0.4, fy = 0.3, w00 = (1 - fx) * (1 - fy), w10 = fx * (1 - fy),
                 w01 = (1 - fx) * fy;
    EXPECT_NEAR(bilinearHeight(plane, 4.4, 4.3),
                (w00 * plane(4, 4) + w10 * plane(5, 4) + w01 * plane(4, 5)) / (w00 + w10 + w01),
                1e-5);
}

// No-data rules of docs/design.md: a no-data sample does not block; an end on no-data is bad input.
TEST(LinkProfileTest, NoDataDoesNotBlockButAnEndOnNoDataIsBadInput) {
    const double cell = 10;
    Grid<float> g(201, 3, 0.0f);
    for (int r = 0; r < 3; ++r)
        for (int c = 90; c < 110; ++c)
            g(c, r) = std::numeric_limits<float>::quiet_NaN();
    PathProfileInput in = eastward(10, 1, 1800, cell, 5);
    in.from_height_m = in.to_height_m = 2;
    const PathProfileResult r = computePathProfile(g, sphere(0.13), in);
    EXPECT_TRUE(r.line_of_sight);
    EXPECT_TRUE(std::isnan(r.points[r.points.size() / 2].clearance_m));
    EXPECT_GT(r.min_clearance_m, 1.9);
    PathProfileInput bad = eastward(95, 1, 500, cell, 5);
    EXPECT_THROW(computePathProfile(g, sphere(0.13), bad), InputError);
}

// Issue 14 item 6, --required-clearance, against a hand computation: a single knife edge on flat
// ground under a flat Earth, where the sightline is the straight line between the antennas.
// ITU-R P.530 §2.2.2 (docs/references.md row 6): F1 = 17.32 √(d1 d2 / (f d)), d in km, f in GHz.
// A 30 m wall 500 m along a 2 km path, 2.4 GHz: F1 = 17.32 √(0.5 · 1.5 / (2.4 · 2)) = 6.846 m.
// For 0.6 F1 over the wall with the far antenna fixed at z_B, the near antenna needs
//   z_A = (30 + 0.6 F1 − z_B d1/D) · D / d2,  and the far one, z_A fixed, (… − z_A d2/D) · D / d1.
// 17.32 is √(c · 10⁻⁶) = 17.314 rounded, so the hand values carry 0.04 %: ±0.01 m here.
TEST(LinkProfileTest, RequiredHeightsOverAKnifeEdgeMatchTheP530Geometry) {
    const double cell = 10;
    Grid<float> g(201, 3, 0.0f);
    for (int r = 0; r < 3; ++r)
        g(50, r) = 30.0f;
    const EarthModel flat(EarthShape::Flat);
    PathProfileInput in = eastward(0, 1, 2000, cell, 5);  // a sample on the wall's centre
    in.frequency_mhz = 2400;
    in.from_height_m = 10;
    in.to_height_m = 10;
    const PathProfileResult r = computePathProfile(g, flat, in);
    const RequiredHeights need = requiredEndHeights(r, 0.6);
    const double f1 = 17.32 * std::sqrt(0.5 * 1.5 / (2.4 * 2.0));
    EXPECT_NEAR(f1, 6.846, 0.001);
    EXPECT_NEAR(need.from_m, (30 + 0.6 * f1 - 10 * 0.25) / 0.75, 0.01);
    EXPECT_NEAR(need.to_m, (30 + 0.6 * f1 - 10 * 0.75) / 0.25, 0.01);
    // With that antenna the worst clearance is 0.6 of F1, over the wall.
    in.from_height_m = need.from_m;
    const PathProfileResult at = computePathProfile(g, flat, in);
    EXPECT_NEAR(at.min_fresnel_fraction, 0.6, 1e-9);
    EXPECT_NEAR(at.min_fresnel_at_m, 500, 1e-9);
    // Fraction 0: the sightline just grazes the top of the wall (z_A = (30 − 2.5)/0.75).
    EXPECT_NEAR(requiredEndHeights(r, 0.0).from_m, 27.5 / 0.75, 1e-9);
}

// The solution is exact on the curved Earth too (the chord r(θ) of PathProfile.hpp): with the
// solved antenna the worst clearance is the fraction asked, and 1 mm lower it is not reached.
// On open sea an end needs no mast when the other end is high enough: 0 m, not negative.
TEST(LinkProfileTest, RequiredHeightsAreExactOnTheSphere) {
    const double cell = 10;
    Grid<float> g(2100, 3, 0.0f);
    for (int r = 0; r < 3; ++r) {
        for (int c = 600; c < 700; ++c)
            g(c, r) = static_cast<float>(40.0 - 0.8 * std::fabs(c - 650.0));  // a 40 m hill
    }
    const EarthModel earth = sphere(0.25);
    PathProfileInput in = eastward(20, 1, 20000, cell, 5);
    in.frequency_mhz = 900;
    in.from_height_m = 15;
    in.to_height_m = 25;
    const PathProfileResult r = computePathProfile(g, earth, in);
    for (double fraction : {0.0, 0.6, 1.0}) {
        const RequiredHeights need = requiredEndHeights(r, fraction);
        ASSERT_TRUE(std::isfinite(need.from_m) && std::isfinite(need.to_m));
        PathProfileInput a = in;
        a.from_height_m = need.from_m;
        EXPECT_NEAR(computePathProfile(g, earth, a).min_fresnel_fraction, fraction, 1e-7);
        a.from_height_m = need.from_m - 0.001;
        EXPECT_LT(computePathProfile(g, earth, a).min_fresnel_fraction, fraction);
        PathProfileInput b = in;
        b.to_height_m = need.to_m;
        EXPECT_NEAR(computePathProfile(g, earth, b).min_fresnel_fraction, fraction, 1e-7);
        b.to_height_m = need.to_m - 0.001;
        EXPECT_LT(computePathProfile(g, earth, b).min_fresnel_fraction, fraction);
    }
    // 2 km over the flat sea to a 1 km tower: the sightline from the other end climbs 0.5 m per
    // metre, more than F1 (at most 7.7 m here) asks, so that end needs no mast: 0 m, not less.
    // A 300 m tower is not enough: 5 m out, 0.6 F1 = 0.77 m but the sightline rises 0.75 m.
    Grid<float> sea(300, 3, 0.0f);
    PathProfileInput s = eastward(10, 1, 2000, cell, 5);
    s.frequency_mhz = 900;
    s.from_height_m = 300;
    s.to_height_m = 300;
    const RequiredHeights short_of = requiredEndHeights(computePathProfile(sea, earth, s), 0.6);
    EXPECT_GT(short_of.from_m, 0.0);
    EXPECT_LT(short_of.from_m, 0.1);
    s.from_height_m = 1000;
    s.to_height_m = 1000;
    const RequiredHeights low = requiredEndHeights(computePathProfile(sea, earth, s), 0.6);
    EXPECT_EQ(low.from_m, 0.0);
    EXPECT_EQ(low.to_m, 0.0);
    // An end that stands at the foot of a cliff facing the other end: the sightline from it
    // would have to rise more steeply than the vertical at the far end (on an 80 km path, R′ =
    // 8 500 km: more than R′/D ≈ 106 m per metre), so no height of the far antenna clears it.
    Grid<float> cliff(8100, 3, 0.0f);
    for (int row = 0; row < 3; ++row)
        cliff(8009, row) = 2000.0f;
    PathProfileInput h = eastward(10, 1, 80000, cell, 5);
    h.frequency_mhz = 900;
    h.from_height_m = 10;
    h.to_height_m = 1;
    const RequiredHeights none = requiredEndHeights(computePathProfile(cliff, earth, h), 0.6);
    EXPECT_TRUE(std::isnan(none.from_m));
    EXPECT_TRUE(std::isfinite(none.to_m));
}
