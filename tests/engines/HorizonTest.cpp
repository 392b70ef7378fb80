// The horizon engines (HorizonScan) against outside values: docs/references.md rows in the
// comments, and analytic terrains whose horizon is exact geometry. Every check runs both the
// reference engine and the fast one.
#include <geodesic.h>
#include <gtest/gtest.h>

#include <cmath>
#include <limits>
#include <vector>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Units.hpp"
#include "lookfar/earth/EarthModel.hpp"
#include "lookfar/horizon/HorizonProfile.hpp"
#include "lookfar/horizon/HorizonScan.hpp"

using namespace lookfar;

namespace {

constexpr double R = EarthModel::kMeanRadiusM;
constexpr double kMetresPerNmi = 1852.0;

GridGeometry utmGrid(int w, int h, double cell_m) {
    return GridGeometry(w, h, {400000.0, cell_m, 0, 5600000.0, 0, -cell_m}, false, 1.0,
                        Ellipsoid::wgs84());
}
EarthModel sphere(double k) {
    return EarthModel(EarthShape::Sphere, Ellipsoid::wgs84(), R, k);
}
EarthModel flat() {
    return EarthModel(EarthShape::Flat, Ellipsoid::wgs84(), R, 0.0);
}

/// A flat sea at 0 m with one raised cell (a sea stack) of height h at the centre: from its top
/// (observer height 0) every sample in every direction is sea.
Grid<float> seaWithStack(int size, double h) {
    Grid<float> z(size, size, 0.0f);
    z(size / 2, size / 2) = static_cast<float>(h);
    return z;
}

HorizonOptions options(int directions, double eye_m, HorizonMethod method) {
    HorizonOptions o;
    o.directions = directions;
    o.observer_height_m = eye_m;
    o.method = method;
    o.want_svf = true;
    o.want_dip = true;
    return o;
}

struct Engines {
    HorizonGrids fast, reference;
};
/// Both engines over the whole grid (for grids of a few hundred cells a side).
Engines runBoth(const Grid<float>& z, const GridGeometry& g, const EarthModel& earth,
                HorizonOptions o) {
    Engines e;
    o.method = HorizonMethod::Fast;
    e.fast = HorizonScan(z, g, earth, o).runInMemory();
    o.method = HorizonMethod::Reference;
    e.reference = HorizonScan(z, g, earth, o).runInMemory();
    return e;
}

const char* name(int engine) {
    return engine == 0 ? "fast" : "reference";
}
const HorizonGrids& pick(const Engines& e, int engine) {
    return engine == 0 ? e.fast : e.reference;
}

/// The horizon of one cell in every direction, from either engine: the fast engine runs over the
/// whole grid, the reference only for that cell (large sea grids).
struct CellHorizon {
    std::vector<double> angle_deg, distance_m;
    double dip_deg = 0, svf = 0;
};
CellHorizon cellHorizon(const Grid<float>& z, const GridGeometry& g, const EarthModel& earth,
                        HorizonOptions o, int engine, int col, int row) {
    CellHorizon h;
    o.want_svf = o.want_dip = true;
    o.method = engine == 0 ? HorizonMethod::Fast : HorizonMethod::Reference;
    const HorizonScan scan(z, g, earth, o);
    if (engine == 0) {
        const HorizonGrids r = scan.runInMemory();
        for (int i = 0; i < o.directions; ++i) {
            h.angle_deg.push_back(r.angle_deg[i](col, row));
            h.distance_m.push_back(r.distance_m[i](col, row));
        }
        h.dip_deg = r.summary.dip(col, row);
        h.svf = r.summary.svf(col, row);
        return h;
    }
    double lowest = 90, sin_sum = 0;
    for (int i = 0; i < o.directions; ++i) {
        const HorizonSample s = scan.referenceAt(col, row, horizonAzimuthDeg(i, o.directions));
        h.angle_deg.push_back(s.angle_deg);
        h.distance_m.push_back(s.distance_m);
        lowest = std::fmin(lowest, s.angle_deg);
        sin_sum += std::sin(std::fmax(s.angle_deg, 0.0) * kDegToRad);
    }
    h.dip_deg = -lowest;
    h.svf = 1.0 - sin_sum / o.directions;
    return h;
}

}  // namespace

