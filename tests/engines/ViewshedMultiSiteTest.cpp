// Many observers at once (multiViewshed) against one viewshed per site, and the summary
// statistics against sums computed here from the grids and GridGeometry's cell areas.
#include <gtest/gtest.h>
#include <omp.h>

#include <cmath>
#include <cstring>
#include <limits>
#include <vector>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/FractalTerrain.hpp"
#include "lookfar/stats/ViewshedStats.hpp"
#include "lookfar/viewshed/MultiViewshed.hpp"

using namespace lookfar;

namespace {

GridGeometry utmGrid(int w, int h, double cell_m) {
    return GridGeometry(w, h, {400000.0, cell_m, 0, 5600000.0, 0, -cell_m}, false, 1.0,
                        Ellipsoid::wgs84());
}

Grid<float> smoothTerrain(int n, std::uint64_t seed) {
    FractalSpec spec;
    spec.width = spec.height = n;
    spec.seed = seed;
    spec.spectral_exponent = 3.2;  // smoother than the engines' hard case: more is visible
    spec.high_m = 300.0;
    return fractalTerrain(spec);
}

std::vector<Observer> someSites() {
    std::vector<Observer> sites;
    const int cells[][2] = {{20, 30}, {150, 40}, {100, 100}, {30, 170}, {180, 180}};
    double h = 5.0;
    for (const auto& c : cells) {
        Observer o;
        o.name = "site " + std::to_string(sites.size() + 1);
        o.col = c[0];
        o.row = c[1];
        o.height_m = h;
        o.latitude_deg = 50.5;
        h += 7.5;
        sites.push_back(o);
    }
    return sites;
}

}  // namespace

TEST(ViewshedMultiSiteTest, CountIsTheSumOfTheSitesViewshedsAndMarginTheMax) {
    const int n = 200;
    Grid<float> dem = smoothTerrain(n, 9);
    dem(60, 60) = std::numeric_limits<float>::quiet_NaN();  // one no-data cell
    GridGeometry g = utmGrid(n, n, 20.0);
    EarthModel earth;
    std::vector<Observer> sites = someSites();
    ViewshedOptions opt;
    opt.reach_m = 2500.0;
    opt.target_height_m = 2.0;
    opt.want_margin = true;
    MultiViewshedResult multi = multiViewshed(dem, g, earth, sites, opt);

    Grid<int> count(n, n, -1);
    Grid<float> best(n, n, std::numeric_limits<float>::quiet_NaN());
    for (std::size_t i = 0; i < sites.size(); ++i) {
        ViewshedGrids one = computeViewshed(dem, g, earth, sites[i], opt);
        ViewshedStats s = summarizeViewshed(one.visible, one.window, g, sites[i], opt.reach_m);
        EXPECT_EQ(multi.sites[i].visible_cells, s.visible_cells) << sites[i].name;
        EXPECT_EQ(multi.sites[i].evaluated_cells, s.evaluated_cells);
        EXPECT_DOUBLE_EQ(multi.sites[i].farthest_visible_m, s.farthest_visible_m);
        for (int r = 0; r < n; ++r) {
            for (int c = 0; c < n; ++c) {
                const std::uint8_t v = one.visible(c, r);
                if (v == kNoVisibility)
                    continue;
                count(c, r) = std::max(count(c, r), 0) + (v == kVisible);
                if (!(best(c, r) >= one.margin(c, r)))
                    best(c, r) = one.margin(c, r);
            }
        }
    }
    std::int64_t seen = 0;
    for (int r = 0; r < n; ++r) {
        for (int c = 0; c < n; ++c) {
            const int expected = count(c, r);
            ASSERT_EQ(multi.count(c, r), expected < 0 ? kNoCount : expected) << c << "," << r;
            if (expected < 0) {
                ASSERT_TRUE(std::isnan(multi.best_margin(c, r)));
            } else {
                ASSERT_EQ(multi.best_margin(c, r), best(c, r));
                ASSERT_EQ(multi.best_margin(c, r) >= 0, expected > 0);  // seen ⇔ best margin ≥ 0
            }
            seen += expected > 0;
        }
    }
    EXPECT_EQ(multi.count(60, 60), kNoCount);
    CoverageStats cov = summarizeCoverage(multi.count, g, static_cast<int>(sites.size()));
    EXPECT_EQ(cov.cells_seen_by_any, seen);
    ASSERT_EQ(cov.cells_by_count.size(), sites.size() + 1);
    std::int64_t total = 0;
    for (std::int64_t k : cov.cells_by_count)
        total += k;
    EXPECT_EQ(total, cov.evaluated_cells);
    EXPECT_DOUBLE_EQ(cov.area_seen_by_any_m2, seen * 400.0);
    EXPECT_GT(seen, 1000);
}

