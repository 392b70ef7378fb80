// The sliding upper hull of the fast horizon engine (src/horizon/SlidingHull.hpp), on its own:
// pushes, pops of the farthest sample and tangent queries, checked against brute force (the
// sample of largest slope from the eye, and the upper convex hull of the window by Andrew's
// monotone chain) on random points, and against the sea horizon of a folded flat sea, whose
// distance √(z_e / c) is known in closed form (the standard dip-of-the-horizon geometry; common
// practice, no single source).
#include <gtest/gtest.h>

#include <cmath>
#include <limits>
#include <random>
#include <vector>

#include "../../src/horizon/SlidingHull.hpp"

namespace {

using lookfar::horizon_detail::fast::SlidingHull;
using lookfar::horizon_detail::fast::Vertex;

/// The samples of a line: coordinates decreasing with the index, folded heights (NaN = no data),
/// and the hull's buffers.
struct Line {
    std::vector<double> s, z;
    std::vector<Vertex> back, front, grave;
    std::vector<int> record;
    explicit Line(std::size_t n)
        : s(n), z(n), back(n + 1), front(n + 1), grave(n + 1), record(n + 1) {}
    auto pos() const {
        const double* p = s.data();
        return [p](int k) { return p[k]; };
    }
    auto hull() {
        return SlidingHull<decltype(pos())>(z.data(), pos(), back.data(), front.data(),
                                            grave.data(), record.data());
    }
};

/// Random line: gaps between 0.2 and 3 (so positions are not whole numbers, as on geographic
/// grids), heights from a random walk, one sample in ten without data.
Line randomLine(std::size_t n, std::mt19937& rng) {
    std::uniform_real_distribution<double> gap(0.2, 3.0), step(-5.0, 5.0), u(0.0, 1.0);
    Line line(n);
    double s = 0, z = 0;
    for (std::size_t k = 0; k < n; ++k) {
        line.s[k] = s;
        z += step(rng);
        line.z[k] = u(rng) < 0.1 ? std::numeric_limits<double>::quiet_NaN() : z;
        s -= gap(rng);
    }
    return line;
}

/// Brute force: the sample in [lo, hi] of largest slope from the eye (−1 when none has data).
int bruteTangent(const Line& line, int lo, int hi, double sE, double zE) {
    int best = -1;
    double best_slope = -std::numeric_limits<double>::infinity();
    for (int k = lo; k <= hi; ++k) {
        if (std::isnan(line.z[k]))
            continue;
        const double slope = (line.z[k] - zE) / (line.s[k] - sE);
        if (slope > best_slope)
            best_slope = slope, best = k;
    }
    return best;
}

/// Brute force: the indices of the vertices of the upper convex hull of the samples with data in
/// [lo, hi] (Andrew's monotone chain over increasing s, that is decreasing index).
std::vector<int> bruteUpperHull(const Line& line, int lo, int hi) {
    std::vector<int> h;
    for (int k = hi; k >= lo; --k) {
        if (std::isnan(line.z[k]))
            continue;
        while (h.size() >= 2) {
            const int a = h[h.size() - 2], b = h.back();
            const double cross = (line.s[b] - line.s[a]) * (line.z[k] - line.z[a]) -
                                 (line.z[b] - line.z[a]) * (line.s[k] - line.s[a]);
            if (cross >= 0)
                h.pop_back();  // b is on or below the chord a → k
            else
                break;
        }
        h.push_back(k);
    }
    return h;
}

bool contains(const std::vector<int>& v, int x) {
    for (int y : v)
        if (y == x)
            return true;
    return false;
}

/// Checks one tangent query against brute force, for an eye a little nearer than the window's
/// nearest sample.
template <typename Hull>
void checkQuery(const Line& line, Hull& hull, int lo, int hi, std::mt19937& rng) {
    std::uniform_real_distribution<double> ahead(0.1, 4.0), height(-60.0, 60.0);
    const double sE = line.s[hi] - ahead(rng);
    const double zE = line.z[hi] == line.z[hi] ? line.z[hi] + height(rng) : height(rng);
    const int expected = bruteTangent(line, lo, hi, sE, zE);
    ASSERT_EQ(hull.empty(), expected < 0) << "window [" << lo << ", " << hi << "]";
    if (expected < 0)
        return;
    const Vertex& v = hull.tangent(sE, zE);
    EXPECT_EQ(v.k, expected) << "window [" << lo << ", " << hi << "], eye (" << sE << ", " << zE
                             << ")";
    EXPECT_EQ(v.s, line.s[v.k]);
    EXPECT_EQ(v.z, line.z[v.k]);
    EXPECT_TRUE(contains(bruteUpperHull(line, lo, hi), v.k))
        << "the tangent point " << v.k << " is not a vertex of the window's upper hull";
}

TEST(SlidingHullTest, TangentsOfAGrowingWindowMatchBruteForce) {
    std::mt19937 rng(20261203);
    for (int trial = 0; trial < 20; ++trial) {
        Line line = randomLine(300, rng);
        auto hull = line.hull();
        for (int k = 0; k < 300; ++k) {
            hull.push(k);
            ASSERT_EQ(hull.newest(), k);
            ASSERT_EQ(hull.farthest(), 0);
            // Several eyes per window: the walks start where the previous query ended.
            for (int q = 0; q < 3; ++q)
                checkQuery(line, hull, 0, k, rng);
        }
    }
}

TEST(SlidingHullTest, PushesAndPopsInAnyOrderMatchBruteForce) {
    std::mt19937 rng(7);
    std::uniform_int_distribution<int> op(0, 2);
    for (int trial = 0; trial < 40; ++trial) {
        const int n = 400;
        Line line = randomLine(n, rng);
        auto hull = line.hull();
        int pushed = -1, lo = 0, pops = 0;
        while (pushed < n - 1) {
            // Pushes twice as often as pops, so that windows of many sizes occur; every pop is of
            // the farthest sample still in the window.
            if (op(rng) > 0 || lo > pushed) {
                hull.push(++pushed);
            } else {
                hull.popFarthest();
                ++lo, ++pops;
            }
            ASSERT_EQ(hull.farthest(), lo);
            ASSERT_EQ(hull.newest(), pushed);
            if (lo <= pushed)
                checkQuery(line, hull, lo, pushed, rng);
            else
                EXPECT_TRUE(hull.empty());
        }
        EXPECT_GT(pops, n / 5);
    }
}

TEST(SlidingHullTest, FixedWidthWindowAsTheSweepUsesIt) {
    // The line sweep's pattern: one push per eye, then the samples beyond reach leave.
    std::mt19937 rng(99);
    Line line = randomLine(1000, rng);
    auto hull = line.hull();
    const double reach = 40.0;
    for (int k = 0; k < 1000; ++k) {
        hull.push(k);
        const double sE = line.s[k] - 0.5;
        while (hull.farthest() <= hull.newest() && line.s[hull.farthest()] - sE > reach)
            hull.popFarthest();
        if (hull.farthest() <= hull.newest())
            checkQuery(line, hull, hull.farthest(), k, rng);
    }
}

TEST(SlidingHullTest, FoldedFlatSeaHasItsHorizonAtTheKnownDistance) {
    // A flat sea folded with curvature c: Z(s) = −c s². From an eye of height z_e at s = 0 the
    // slope (−c s² − z_e)/s is largest at s = √(z_e / c): with c = 0.01 and z_e = 4, s = 20.
    const int n = 100;
    Line line(n);
    const double c = 0.01, ze = 4.0;
    for (int k = 0; k < n; ++k) {
        line.s[k] = n - k;  // k = 0 is the far end, s = 100; k = 99 is s = 1
        line.z[k] = -c * line.s[k] * line.s[k];
    }
    auto hull = line.hull();
    for (int k = 0; k < n; ++k)
        hull.push(k);
    EXPECT_EQ(hull.tangent(0.0, ze).s, 20.0);
    // Once every sample beyond s = 12 has left the window, the slope rises all the way to the
    // window's far end: the farthest sample left is the horizon.
    while (line.s[hull.farthest()] > 12.0)
        hull.popFarthest();
    EXPECT_EQ(hull.tangent(0.0, ze).s, 12.0);
    // A lower eye sees the sea horizon nearer: z_e = 1 → s = 10, inside the window.
    EXPECT_EQ(hull.tangent(0.0, 1.0).s, 10.0);
}

}  // namespace
