// GridGeometry's cell sizes, areas and fast distances against PROJ's geodesic solver
// (docs/references.md row 11: geod_inverse / geod_polygonarea, Karney 2013; reference library).
#include <gtest/gtest.h>
#include <geodesic.h>

#include <cmath>

#include "lookfar/core/GridGeometry.hpp"
#include "lookfar/core/Units.hpp"

using namespace lookfar;

namespace {
GridGeometry geographicGrid(double west, double north, double step_deg, int w, int h) {
    return GridGeometry(w, h, {west, step_deg, 0, north, 0, -step_deg}, true, 1.0,
                        Ellipsoid::wgs84());
}
double geodesicDistance(double lon1, double lat1, double lon2, double lat2, double* az = nullptr) {
    geod_geodesic g;
    geod_init(&g, 6378137.0, 1 / 298.257223563);
    double s12, a1, a2;
    geod_inverse(&g, lat1, lon1, lat2, lon2, &s12, &a1, &a2);
    if (az)
        *az = a1 < 0 ? a1 + 360 : a1;
    return s12;
}
}  // namespace

TEST(GridGeometryTest, ProjectedCellCentresAndSizesInFeet) {
    // 100 US survey feet cells: 30.48006096 m (1200/3937 m per foot, exact).
    GridGeometry g(10, 10, {1000, 100, 0, 5000, 0, -100}, false, kMetresPerUsSurveyFoot,
                   Ellipsoid::wgs84());
    EXPECT_DOUBLE_EQ(g.mapX(0), 1050);
    EXPECT_DOUBLE_EQ(g.mapY(0), 4950);
    EXPECT_DOUBLE_EQ(g.colOf(1050), 0);
    EXPECT_EQ(g.cellColOf(1099.9), 0);
    EXPECT_EQ(g.cellRowOf(4900.1), 0);
    EXPECT_NEAR(g.cellWidthM(3), 30.48006096, 1e-8);
    EXPECT_NEAR(g.cellAreaM2(3), 30.48006096 * 30.48006096, 1e-6);
    EXPECT_NEAR(g.distanceM(0, 0, 3, 4), 5 * 30.48006096, 1e-8);
    EXPECT_NEAR(g.azimuthDeg(0, 0, 1, 0), 90, 1e-12);
    EXPECT_NEAR(g.azimuthDeg(0, 1, 0, 0), 0, 1e-12);
    EXPECT_TRUE(g.containsMap(1000, 5000 - 1e-9));
    EXPECT_FALSE(g.containsMap(2000.1, 4500));
}

// Fast distance and azimuth of the engines: within 0.1 % or 1 m of geod_inverse (docs/design.md).
TEST(GridGeometryTest, FastDistanceWithinTenthOfAPercentOfPROJGeodesic) {
    for (double north : {5.0, 36.7, 47.1, 64.0}) {
        GridGeometry g = geographicGrid(11.0, north, 1.0 / 1200.0, 2400, 2400);  // 2° square
        LocalFrame frame = g.localFrame(1200, 1200);
        for (int r : {0, 300, 1199, 1201, 2000, 2399}) {
            for (int c : {0, 700, 1200, 1900, 2399}) {
                if (r == 1200 && c == 1200)
                    continue;
                double az_ref;
                double ref =
                    geodesicDistance(g.mapX(1200), g.mapY(1200), g.mapX(c), g.mapY(r), &az_ref);
                double fast = g.distanceM(1200, 1200, c, r);
                EXPECT_LE(std::fabs(fast - ref), std::max(1.0, 1e-3 * ref))
                    << "lat " << north << " cell " << c << "," << r;
                EXPECT_NEAR(std::hypot(frame.east(c, r), frame.north(r)), fast, 1e-6);
                double az = g.azimuthDeg(1200, 1200, c, r);
                double daz = std::fabs(az - az_ref);
                EXPECT_LT(std::min(daz, 360 - daz), 0.05) << "azimuth at lat " << north;
            }
        }
    }
}

// True cell area on the ellipsoid against PROJ's geod_polygonarea (reference library).
TEST(GridGeometryTest, GeographicCellAreaMatchesPROJPolygonArea) {
    GridGeometry g = geographicGrid(-84.41, 36.73, 1.0 / 1200.0, 10, 10);
    geod_geodesic geod;
    geod_init(&geod, 6378137.0, 1 / 298.257223563);
    for (int r : {0, 9}) {
        double top = 36.73 - r / 1200.0, bottom = top - 1.0 / 1200.0;
        double lats[] = {top, top, bottom, bottom};
        double lons[] = {-84.41, -84.41 + 1.0 / 1200, -84.41 + 1.0 / 1200, -84.41};
        double area = 0, perimeter = 0;
        geod_polygonarea(&geod, lats, lons, 4, &area, &perimeter);
        EXPECT_NEAR(g.cellAreaM2(r), std::fabs(area), 1e-6 * std::fabs(area));
    }
    // Cells shrink with latitude.
    GridGeometry high = geographicGrid(0, 60.0, 1.0 / 1200.0, 10, 10);
    EXPECT_LT(high.cellAreaM2(0), g.cellAreaM2(0));
    EXPECT_NEAR(high.cellWidthM(0) / high.cellHeightM(0), std::cos(60 * kDegToRad), 0.01);
}