// Sites in parallel (as many sites as threads) and one after the other (more threads than sites)
// give the same grids.
TEST(ViewshedMultiSiteTest, IdenticalForAnyNumberOfThreads) {
    const int n = 160;
    Grid<float> dem = smoothTerrain(n, 4);
    GridGeometry g = utmGrid(n, n, 20.0);
    EarthModel earth;
    std::vector<Observer> sites = someSites();
    for (Observer& o : sites)
        o.col = std::min(o.col, n - 1), o.row = std::min(o.row, n - 1);
    ViewshedOptions opt;
    opt.want_margin = true;
    const int before = omp_get_max_threads();
    std::vector<MultiViewshedResult> runs;
    for (int t : {1, 2, 8}) {
        omp_set_num_threads(t);
        runs.push_back(multiViewshed(dem, g, earth, sites, opt));
    }
    omp_set_num_threads(before);
    for (std::size_t k = 1; k < runs.size(); ++k) {
        EXPECT_EQ(runs[k].count.cells(), runs[0].count.cells());
        EXPECT_EQ(0, std::memcmp(runs[k].best_margin.data(), runs[0].best_margin.data(),
                                 runs[0].best_margin.size() * sizeof(float)));
        for (std::size_t i = 0; i < sites.size(); ++i)
            EXPECT_EQ(runs[k].sites[i].visible_area_m2, runs[0].sites[i].visible_area_m2);
    }
}

TEST(ViewshedMultiSiteTest, RefusesAngleAndEmptySiteLists) {
    Grid<float> dem(10, 10, 1.0f);
    GridGeometry g = utmGrid(10, 10, 10.0);
    EarthModel earth;
    ViewshedOptions opt;
    EXPECT_THROW(multiViewshed(dem, g, earth, {}, opt), UsageError);
    opt.want_angle = true;
    Observer o;
    EXPECT_THROW(multiViewshed(dem, g, earth, {o}, opt), UsageError);
}

// Geographic grid: areas are GridGeometry::cellAreaM2 per row (ellipsoidal, shrinking with
// latitude; checked against PROJ's geod_polygonarea in GridGeometryTest), distances the fast
// distance; the bands split the visible area.
TEST(ViewshedStatsTest, AreasFollowTheRowsOfAGeographicGrid) {
    const int w = 40, h = 30;
    GridGeometry g(w, h, {11.0, 1.0 / 120.0, 0, 60.0, 0, -1.0 / 120.0}, true, 1.0,
                   Ellipsoid::wgs84());
    Grid<std::uint8_t> vis(w, h, kHidden);
    Observer o;
    o.col = 0;
    o.row = 0;
    double visible_area = 0, evaluated_area = 0, farthest = 0;
    const LocalFrame frame = g.localFrame(0, 0);
    for (int r = 0; r < h; ++r) {
        for (int c = 0; c < w; ++c) {
            if ((c + r) % 7 == 0) {
                vis(c, r) = kNoVisibility;
                continue;
            }
            evaluated_area += g.cellAreaM2(r);
            if ((c * 3 + r) % 4 == 0) {
                vis(c, r) = kVisible;
                visible_area += g.cellAreaM2(r);
                farthest = std::max(farthest, std::hypot(frame.east(c, r), frame.north(r)));
            }
        }
    }
    ViewshedStats s = summarizeViewshed(vis, CellWindow{0, 0, w, h}, g, o,
                                        std::numeric_limits<double>::infinity());
    EXPECT_NEAR(s.visible_area_m2, visible_area, 1e-6 * visible_area);
    EXPECT_NEAR(s.evaluated_area_m2, evaluated_area, 1e-6 * evaluated_area);
    EXPECT_NEAR(s.visible_fraction, visible_area / evaluated_area, 1e-12);
    EXPECT_NEAR(s.farthest_visible_m, farthest, 1e-6);
    double bands = 0;
    for (const DistanceBand& b : s.bands)
        bands += b.visible_area_m2;
    EXPECT_NEAR(bands, s.visible_area_m2, 1e-6 * visible_area);
    // 30″ cells at 60° N: about 463 m × 927 m; the grid spans about 18.5 km × 27.8 km.
    ASSERT_EQ(s.bands.size(), 6u);
    EXPECT_EQ(s.bands[3].label, "10-25 km");
    EXPECT_GT(s.bands[3].visible_area_m2, 0.0);
    EXPECT_EQ(s.bands[5].label, ">50 km");
    EXPECT_EQ(s.bands[5].visible_area_m2, 0.0);  // nothing beyond 50 km
    EXPECT_LT(g.cellAreaM2(h - 1), g.cellAreaM2(0) * 1.01);
    EXPECT_GT(g.cellAreaM2(h - 1), g.cellAreaM2(0));  // cells grow towards the equator
}