// Row 2: The Nautical Almanac, dip of the sea horizon D(′) = 1.76 √h(m), reproduced by
// k ≈ 0.165 (from memory; tolerance 1 %). The eye is on a sea stack h metres high.
TEST(HorizonTest, DipAtASeaStackMatchesNauticalAlmanac) {
    const EarthModel earth = sphere(0.165);
    for (double h : {10.0, 30.0, 100.0}) {
        // 200 m cells, 501² cells: the sea horizon (≤ 39 km) lies inside the grid all round.
        const Grid<float> z = seaWithStack(501, h);
        const double almanac_arcmin = 1.76 * std::sqrt(h);
        for (int engine = 0; engine < 2; ++engine) {
            const CellHorizon c = cellHorizon(z, utmGrid(501, 501, 200), earth, options(8, 0.0, {}),
                                              engine, 250, 250);
            EXPECT_NEAR(c.dip_deg * 60.0, almanac_arcmin, 0.01 * almanac_arcmin)
                << name(engine) << " h = " << h;
            for (int i = 0; i < 8; ++i) {
                EXPECT_NEAR(-c.angle_deg[i] * 60.0, almanac_arcmin, 0.01 * almanac_arcmin)
                    << name(engine) << " h = " << h << " direction " << i;
            }
        }
    }
}

// Row 1: Bowditch (NGA Pub. 9), "Distance of the horizon", D(nmi) = 1.17 √h(ft), reproduced by
// k ≈ 0.17 (from memory; tolerance 1 %). Over a flat sea the horizon-defining sample is the sea
// horizon (the tangent point).
TEST(HorizonTest, SeaHorizonDistanceMatchesBowditch) {
    const EarthModel earth = sphere(0.17);
    for (double h_ft : {30.0, 100.0}) {
        const double h = h_ft * kMetresPerFoot;
        // 100 m cells, 501² cells: 25 km to the nearest edge, beyond the 21.7 km of 100 ft.
        const Grid<float> z = seaWithStack(501, h);
        const double bowditch_m = 1.17 * std::sqrt(h_ft) * kMetresPerNmi;
        for (int engine = 0; engine < 2; ++engine) {
            const CellHorizon c = cellHorizon(z, utmGrid(501, 501, 100), earth, options(8, 0.0, {}),
                                              engine, 250, 250);
            for (int i = 0; i < 8; ++i) {
                EXPECT_NEAR(c.distance_m[i], bowditch_m, 0.01 * bowditch_m)
                    << name(engine) << " " << h_ft << " ft, direction " << i;
            }
        }
    }
}

// Row 4: ITU-R recommendations on the effective Earth radius, 4/3-Earth atmosphere (k = 0.25):
// radio horizon d(km) = 4.12 √h(m) over a smooth Earth (from memory; tolerance 1 %).
TEST(HorizonTest, RadioHorizonWithFourThirdsEarth) {
    const double h = 30.0;
    const Grid<float> z = seaWithStack(501, h);
    const double itu_m = 4.12 * std::sqrt(h) * 1000.0;  // 22.6 km
    for (int engine = 0; engine < 2; ++engine) {
        const CellHorizon c = cellHorizon(z, utmGrid(501, 501, 100), sphere(0.25),
                                          options(4, 0.0, {}), engine, 250, 250);
        for (int i = 0; i < 4; ++i)
            EXPECT_NEAR(c.distance_m[i], itu_m, 0.01 * itu_m) << name(engine) << " " << i;
    }
}

// Row 3: dip from 304.8 m (1000 ft) and 306.93 m (1007 ft) with k = 1/6: 0.5116° and 0.5134°
// (common practice, no source; tolerance 0.0005°).
TEST(HorizonTest, DipFromThousandFeetWithStandardRefraction) {
    const EarthModel earth = sphere(1.0 / 6.0);
    const double heights[] = {304.8, 306.93};
    const double expected[] = {0.5116, 0.5134};
    for (int k = 0; k < 2; ++k) {
        // 400 m cells, 401² cells: 80 km to the edge, beyond the 68 km sea horizon.
        const Grid<float> z = seaWithStack(401, heights[k]);
        for (int engine = 0; engine < 2; ++engine) {
            const CellHorizon c = cellHorizon(z, utmGrid(401, 401, 400), earth, options(8, 0.0, {}),
                                              engine, 200, 200);
            EXPECT_NEAR(c.dip_deg, expected[k], 0.0005)
                << name(engine) << " " << heights[k] << " m";
        }
    }
}

