// Where the DEM ends for the horizon (issue 15 item 7): the distance along each direction to the
// DEM's edge — the outermost row and column lines of cell centres, the last terrain the DEM holds
// (docs/horizon.md) — against exact plane geometry computed here on its own, on projected grids
// with square and oblong cells; and the count of cells within reach of the edge against a count
// cell by cell. Plane geometry, no outside source needed.
#include <gtest/gtest.h>

#include <cmath>
#include <cstdint>
#include <limits>

#include "lookfar/core/Units.hpp"
#include "lookfar/earth/EarthModel.hpp"
#include "lookfar/horizon/HorizonEdge.hpp"
#include "lookfar/horizon/HorizonProfile.hpp"

using namespace lookfar;

namespace {

/// A projected grid of `w` × `h` cells of `dx` × `dy` metres (rows run south).
GridGeometry grid(int w, int h, double dx, double dy) {
    return GridGeometry(w, h, {500000.0, dx, 0, 4000000.0, 0, -dy}, false, 1.0, Ellipsoid::wgs84());
}

/// Exact distance, metres, from the centre of (col, row) along azimuth `az_deg` (clockwise from
/// grid north) to the first of the lines x = 0, x = (w − 1)·dx, y = 0, y = (h − 1)·dy through
/// the outermost centres, with x east and y south from the first centre.
double exactEdgeM(int w, int h, double dx, double dy, int col, int row, double az_deg) {
    const double x = col * dx, y = row * dy;
    const double east = std::sin(az_deg * kDegToRad), south = -std::cos(az_deg * kDegToRad);
    double t = std::numeric_limits<double>::infinity();
    if (east > 1e-12)
        t = std::fmin(t, ((w - 1) * dx - x) / east);
    if (east < -1e-12)
        t = std::fmin(t, -x / east);
    if (south > 1e-12)
        t = std::fmin(t, ((h - 1) * dy - y) / south);
    if (south < -1e-12)
        t = std::fmin(t, -y / south);
    return t;
}

}  // namespace

TEST(HorizonEdgeTest, EdgeDistanceIsTheRayToTheBorderOfTheCentres) {
    struct Case {
        int w, h;
        double dx, dy;
        int col, row;
    };
    const Case cases[] = {{101, 81, 30.0, 30.0, 50, 40},  // centre, square cells
                          {101, 81, 30.0, 30.0, 7, 70},   // near the south-west corner
                          {64, 200, 25.0, 10.0, 60, 3},   // oblong cells, near the north-east
                          {40, 40, 5.0, 5.0, 0, 20}};     // on the west edge
    for (const Case& k : cases) {
        const DemEdge edge(grid(k.w, k.h, k.dx, k.dy));
        for (double az = 0; az < 360; az += 7.5) {
            const double want = exactEdgeM(k.w, k.h, k.dx, k.dy, k.col, k.row, az);
            EXPECT_NEAR(edge.distanceM(k.col, k.row, az), want, 1e-6 * want + 1e-9)
                << k.w << "x" << k.h << " cell " << k.col << "," << k.row << " azimuth " << az;
        }
        // The nearest side, along the row and the column.
        const double nearest = std::fmin(std::fmin(k.col * k.dx, (k.w - 1 - k.col) * k.dx),
                                         std::fmin(k.row * k.dy, (k.h - 1 - k.row) * k.dy));
        EXPECT_NEAR(edge.nearestM(k.col, k.row), nearest, 1e-9);
    }
}

