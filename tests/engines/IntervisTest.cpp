// The intervisibility matrix of `lookfar intervis` against outside values (../shared/
// docs/references.md rows in the comments) and against the reference sightline rule it is built on.
#include <gtest/gtest.h>

#ifdef _OPENMP
#include <omp.h>
#endif

#include <cmath>

#include "lookfar/core/FractalTerrain.hpp"
#include "lookfar/core/GridGeometry.hpp"
#include "lookfar/link/Intervisibility.hpp"
#include "lookfar/sightline/SightlineRule.hpp"

using namespace lookfar;

namespace {

constexpr double R = EarthModel::kMeanRadiusM;

GridGeometry utmGrid(int w, int h, double cell) {
    return GridGeometry(w, h, {400000, cell, 0, 5600000, 0, -cell}, false, 1.0, Ellipsoid::wgs84());
}

Observer station(const std::string& name, int col, int row, double height) {
    Observer o;
    o.name = name;
    o.col = col;
    o.row = row;
    o.height_m = height;
    o.latitude_deg = 50.5;
    return o;
}

}  // namespace

// Row 4: radio horizon over a smooth Earth with k = 0.25, d(km) = 4.12 √h(m) (ITU-R effective
// radius, from memory). Masts over a flat sea see each other up to the sum of their horizon
// distances; 4.12 is rounded (4.1219), the stations stand on 25 m cell centres: ±1 % either side.
TEST(IntervisTest, FlatSeaMastsSeeEachOtherUpToTheSumOfRadioHorizons) {
    const double cell = 25;
    const Grid<float> sea(3000, 3, 0.0f);
    const GridGeometry geo = utmGrid(3000, 3, cell);
    const EarthModel earth(EarthShape::Sphere, Ellipsoid::wgs84(), R, 0.25);
    for (auto [h1, h2] : {std::pair{30.0, 50.0}, std::pair{10.0, 100.0}, std::pair{3.0, 20.0}}) {
        const double sum_m = 4120.0 * (std::sqrt(h1) + std::sqrt(h2));
        const int near_col = 10 + static_cast<int>(std::round(0.99 * sum_m / cell));
        const int far_col = 10 + static_cast<int>(std::round(1.01 * sum_m / cell));
        const std::vector<Observer> s = {station("A", 10, 1, h1), station("near", near_col, 1, h2),
                                         station("far", far_col, 1, h2)};
        const IntervisResult r = computeIntervisibility(sea, geo, earth, s, {});
        EXPECT_TRUE(r.at(0, 1).visible) << h1 << " m and " << h2 << " m at 0.99 × the sum";
        EXPECT_TRUE(r.at(1, 0).visible);
        EXPECT_FALSE(r.at(0, 2).visible) << h1 << " m and " << h2 << " m at 1.01 × the sum";
        EXPECT_FALSE(r.at(2, 0).visible);
        EXPECT_NEAR(r.at(0, 2).distance_m, (far_col - 10) * cell, 1e-6);
    }
}

namespace {
struct Network {
    Grid<float> dem;
    GridGeometry geometry;
    std::vector<Observer> stations;
};
Network fractalNetwork() {
    Network n;
    FractalSpec spec;
    spec.width = 240;
    spec.height = 200;
    spec.high_m = 120;
    spec.seed = 77;
    n.dem = fractalTerrain(spec);
    n.geometry = utmGrid(240, 200, 20);
    int k = 0;
    for (int row : {15, 60, 110, 185}) {
        for (int col : {10, 95, 170, 230}) {
            n.stations.push_back(
                station("s" + std::to_string(k), col - (row % 7), row, 5.0 + 8 * (k % 5)));
            ++k;
        }
    }
    n.stations.push_back(station("twin", n.stations[5].col, n.stations[5].row, 1.0));
    return n;
}
}  // namespace