// Row 8: Al-Biruni's relation R = h cos θ / (1 − cos θ) applied to the computed dip θ returns the
// effective radius R/(1 − k), not R (≈ 20 % larger at k ≈ 0.17); exact geometry, tolerance 0.5 %.
TEST(HorizonTest, AlBiruniRecoversTheEffectiveRadiusFromTheComputedDip) {
    for (double k : {0.0, 0.13, 0.17}) {
        const double h = 120.0;
        const Grid<float> z = seaWithStack(501, h);
        for (int engine = 0; engine < 2; ++engine) {
            const CellHorizon c = cellHorizon(z, utmGrid(501, 501, 200), sphere(k),
                                              options(4, 0.0, {}), engine, 250, 250);
            const double r = EarthModel::radiusFromDip(h, c.dip_deg);
            EXPECT_NEAR(r / (R / (1.0 - k)), 1.0, 0.005) << name(engine) << " k = " << k;
        }
    }
}

// Analytic terrain (exact geometry): on a plane rising east at atan(0.2) = 11.3099°, the horizon
// of an eye on the ground in azimuth α is the plane's slope in that direction, atan(0.2 sin α)
// (tilted_plane.tif's geometry: z = 2·col + 1 m on 10 m cells). Over a curved Earth the nearest
// sample (≥ 10 m away) sits c·d ≈ 4e-5° lower, within the 1e-4° tolerance.
TEST(HorizonTest, TiltedPlaneUpSlopeHorizonIsTheSlope) {
    Grid<float> z(201, 201);
    for (int r = 0; r < 201; ++r) {
        for (int c = 0; c < 201; ++c)
            z(c, r) = 2.0f * c + 1.0f;
    }
    const EarthModel earth(EarthShape::Ellipsoid, Ellipsoid::wgs84(), R, 0.13);
    for (int engine = 0; engine < 2; ++engine) {
        const CellHorizon c =
            cellHorizon(z, utmGrid(201, 201, 10), earth, options(24, 0.0, {}), engine, 100, 100);
        EXPECT_NEAR(c.angle_deg[6], 11.3099, 1e-4) << name(engine);
        for (int i = 0; i < 24; ++i) {
            const double a = horizonAzimuthDeg(i, 24) * kDegToRad;
            EXPECT_NEAR(c.angle_deg[i], std::atan(0.2 * std::sin(a)) * kRadToDeg, 1e-4)
                << name(engine) << " azimuth " << horizonAzimuthDeg(i, 24);
        }
    }
}

// Analytic terrain (exact geometry): a wall H = 50 m high a = 600 m east of an eye on flat
// ground (wall.tif's geometry) stands at atan(H sin α / a) in azimuth α, reached a / sin α away,
// on a flat Earth. Azimuths from 40° to 140° reach the wall inside the grid.
TEST(HorizonTest, WallStandsAtAtanHeightOverDistance) {
    Grid<float> z(401, 201, 0.0f);
    for (int r = 0; r < 201; ++r)
        z(100, r) = 50.0f;
    for (int engine = 0; engine < 2; ++engine) {
        const CellHorizon c =
            cellHorizon(z, utmGrid(401, 201, 10), flat(), options(36, 0.0, {}), engine, 40, 100);
        for (int i = 4; i <= 14; ++i) {
            const double az = horizonAzimuthDeg(i, 36), s = std::sin(az * kDegToRad);
            EXPECT_NEAR(c.angle_deg[i], std::atan(50.0 * s / 600.0) * kRadToDeg, 1e-4)
                << name(engine) << " azimuth " << az;
            EXPECT_NEAR(c.distance_m[i], 600.0 / s, 0.01) << name(engine) << " azimuth " << az;
        }
    }
}

// Row 12: Zakšek, Oštir & Kokalj (2011), SVF = 1 − (1/n) Σ sin γᵢ; in a long symmetric V-valley
// with side slope β the horizon from the floor is γ(θ) = atan(tan β |sin θ|), θ from the axis
// (v_valley.tif's geometry: β = 30°, 10 m cells, eye on the floor). Exact on a flat Earth
// (tolerance 1e-5); over a curved one "a hair lower" (tolerance 1e-3).
TEST(HorizonTest, VValleySkyViewFactorMatchesZaksekFormula) {
    Grid<float> z(301, 301);
    const double tan_b = std::tan(30.0 * kDegToRad);
    for (int r = 0; r < 301; ++r) {
        for (int c = 0; c < 301; ++c)
            z(c, r) = static_cast<float>(10.0 * std::abs(c - 150) * tan_b);
    }
    const int n = 32;
    double sum = 0;
    for (int i = 0; i < n; ++i) {
        const double g =
            std::atan(tan_b * std::fabs(std::sin(horizonAzimuthDeg(i, n) * kDegToRad)));
        sum += std::sin(g);
    }
    const double svf = 1.0 - sum / n;
    const EarthModel curved(EarthShape::Ellipsoid, Ellipsoid::wgs84(), R, 0.13);
    for (int curve = 0; curve < 2; ++curve) {
        for (int engine = 0; engine < 2; ++engine) {
            const CellHorizon c = cellHorizon(z, utmGrid(301, 301, 10), curve ? curved : flat(),
                                              options(n, 0.0, {}), engine, 150, 150);
            EXPECT_NEAR(c.svf, svf, curve ? 1e-3 : 1e-5)
                << name(engine) << (curve ? " curved" : " flat");
        }
    }
}

