// EarthModel against the outside values of docs/references.md (row numbers in comments).
#include <gtest/gtest.h>

#include <cmath>
#include <limits>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Units.hpp"
#include "lookfar/earth/EarthModel.hpp"

using namespace lookfar;

namespace {
constexpr double R = EarthModel::kMeanRadiusM;
constexpr double kMetresPerNmi = 1852.0;
EarthModel sphereWithK(double k) {
    return EarthModel(EarthShape::Sphere, Ellipsoid::wgs84(), R, k);
}
}  // namespace

// Row 1: Bowditch (NGA Pub. 9), "Distance of the horizon": D(nmi) = 1.17 √h(ft); 100 ft → 11.7
// nmi, reproduced by k ≈ 0.17 (from memory; tolerance 1 %).
TEST(EarthModelTest, SeaHorizonDistanceMatchesBowditchTable) {
    EarthModel earth = sphereWithK(0.17);
    double r_eff = earth.effectiveRadius(45, 0);
    for (double h_ft : {10.0, 100.0, 1000.0}) {
        double d_nmi = EarthModel::sphereHorizonArcM(h_ft * kMetresPerFoot, r_eff) / kMetresPerNmi;
        EXPECT_NEAR(d_nmi, 1.17 * std::sqrt(h_ft), 0.01 * 1.17 * std::sqrt(h_ft)) << h_ft << " ft";
    }
    EXPECT_NEAR(EarthModel::sphereHorizonArcM(100 * kMetresPerFoot, r_eff) / kMetresPerNmi, 11.7,
                0.117);
}

// Row 2: The Nautical Almanac dip table: D(′) = 1.76 √h(m) = 0.97 √h(ft), k ≈ 0.165 (from
// memory; tolerance 1 %).
TEST(EarthModelTest, DipOfSeaHorizonMatchesNauticalAlmanac) {
    EarthModel earth = sphereWithK(0.165);
    double r_eff = earth.effectiveRadius(45, 0);
    for (double h : {2.0, 10.0, 30.0, 100.0}) {
        double dip_arcmin = EarthModel::sphereDipDeg(h, r_eff) * 60.0;
        EXPECT_NEAR(dip_arcmin, 1.76 * std::sqrt(h), 0.01 * 1.76 * std::sqrt(h)) << h << " m";
        EXPECT_NEAR(dip_arcmin, 0.97 * std::sqrt(h / kMetresPerFoot),
                    0.01 * 0.97 * std::sqrt(h / kMetresPerFoot));
    }
}

// Row 3: dip from 304.8 m (1000 ft) and 306.93 m (1007 ft) with k = 1/6: 0.51161° and 0.51340°
// (common practice, no source; tolerance 0.0005°).
TEST(EarthModelTest, DipFromThousandFeetWithStandardRefraction) {
    EarthModel earth = sphereWithK(1.0 / 6.0);
    double r_eff = earth.effectiveRadius(45, 0);
    EXPECT_NEAR(EarthModel::sphereDipDeg(304.8, r_eff), 0.5116, 0.0005);
    EXPECT_NEAR(EarthModel::sphereDipDeg(306.93, r_eff), 0.5134, 0.0005);
}

// Row 4: ITU-R effective Earth radius (median factor 4/3, k = 0.25): d(km) = 4.12 √h(m)
// (from memory; tolerance 1 %).
TEST(EarthModelTest, RadioHorizonWithFourThirdsEarth) {
    EarthModel earth = sphereWithK(0.25);
    double r_eff = earth.effectiveRadius(45, 0);
    EXPECT_NEAR(r_eff / R, 4.0 / 3.0, 1e-12);
    for (double h : {10.0, 30.0, 100.0, 300.0}) {
        double d_km = EarthModel::sphereHorizonTangentM(h, r_eff) / 1000.0;
        EXPECT_NEAR(d_km, 4.12 * std::sqrt(h), 0.01 * 4.12 * std::sqrt(h)) << h << " m";
    }
}

// Row 5: Ghilani & Wolf, Elementary Surveying: combined curvature and refraction h = 0.0675 K²
// (K in km, k ≈ 0.14); 1 km → 0.0675 m, 10 km → 6.75 m (from memory).
TEST(EarthModelTest, LevellingCurvatureAndRefractionCorrection) {
    EarthModel earth = sphereWithK(0.14);
    EXPECT_NEAR(earth.drop(1000, 45, 0), 0.0675, 0.0675 * 0.01);
    EXPECT_NEAR(earth.drop(10000, 45, 0), 6.75, 6.75 * 0.01);
    // The exact sphere drop agrees with the parabola to well under a millimetre at 10 km.
    EXPECT_NEAR(EarthModel::sphereDropExact(10000, earth.effectiveRadius(45, 0)),
                earth.drop(10000, 45, 0), 1e-3);
}

// Row 8: Al-Biruni's relation R = h cos θ / (1 − cos θ); a refracted dip returns the effective
// radius R/(1 − k), ≈ 20 % too large at k ≈ 0.17 (published method; exact geometry).
TEST(EarthModelTest, AlBiruniRelationRecoversEffectiveRadius) {
    for (double k : {0.0, 0.13, 0.17}) {
        EarthModel earth = sphereWithK(k);
        double r_eff = earth.effectiveRadius(45, 0);
        double dip = EarthModel::sphereDipDeg(500.0, r_eff);
        EXPECT_NEAR(EarthModel::radiusFromDip(500.0, dip) / r_eff, 1.0, 1e-6) << "k = " << k;
    }
    EarthModel refracted = sphereWithK(0.17);
    double dip = EarthModel::sphereDipDeg(500.0, refracted.effectiveRadius(45, 0));
    EXPECT_NEAR(EarthModel::radiusFromDip(500.0, dip) / R, 1.0 / 0.83, 1e-4);  // ≈ 20 % too large
}