// The matrix is the sightline rule (docs/design.md's reference definition) for every ordered pair,
// each station's height its eye when it looks and its target when it is looked at.
TEST(IntervisTest, EveryOrderedPairIsTheSightlineRuleVerdict) {
    const Network net = fractalNetwork();
    const EarthModel earth;  // ellipsoid, k = 0.13
    IntervisOptions opt;
    opt.reach_m = 3000;
    const IntervisResult r =
        computeIntervisibility(net.dem, net.geometry, earth, net.stations, opt);
    const int n = static_cast<int>(net.stations.size());
    int judged = 0, visible = 0, hidden = 0;
    for (int i = 0; i < n; ++i) {
        const SightlineRule rule(net.dem, net.geometry, earth, net.stations[i]);
        for (int j = 0; j < n; ++j) {
            if (i == j) {
                EXPECT_FALSE(r.at(i, j).judged);
                continue;
            }
            const Observer& t = net.stations[j];
            const SightlineVerdict v = rule.judge(t.col, t.row, t.height_m);
            if (v.distance_m > opt.reach_m) {
                EXPECT_FALSE(r.at(i, j).judged);
                EXPECT_FALSE(r.at(i, j).visible);
                EXPECT_TRUE(std::isnan(r.at(i, j).margin_m));
                continue;
            }
            EXPECT_DOUBLE_EQ(r.at(i, j).distance_m, v.distance_m);
            ++judged;
            EXPECT_TRUE(r.at(i, j).judged);
            EXPECT_EQ(r.at(i, j).visible, v.visible) << i << " → " << j;
            EXPECT_DOUBLE_EQ(r.at(i, j).margin_m, v.margin_m);
            (v.visible ? visible : hidden)++;
        }
    }
    // The case has pairs beyond reach, visible pairs and hidden pairs.
    EXPECT_EQ(r.judgedCount(), judged);  // only the pairs within reach are kept
    EXPECT_GT(judged, 40);
    EXPECT_LT(judged, n * (n - 1));
    EXPECT_GT(visible, 20);
    EXPECT_GT(hidden, 20);
    // Two stations on one cell see each other, with margin = the target's height.
    EXPECT_TRUE(r.at(5, n - 1).visible);
    EXPECT_DOUBLE_EQ(r.at(5, n - 1).margin_m, 1.0);
}

// The rule's condition z(t) + t(1 − t)Δ ≤ (1 − t) z_i + t z_j is symmetric on a sphere: both
// verdicts of a pair agree (margins differ, being measured at the far end), unless the margin is
// within rounding of zero.
TEST(IntervisTest, BothVerdictsOfAPairAgreeOnASphere) {
    const Network net = fractalNetwork();
    const EarthModel earth(EarthShape::Sphere, Ellipsoid::wgs84(), R, 0.13);
    const IntervisResult r = computeIntervisibility(net.dem, net.geometry, earth, net.stations, {});
    const int n = static_cast<int>(net.stations.size());
    int differing_margins = 0;
    for (int i = 0; i < n; ++i) {
        for (int j = i + 1; j < n; ++j) {
            const PairVerdict &a = r.at(i, j), &b = r.at(j, i);
            if (std::fabs(a.margin_m) < 1e-6 || std::fabs(b.margin_m) < 1e-6)
                continue;
            EXPECT_EQ(a.visible, b.visible) << i << " ↔ " << j;
            EXPECT_EQ(a.distance_m, b.distance_m);
            if (std::fabs(a.margin_m - b.margin_m) > 1e-3)
                ++differing_margins;
        }
    }
    EXPECT_GT(differing_margins, 0);  // the margins are not simply copied across
}

TEST(IntervisTest, SameMatrixForAnyThreadCount) {
#ifdef _OPENMP
    const Network net = fractalNetwork();
    const EarthModel earth;
    const int before = omp_get_max_threads();
    omp_set_num_threads(1);
    const IntervisResult one =
        computeIntervisibility(net.dem, net.geometry, earth, net.stations, {});
    omp_set_num_threads(2);
    const IntervisResult two =
        computeIntervisibility(net.dem, net.geometry, earth, net.stations, {});
    omp_set_num_threads(before);
    ASSERT_EQ(one.judged.size(), two.judged.size());
    for (std::size_t i = 0; i < one.judged.size(); ++i) {
        ASSERT_EQ(one.judged[i].size(), two.judged[i].size());
        for (std::size_t k = 0; k < one.judged[i].size(); ++k) {
            EXPECT_EQ(one.judged[i][k].to, two.judged[i][k].to);
            EXPECT_EQ(one.judged[i][k].visible, two.judged[i][k].visible);
            EXPECT_EQ(one.judged[i][k].margin_m, two.judged[i][k].margin_m);
        }
    }
#else
    GTEST_SKIP() << "built without OpenMP";
#endif
}