// Exact geometry on a geographic grid: azimuths are measured on the ground. At 60° N a 3″ cell is
// 46 m east-west and 93 m north-south, so true north-east is not the pixel diagonal (26.6°). A
// north-south wall H = 40 m high, a due east of the eye, stands at atan(H sin α / a) in azimuth
// α on a flat Earth; `a` is checked against PROJ's geodesic solver (row 11, Karney 2013).
TEST(HorizonTest, GeographicAzimuthsAreMeasuredOnTheGround) {
    const int w = 301, h = 301;
    const double step = 1.0 / 1200.0;
    const GridGeometry g(w, h, {10.0, step, 0, 60.125, 0, -step}, true, 1.0, Ellipsoid::wgs84());
    Grid<float> z(w, h, 0.0f);
    for (int r = 0; r < h; ++r)
        z(200, r) = 40.0f;
    geod_geodesic geod;
    geod_init(&geod, 6378137.0, 1.0 / 298.257223563);
    double a_m, az1, az2;
    geod_inverse(&geod, g.mapY(150), g.mapX(150), g.mapY(150), g.mapX(200), &a_m, &az1, &az2);
    HorizonOptions o = options(8, 0.0, {});
    o.latitude_deg = g.mapY(150);
    for (int engine = 0; engine < 2; ++engine) {
        const CellHorizon c = cellHorizon(z, g, flat(), o, engine, 150, 150);
        for (int i : {1, 2, 3}) {  // 45°, 90°, 135°
            const double s = std::sin(horizonAzimuthDeg(i, 8) * kDegToRad);
            EXPECT_NEAR(c.angle_deg[i], std::atan(40.0 * s / a_m) * kRadToDeg, 0.01)
                << name(engine) << " azimuth " << horizonAzimuthDeg(i, 8);
            // The engines' fast distance: within 0.1 % of the ellipsoidal geodesic
            // (docs/design.md).
            EXPECT_NEAR(c.distance_m[i], a_m / s, 0.001 * a_m / s)
                << name(engine) << " azimuth " << horizonAzimuthDeg(i, 8);
        }
    }
}

// docs/design.md no-data rules (common practice, no source): a direction with no terrain sample
// inside the DEM is no data and is left out of the sky-view factor and the dip; a cell on no data
// is no data; no-data samples never block.
TEST(HorizonTest, NoDataDirectionsAreLeftOutOfSkyViewFactorAndDip) {
    Grid<float> z(60, 40, 10.0f);
    const float nan = std::numeric_limits<float>::quiet_NaN();
    for (int r = 15; r < 25; ++r) {
        for (int c = 30; c < 40; ++c)
            z(c, r) = nan;
    }
    z(45, 20) = 100.0f;  // a tower just beyond the hole, east of the eye at (20, 20)
    const EarthModel earth(EarthShape::Ellipsoid, Ellipsoid::wgs84(), R, 0.13);
    const Engines e = runBoth(z, utmGrid(60, 40, 10), earth, options(8, 1.7, {}));
    for (int engine = 0; engine < 2; ++engine) {
        const HorizonGrids& r = pick(e, engine);
        // Corner cell: north (0) and west (6) leave the grid at once.
        EXPECT_TRUE(std::isnan(r.angle_deg[0](0, 0))) << name(engine);
        EXPECT_TRUE(std::isnan(r.angle_deg[6](0, 0))) << name(engine);
        EXPECT_FALSE(std::isnan(r.angle_deg[2](0, 0))) << name(engine);
        // Its SVF and dip come from the directions with data only.
        double sin_sum = 0, lowest = 90;
        int valid = 0;
        for (int i = 0; i < 8; ++i) {
            const float a = r.angle_deg[i](0, 0);
            if (std::isnan(a))
                continue;
            ++valid;
            sin_sum += std::sin(std::fmax(a, 0.0f) * kDegToRad);
            lowest = std::fmin(lowest, a);
        }
        EXPECT_EQ(valid, 3) << name(engine);  // east, south-east, south
        EXPECT_NEAR(r.summary.svf(0, 0), 1.0 - sin_sum / valid, 1e-6) << name(engine);
        EXPECT_NEAR(r.summary.dip(0, 0), -lowest, 1e-5) << name(engine);
        // A cell in the hole has no data at all.
        EXPECT_TRUE(std::isnan(r.angle_deg[2](35, 20))) << name(engine);
        EXPECT_TRUE(std::isnan(r.summary.svf(35, 20))) << name(engine);
        EXPECT_TRUE(std::isnan(r.summary.dip(35, 20))) << name(engine);
        // The hole does not block: the tower behind it is the eastern horizon.
        EXPECT_NEAR(r.distance_m[2](20, 20), 250.0, 1e-6) << name(engine);
    }
}

