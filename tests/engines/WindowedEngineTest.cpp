// Work limited by a reach needs only the DEM cells within reach (issue 13): every engine run on
// the window read around its observers must give the same bits as on the whole DEM. The whole
// DEM is the reference here (common practice, no source: a refactor keeps its results).
// Rasters: demo_coast.tif (UTM, 25 m cells) and geographic_hills.tif (lat/lon, 1/1200°, origin
// 47.1° N, not exact in binary: the case where a shifted origin would change the last bits).
#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <cstring>
#include <string>
#include <type_traits>
#include <vector>

#include "../support/CliRunner.hpp"
#include "lookfar/earth/EarthModel.hpp"
#include "lookfar/horizon/HorizonProfile.hpp"
#include "lookfar/io/Crs.hpp"
#include "lookfar/io/Dem.hpp"
#include "lookfar/link/Intervisibility.hpp"
#include "lookfar/link/PathProfile.hpp"
#include "lookfar/siting/SiteSelection.hpp"
#include "lookfar/viewshed/MultiViewshed.hpp"
#include "lookfar/stats/ViewshedStats.hpp"
#include "lookfar/viewshed/Viewshed.hpp"

using namespace lookfar;
using namespace lookfar::testing;

namespace {

/// Equal bits, or both NaN (no data).
template <typename T>
bool sameBits(T a, T b) {
    if constexpr (std::is_floating_point_v<T>) {
        if (std::isnan(a) && std::isnan(b))
            return true;
    }
    return std::memcmp(&a, &b, sizeof a) == 0;
}

struct Case {
    std::string raster;
    double reach_m;
    std::vector<std::pair<int, int>> cells;  ///< observers (col, row), inside, away from edges
};

std::vector<Case> cases() {
    return {{"demo_coast.tif", 2500.0, {{200, 150}, {260, 180}, {230, 120}}},
            {"geographic_hills.tif", 3000.0, {{100, 90}, {130, 110}, {120, 80}}}};
}

/// Everything the engines get for one case, on the whole DEM and on the window read.
struct WindowRun {
    Dem whole, win;
    CellWindow window;
    EarthModel earth;
    std::vector<Observer> obs_whole, obs_win;
};

WindowRun prepareWindowRun(const Case& c) {
    WindowRun s;
    s.whole = readDem(testRaster(c.raster));
    s.earth = EarthModel(EarthShape::Ellipsoid, s.whole.crs.ellipsoid, 6371008.8,
                         EarthModel::kDefaultRefraction);
    const LonLatOf ll(s.whole.crs.wkt);
    const GridGeometry& g = s.whole.geometry;
    int c0 = g.width(), r0 = g.height(), c1 = -1, r1 = -1;
    for (auto [col, row] : c.cells) {
        Observer o;
        o.name = "site" + std::to_string(s.obs_whole.size());
        o.col = col;
        o.row = row;
        o.height_m = 10.0 + s.obs_whole.size();
        o.latitude_deg = ll.apply({g.mapX(col), g.mapY(row)}).y;
        s.obs_whole.push_back(o);
        const CellWindow w = reachWindow(g, o, c.reach_m);
        c0 = std::min(c0, w.col0 - 1);
        r0 = std::min(r0, w.row0 - 1);
        c1 = std::max(c1, w.col0 + w.width);
        r1 = std::max(r1, w.row0 + w.height);
    }
    s.window = {c0, r0, c1 - c0 + 1, r1 - r0 + 1};
    // The window must lie inside the DEM, away from its edges, for the test to mean anything.
    EXPECT_GT(c0, 0);
    EXPECT_GT(r0, 0);
    EXPECT_LT(c1, g.width() - 1);
    EXPECT_LT(r1, g.height() - 1);
    DemReadOptions read;
    read.win_col = c0;
    read.win_row = r0;
    read.win_width = s.window.width;
    read.win_height = s.window.height;
    s.win = readDem(testRaster(c.raster), read);
    for (Observer o : s.obs_whole) {
        o.col -= c0;
        o.row -= r0;
        s.obs_win.push_back(o);
    }
    return s;
}

/// Cell (c, r) of the whole-DEM grid `whole` against the window grid `win` (offset `w`): the same
/// bits inside the window, `outside` (no data) beyond it.
template <typename T>
void expectWindowOf(const Grid<T>& whole, const Grid<T>& win, const CellWindow& w, T outside,
                    const std::string& what) {
    ASSERT_EQ(win.width(), w.width) << what;
    ASSERT_EQ(win.height(), w.height) << what;
    int differ = 0;
    for (int r = 0; r < whole.height(); ++r) {
        for (int c = 0; c < whole.width(); ++c) {
            const T expected = w.contains(c, r) ? win(c - w.col0, r - w.row0) : outside;
            differ += sameBits(whole(c, r), expected) ? 0 : 1;
        }
    }
    EXPECT_EQ(differ, 0) << what << ": cells that differ";
}

}  // namespace