TEST(HorizonEdgeTest, ProfileReportsTheEdgeOnlyWithinTheReach) {
    // A tilted plane (any terrain will do: the edge is geometry), 30 m cells, the spot at cell
    // (20, 50) of 121 × 81: 600 m to the west edge, 900 m to the south, 1500 m to the north.
    const int w = 121, h = 81;
    const double cell = 30.0;
    const GridGeometry g = grid(w, h, cell, cell);
    Grid<float> z(w, h, 0.0f);
    for (int r = 0; r < h; ++r)
        for (int c = 0; c < w; ++c)
            z(c, r) = static_cast<float>(100.0 + 0.5 * c + 0.25 * r);
    const EarthModel flat(EarthShape::Flat, Ellipsoid::wgs84(), EarthModel::kMeanRadiusM, 0.0);
    HorizonOptions o;
    o.observer_height_m = 2;
    o.reach_m = 1000;
    const HorizonProfile p = horizonProfile(z, g, flat, 20, 50, 5.0, o);
    int cut = 0;
    double nearest = std::numeric_limits<double>::infinity();
    for (const HorizonDirection& d : p.directions) {
        const double exact = exactEdgeM(w, h, cell, cell, 20, 50, d.azimuth_deg);
        if (exact <= o.reach_m) {
            ++cut;
            nearest = std::fmin(nearest, exact);
            EXPECT_NEAR(d.edge_distance_m, exact, 1e-6) << d.azimuth_deg;
        } else {
            EXPECT_TRUE(std::isnan(d.edge_distance_m)) << d.azimuth_deg << " " << exact;
        }
    }
    EXPECT_GT(cut, 0);
    EXPECT_LT(cut, static_cast<int>(p.directions.size()));
    EXPECT_EQ(p.directions_cut_by_edge, cut);
    EXPECT_NEAR(p.nearest_edge_m, 600.0, 1e-9);  // due west, 20 cells of 30 m
    EXPECT_EQ(p.nearest_edge_azimuth_deg, 270.0);
    EXPECT_NEAR(nearest, 600.0, 1e-9);
    // The shaded spans cover exactly the cut directions' sectors.
    double shaded = 0;
    for (const AzimuthSpan& s : edgeCutSpans(p)) {
        EXPECT_LT(s.from_deg, s.to_deg);
        shaded += s.to_deg - s.from_deg;
    }
    EXPECT_NEAR(shaded, cut * 5.0, 1e-9);
    // Unlimited reach: the DEM ends within it in every direction.
    o.reach_m = std::numeric_limits<double>::infinity();
    const HorizonProfile all = horizonProfile(z, g, flat, 20, 50, 5.0, o);
    EXPECT_EQ(all.directions_cut_by_edge, static_cast<int>(all.directions.size()));
    ASSERT_EQ(edgeCutSpans(all).size(), 1u);
    EXPECT_EQ(edgeCutSpans(all)[0].from_deg, 0.0);
    EXPECT_EQ(edgeCutSpans(all)[0].to_deg, 360.0);
}

TEST(HorizonEdgeTest, CellsWithinReachOfTheEdgeAreCountedAsCellByCell) {
    struct Case {
        int w, h;
        double dx, dy, reach;
    };
    const Case cases[] = {{200, 150, 10.0, 10.0, 250.0},  // a ring 26 cells deep
                          {200, 150, 10.0, 10.0, 245.0},  // 25 cells deep
                          {90, 300, 30.0, 10.0, 600.0},   // oblong cells
                          {50, 50, 10.0, 10.0, 400.0},    // every cell
                          {50, 50, 10.0, 10.0, 1.0}};     // the outermost ring only
    for (const Case& k : cases) {
        std::int64_t want = 0;
        for (int r = 0; r < k.h; ++r) {
            for (int c = 0; c < k.w; ++c) {
                const double d = std::fmin(std::fmin(c * k.dx, (k.w - 1 - c) * k.dx),
                                           std::fmin(r * k.dy, (k.h - 1 - r) * k.dy));
                want += d <= k.reach;
            }
        }
        EXPECT_EQ(cellsWithinReachOfEdge(grid(k.w, k.h, k.dx, k.dy), k.reach), want)
            << k.w << "x" << k.h << " reach " << k.reach;
    }
    EXPECT_EQ(cellsWithinReachOfEdge(grid(30, 20, 10, 10), std::numeric_limits<double>::infinity()),
              600);
}