// Exact geometry: with a reach the horizon is the highest sample within it. On a flat sea seen
// from a 100 m stack (sea horizon at 41 km for k = 0.13) a reach of 10 km ends the view before
// the sea horizon: the horizon is the last sample within 10 km, at
// −atan(h/d + c d) with d = 10 km (parabolic drop c d², c = (1 − k)/2R).
TEST(HorizonTest, ReachEndsTheHorizonBeforeTheSeaHorizon) {
    const double h = 100.0, k = 0.13, reach = 10000.0;
    const Grid<float> z = seaWithStack(301, h);
    HorizonOptions o = options(4, 0.0, {});
    o.reach_m = reach;
    const double c = (1 - k) / (2 * R);
    const double expected = -std::atan(h / reach + c * reach) * kRadToDeg;
    for (int engine = 0; engine < 2; ++engine) {
        const CellHorizon ch =
            cellHorizon(z, utmGrid(301, 301, 100), sphere(k), o, engine, 150, 150);
        for (int i = 0; i < 4; ++i) {
            EXPECT_NEAR(ch.angle_deg[i], expected, 1e-6) << name(engine);
            EXPECT_NEAR(ch.distance_m[i], reach, 1e-6) << name(engine);
        }
    }
}

// Option ranges of the issue (common practice, no source): 1 ≤ N ≤ 3600, reach > 0, step in
// [0.05°, 90°]; values outside are usage errors, NaN included.
TEST(HorizonTest, OptionsOutOfRangeAreUsageErrors) {
    const Grid<float> z(10, 10, 0.0f);
    const GridGeometry g = utmGrid(10, 10, 10);
    const EarthModel earth = sphere(0.13);
    for (int n : {0, -1, 3601}) {
        HorizonOptions o;
        o.directions = n;
        EXPECT_THROW(HorizonScan(z, g, earth, o), UsageError) << n;
    }
    for (int n : {1, 3600}) {
        HorizonOptions o;
        o.directions = n;
        EXPECT_NO_THROW(HorizonScan(z, g, earth, o)) << n;
    }
    for (double reach : {0.0, -5.0, std::nan("")}) {
        HorizonOptions o;
        o.reach_m = reach;
        EXPECT_THROW(HorizonScan(z, g, earth, o), UsageError) << reach;
    }
    for (double step : {0.0, -1.0, 0.04, 90.5, std::nan("")}) {
        EXPECT_THROW(horizonProfile(z, g, earth, 5, 5, step, HorizonOptions{}), UsageError) << step;
    }
    EXPECT_NO_THROW(horizonProfile(z, g, earth, 5, 5, 90.0, HorizonOptions{}));
}

// The one-spot profile (exact geometry): seen from a 100 m stack over a flat sea every direction
// is open and the terrain horizon is the sea horizon, whose dip the profile also reports from the
// exact sphere formula (row 9: θ = arccos(R′/(R′ + h))); the parabolic engines agree to 1e-4°.
TEST(HorizonTest, ProfileOfASeaStackIsOpenAllRound) {
    const double h = 100.0, k = 0.13;
    const Grid<float> z = seaWithStack(501, h);
    HorizonOptions o;
    o.observer_height_m = 0.0;
    const HorizonProfile p = horizonProfile(z, utmGrid(501, 501, 200), sphere(k), 250, 250, 2.5, o);
    ASSERT_EQ(p.directions.size(), 144u);
    EXPECT_EQ(p.directions_with_data, 144);
    ASSERT_EQ(p.open_sectors.size(), 1u);
    EXPECT_DOUBLE_EQ(p.open_sectors[0].width_deg, 360.0);
    const double theta = std::acos((R / (1 - k)) / (R / (1 - k) + h)) * kRadToDeg;
    EXPECT_NEAR(p.sea_horizon_dip_deg, theta, 1e-9);
    EXPECT_NEAR(p.dip_deg, theta, 1e-4);
    EXPECT_NEAR(p.mean_angle_deg, -theta, 1e-4);
    EXPECT_DOUBLE_EQ(p.sky_view_factor, 1.0);
}