TEST(WindowedEngineTest, WindowReadsGiveTheCellsOfTheWholeRead) {
    for (const Case& c : cases()) {
        const WindowRun s = prepareWindowRun(c);
        int differ = 0;
        for (int r = 0; r < s.window.height; ++r)
            for (int col = 0; col < s.window.width; ++col)
                differ +=
                    sameBits(s.win.z(col, r), s.whole.z(s.window.col0 + col, s.window.row0 + r))
                        ? 0
                        : 1;
        EXPECT_EQ(differ, 0) << c.raster;
        // The window's geometry gives the same coordinates, areas and distances, bit for bit.
        const GridGeometry &gw = s.win.geometry, &g = s.whole.geometry;
        for (int r = 0; r < s.window.height; r += 7) {
            const int R = s.window.row0 + r;
            EXPECT_TRUE(sameBits(gw.mapY(r), g.mapY(R))) << c.raster << " row " << r;
            EXPECT_TRUE(sameBits(gw.cellAreaM2(r), g.cellAreaM2(R))) << c.raster << " row " << r;
            EXPECT_TRUE(sameBits(gw.cellWidthM(r), g.cellWidthM(R))) << c.raster << " row " << r;
            EXPECT_TRUE(sameBits(gw.mapX(r + 0.25), g.mapX(s.window.col0 + r + 0.25)));
        }
        EXPECT_EQ(gw.cellColOf(g.mapX(s.window.col0 + 3)), 3);
        EXPECT_EQ(gw.cellRowOf(g.mapY(s.window.row0 + 5)), 5);
    }
}

TEST(WindowedEngineTest, ViewshedOnTheWindowIsTheWholeDemViewshed) {
    for (const Case& c : cases()) {
        const WindowRun s = prepareWindowRun(c);
        for (std::size_t i = 0; i < s.obs_whole.size(); ++i)
            for (ViewshedMethod m : {ViewshedMethod::Fast, ViewshedMethod::Reference}) {
                ViewshedOptions opt;
                opt.reach_m = c.reach_m;
                opt.target_height_m = 2.0;
                opt.want_margin = opt.want_angle = true;
                opt.method = m;
                const ViewshedGrids a =
                    computeViewshed(s.whole.z, s.whole.geometry, s.earth, s.obs_whole[i], opt);
                const ViewshedGrids b =
                    computeViewshed(s.win.z, s.win.geometry, s.earth, s.obs_win[i], opt);
                const std::string what = c.raster + " observer " + std::to_string(i) +
                                         (m == ViewshedMethod::Fast ? " fast" : " reference");
                const float nan = std::nanf("");
                expectWindowOf(a.visible, b.visible, s.window, kNoVisibility, what + " visible");
                expectWindowOf(a.margin, b.margin, s.window, nan, what + " margin");
                expectWindowOf(a.angle, b.angle, s.window, nan, what + " angle");
            }
    }
}