// Row 9: geometric dip θ = arccos(R′/(R′+h)) and tangent distance d = √(2R′h + h²) (exact).
TEST(EarthModelTest, ExactSphereDipAndTangentDistance) {
    double h = 2000.0;
    EXPECT_NEAR(EarthModel::sphereDipDeg(h, R), std::acos(R / (R + h)) * kRadToDeg, 1e-9);
    EXPECT_NEAR(EarthModel::sphereHorizonTangentM(h, R), std::sqrt(2 * R * h + h * h), 1e-6);
    // The elevation angle to the tangent point on the sea equals minus the dip.
    double arc = EarthModel::sphereHorizonArcM(h, R);
    EXPECT_NEAR(EarthModel::sphereElevationAngleDeg(h, 0.0, arc, R),
                -EarthModel::sphereDipDeg(h, R), 1e-9);
}

// Row 10: Euler's radius along an azimuth; WGS84 at 45°: M = 6 367 381.8 m, N = 6 388 838.3 m
// (standard geodesy texts, e.g. Torge, Geodesy; computed from the WGS84 defining constants).
TEST(EarthModelTest, EulerRadiusOnWgs84AtFortyFiveDegrees) {
    EarthModel earth(EarthShape::Ellipsoid, Ellipsoid::wgs84(), R, 0.0);
    EXPECT_NEAR(earth.radiusAlong(45, 0), 6367381.8, 0.1);
    EXPECT_NEAR(earth.radiusAlong(45, 180), 6367381.8, 0.1);
    EXPECT_NEAR(earth.radiusAlong(45, 90), 6388838.3, 0.1);
    double m = 6367381.8, n = 6388838.3, a = 30 * kDegToRad;
    EXPECT_NEAR(earth.radiusAlong(45, 30),
                1.0 / (std::cos(a) * std::cos(a) / m + std::sin(a) * std::sin(a) / n), 0.2);
    // Curvature::drop is the same Euler radius in east/north form.
    Curvature c = EarthModel(EarthShape::Ellipsoid, Ellipsoid::wgs84(), R, 0.13).curvatureAt(45);
    double d = 20000.0;
    EXPECT_NEAR(c.drop(d * std::sin(a), d * std::cos(a)),
                d * d * 0.87 / (2 * earth.radiusAlong(45, 30)), 1e-9);
}

TEST(EarthModelTest, FlatEarthHasNoDrop) {
    EarthModel flat(EarthShape::Flat, Ellipsoid::wgs84(), R, 0.13);
    EXPECT_EQ(flat.drop(50000, 45, 10), 0.0);
    EXPECT_EQ(flat.curvatureAt(45).drop(1e5, 1e5), 0.0);
}

TEST(EarthModelTest, DuctingRefractionIsRefused) {
    EXPECT_THROW(sphereWithK(1.0), UsageError);
    EXPECT_THROW(sphereWithK(1.5), UsageError);
    EXPECT_THROW(sphereWithK(std::nan("")), UsageError);
    EXPECT_THROW(EarthModel(EarthShape::Sphere, Ellipsoid::wgs84(), -5, 0.1), UsageError);
}

// The parabolic drop differs from the exact sphere by 5d⁴/(24R′³): under 0.1 m at 100 km
// (docs/design.md; exact geometry).
TEST(EarthModelTest, ParabolicDropWithinTenCentimetresAtHundredKilometres) {
    EarthModel earth = sphereWithK(0.13);
    double r_eff = earth.effectiveRadius(45, 0);
    double diff = EarthModel::sphereDropExact(1e5, r_eff) - earth.drop(1e5, 45, 0);
    EXPECT_GT(diff, 0.0);
    EXPECT_LT(diff, 0.1);
    EXPECT_NEAR(diff, 5 * std::pow(1e5, 4) / (24 * std::pow(r_eff, 3)), 1e-3);
    // Bulge of a 10 km chord at its middle: d1 d2 / 2R′.
    EXPECT_NEAR(EarthModel::sphereBulgeM(5000, 5000, r_eff), 5000.0 * 5000.0 / (2 * r_eff), 1e-4);
}

// The slope distance between two eyes is the chord of exact geometry: the two points placed in a
// plane through the sphere's centre, their distance by Pythagoras (exact geometry, no source
// needed); and √(d² + Δh²) on a flat Earth.
TEST(EarthModelTest, ChordBetweenTwoEyesIsTheStraightLine) {
    const double R = 6371000.0;
    for (double d : {10.0, 1000.0, 25000.0, 300000.0}) {
        const double h1 = 120.0, h2 = 35.5, th = d / R;
        const double x = (R + h2) * std::sin(th), y = (R + h2) * std::cos(th) - (R + h1);
        EXPECT_NEAR(EarthModel::sphereChordM(h1, h2, d, R), std::hypot(x, y), 1e-6 * d) << d;
    }
    EXPECT_DOUBLE_EQ(EarthModel::sphereChordM(10, 13, 4, std::numeric_limits<double>::infinity()),
                     5.0);
}