TEST(WindowedEngineTest, SitesOnTheWindowAreTheWholeDemSites) {
    for (const Case& c : cases()) {
        const WindowRun s = prepareWindowRun(c);
        ViewshedOptions opt;
        opt.reach_m = c.reach_m;
        opt.want_margin = true;
        const MultiViewshedResult a =
            multiViewshed(s.whole.z, s.whole.geometry, s.earth, s.obs_whole, opt);
        const MultiViewshedResult b =
            multiViewshed(s.win.z, s.win.geometry, s.earth, s.obs_win, opt);
        expectWindowOf(a.count, b.count, s.window, kNoCount, c.raster + " count");
        expectWindowOf(a.best_margin, b.best_margin, s.window, std::nanf(""), c.raster + " margin");
        ASSERT_EQ(a.sites.size(), b.sites.size());
        for (std::size_t i = 0; i < a.sites.size(); ++i) {
            EXPECT_EQ(a.sites[i].visible_cells, b.sites[i].visible_cells);
            EXPECT_TRUE(sameBits(a.sites[i].visible_area_m2, b.sites[i].visible_area_m2));
            EXPECT_TRUE(sameBits(a.sites[i].evaluated_area_m2, b.sites[i].evaluated_area_m2));
            EXPECT_TRUE(sameBits(a.sites[i].farthest_visible_m, b.sites[i].farthest_visible_m));
        }
    }
}

TEST(WindowedEngineTest, SelectionOnTheWindowIsTheWholeDemSelection) {
    for (const Case& c : cases()) {
        const WindowRun s = prepareWindowRun(c);
        SiteSelectionOptions opt;
        opt.max_sites = 2;
        opt.reach_m = c.reach_m;
        const SiteSelectionResult a =
            selectSites(s.whole.z, s.whole.geometry, s.earth, s.obs_whole, opt);
        const SiteSelectionResult b = selectSites(s.win.z, s.win.geometry, s.earth, s.obs_win, opt);
        expectWindowOf(a.count, b.count, s.window, kCountNoData, c.raster + " count");
        ASSERT_EQ(a.ranked.size(), b.ranked.size());
        for (std::size_t k = 0; k < a.ranked.size(); ++k) {
            EXPECT_EQ(a.ranked[k].candidate, b.ranked[k].candidate);
            EXPECT_TRUE(sameBits(a.ranked[k].cumulative_area_m2, b.ranked[k].cumulative_area_m2));
            EXPECT_TRUE(sameBits(a.ranked[k].cumulative_percent, b.ranked[k].cumulative_percent));
        }
        EXPECT_TRUE(sameBits(a.evaluated_area_m2, b.evaluated_area_m2));
    }
}

TEST(WindowedEngineTest, IntervisibilityOnTheWindowIsTheWholeDems) {
    for (const Case& c : cases()) {
        const WindowRun s = prepareWindowRun(c);
        IntervisOptions opt;
        opt.reach_m = c.reach_m;
        const IntervisResult a =
            computeIntervisibility(s.whole.z, s.whole.geometry, s.earth, s.obs_whole, opt);
        const IntervisResult b =
            computeIntervisibility(s.win.z, s.win.geometry, s.earth, s.obs_win, opt);
        ASSERT_EQ(a.stations, b.stations);
        int judged = 0;
        for (int i = 0; i < a.stations; ++i) {
            for (int k = 0; k < a.stations; ++k) {
                const PairVerdict pa = a.at(i, k), pb = b.at(i, k);
                judged += pa.judged ? 1 : 0;
                EXPECT_EQ(pa.judged, pb.judged) << c.raster << " pair " << i << "," << k;
                EXPECT_EQ(pa.visible, pb.visible) << c.raster << " pair " << i << "," << k;
                EXPECT_TRUE(sameBits(pa.margin_m, pb.margin_m)) << c.raster << i << "," << k;
                EXPECT_TRUE(sameBits(pa.distance_m, pb.distance_m)) << c.raster << i << "," << k;
            }
        }
        EXPECT_GT(judged, 0) << c.raster << ": no pair within reach, the test means nothing";
    }
}

TEST(WindowedEngineTest, HorizonOfASpotOnTheWindowIsTheWholeDems) {
    for (const Case& c : cases()) {
        const WindowRun s = prepareWindowRun(c);
        HorizonOptions opt;
        opt.observer_height_m = 2.0;
        opt.reach_m = c.reach_m;
        opt.latitude_deg = s.obs_whole[0].latitude_deg;
        opt.method = HorizonMethod::Reference;
        const Observer &o = s.obs_whole[0], &ow = s.obs_win[0];
        const HorizonProfile a =
            horizonProfile(s.whole.z, s.whole.geometry, s.earth, o.col, o.row, 2.0, opt);
        const HorizonProfile b =
            horizonProfile(s.win.z, s.win.geometry, s.earth, ow.col, ow.row, 2.0, opt);
        ASSERT_EQ(a.directions.size(), b.directions.size());
        for (std::size_t i = 0; i < a.directions.size(); ++i) {
            const HorizonSample &x = a.directions[i].sample, &y = b.directions[i].sample;
            EXPECT_EQ(x.found, y.found) << c.raster << " direction " << i;
            EXPECT_TRUE(sameBits(x.angle_deg, y.angle_deg)) << c.raster << " direction " << i;
            EXPECT_TRUE(sameBits(x.distance_m, y.distance_m)) << c.raster << " direction " << i;
            EXPECT_TRUE(sameBits(x.col, y.col + s.window.col0)) << c.raster << " direction " << i;
            EXPECT_TRUE(sameBits(x.row, y.row + s.window.row0)) << c.raster << " direction " << i;
            // The DEM's edge is the whole DEM's, whatever window was read (issue 15 item 7).
            EXPECT_TRUE(sameBits(a.directions[i].edge_distance_m, b.directions[i].edge_distance_m))
                << c.raster << " direction " << i;
        }
        EXPECT_EQ(a.directions_cut_by_edge, b.directions_cut_by_edge) << c.raster;
        EXPECT_TRUE(sameBits(a.sky_view_factor, b.sky_view_factor));
    }
}

TEST(WindowedEngineTest, PathProfileOnTheWindowIsTheWholeDems) {
    for (const Case& c : cases()) {
        const WindowRun s = prepareWindowRun(c);
        // A path between the first two observers, sampled every 0.37 cell (fractional cells).
        const Observer &a0 = s.obs_whole[0], &a1 = s.obs_whole[1];
        PathProfileInput in;
        const int n = 400;
        for (int i = 0; i <= n; ++i) {
            const double f = static_cast<double>(i) / n;
            in.samples.push_back({a0.col + f * (a1.col - a0.col) + 0.3 * f,
                                  a0.row + f * (a1.row - a0.row) - 0.2 * f, f * 5000.0});
        }
        in.from_height_m = 10;
        in.to_height_m = 20;
        in.frequency_mhz = 900;
        in.latitude_deg = a0.latitude_deg;
        PathProfileInput in_win = in;
        for (PathSample& p : in_win.samples) {
            p.col -= s.window.col0;
            p.row -= s.window.row0;
        }
        const PathProfileResult x = computePathProfile(s.whole.z, s.earth, in);
        const PathProfileResult y = computePathProfile(s.win.z, s.earth, in_win);
        ASSERT_EQ(x.points.size(), y.points.size());
        for (std::size_t i = 0; i < x.points.size(); ++i) {
            EXPECT_TRUE(sameBits(x.points[i].terrain_m, y.points[i].terrain_m)) << i;
            EXPECT_TRUE(sameBits(x.points[i].clearance_m, y.points[i].clearance_m)) << i;
        }
        EXPECT_TRUE(sameBits(x.min_clearance_m, y.min_clearance_m));
    }
}
