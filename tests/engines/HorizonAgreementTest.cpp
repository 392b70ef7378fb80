// The fast horizon engine against the reference engine (brute-force marching over the sightline
// rule's samples, docs/design.md). The issue's bar: mean absolute error ≤ 0.05° and 99 % of values
// within 0.25°, on rough terrain and on the USGS sample (docs/references.md row 13). Also: the same
// directions have data in both, the output is delivered cell by cell exactly once per direction,
// and results are identical for any number of threads.
#include <gtest/gtest.h>
#include <omp.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <vector>

#include "../support/CliRunner.hpp"
#include "lookfar/core/FractalTerrain.hpp"
#include "lookfar/horizon/HorizonScan.hpp"
#include "lookfar/io/Dem.hpp"

using namespace lookfar;

namespace {

GridGeometry utmGrid(int w, int h, double cell_m) {
    return GridGeometry(w, h, {400000.0, cell_m, 0, 5600000.0, 0, -cell_m}, false, 1.0,
                        Ellipsoid::wgs84());
}

struct Agreement {
    std::size_t compared = 0;  ///< cell-directions with data in both engines
    std::size_t nodata_mismatch = 0;
    std::size_t within = 0;          ///< |Δangle| ≤ 0.25°
    std::size_t above = 0;           ///< fast above the reference by more than 1e-4°
    std::size_t equal = 0;           ///< |Δangle| ≤ 1e-5°
    std::size_t equal_distance = 0;  ///< … and the same horizon distance (1 mm)
    double sum_abs = 0;
    double mae() const { return compared ? sum_abs / compared : 0; }
    double withinFraction() const { return compared ? double(within) / compared : 0; }
};

/// Compares the fast engine's full grids with the reference at every `step`-th cell.
Agreement compare(const Grid<float>& z, const GridGeometry& g, const EarthModel& earth,
                  const HorizonOptions& options, int step) {
    HorizonOptions o = options;
    o.method = HorizonMethod::Fast;
    const HorizonScan scan(z, g, earth, o);
    const HorizonGrids fast = scan.runInMemory();
    Agreement a;
    for (int i = 0; i < o.directions; ++i) {
        const double az = horizonAzimuthDeg(i, o.directions);
        const int rows = (z.height() + step - 1) / step;
        std::vector<Agreement> per_row(rows);
#pragma omp parallel for schedule(dynamic, 1)
        for (int rr = 0; rr < rows; ++rr) {
            Agreement& part = per_row[rr];
            const int r = rr * step;
            for (int c = 0; c < z.width(); c += step) {
                const HorizonSample ref = scan.referenceAt(c, r, az);
                const float f = fast.angle_deg[i](c, r);
                if (!ref.found || std::isnan(f)) {
                    part.nodata_mismatch += ref.found != !std::isnan(f);
                    continue;
                }
                const double d = std::fabs(f - ref.angle_deg);
                ++part.compared;
                part.sum_abs += d;
                part.within += d <= 0.25;
                part.above += f > ref.angle_deg + 1e-4;
                if (d <= 1e-5) {
                    ++part.equal;
                    part.equal_distance +=
                        std::fabs(fast.distance_m[i](c, r) - ref.distance_m) < 1e-3;
                }
            }
        }
        for (const Agreement& p : per_row) {
            a.compared += p.compared, a.nodata_mismatch += p.nodata_mismatch;
            a.within += p.within, a.above += p.above, a.equal += p.equal;
            a.equal_distance += p.equal_distance, a.sum_abs += p.sum_abs;
        }
    }
    std::printf(
        "    compared %zu cell-directions: MAE %.4f°, %.3f %% within 0.25°, %.2f %% equal\n",
        a.compared, a.mae(), 100.0 * a.withinFraction(), 100.0 * a.equal / a.compared);
    return a;
}

void expectIssueBar(const Agreement& a) {
    EXPECT_GT(a.compared, 10000u);
    EXPECT_EQ(a.nodata_mismatch, 0u);
    EXPECT_LE(a.mae(), 0.05);
    EXPECT_GE(a.withinFraction(), 0.99);
    // The fast engine takes the largest of a subset of the reference's samples: never above it.
    EXPECT_EQ(a.above, 0u);
    // Where the angles are equal the horizon-defining sample is the same.
    EXPECT_GE(a.equal_distance, a.equal * 999 / 1000);
}

/// Rough terrain: a seeded fractal, rough at every scale (spectral exponent 2.2), 0–800 m on
/// 90 m cells (the 3″ spacing of SRTM-class DEMs; mean slope between neighbours ≈ 20°).
Grid<float> roughTerrain(int size, std::uint64_t seed) {
    FractalSpec spec;
    spec.width = spec.height = size;
    spec.spectral_exponent = 2.2;
    spec.seed = seed;
    return fractalTerrain(spec);
}

/// Records which cells each direction delivered, and how often.
class CountingSink final : public HorizonSink {
  public:
    CountingSink(int w, int h, int n) : w_(w), counts_(static_cast<std::size_t>(w) * h * n, 0) {
        h_ = h;
    }
    void rectangle(int index, int col0, int row0, int width, int height, int stride,
                   const float* angle, const float* distance) override {
        (void)stride, (void)angle, (void)distance;
        for (int r = row0; r < row0 + height; ++r) {
            for (int c = col0; c < col0 + width; ++c)
                ++counts_[(static_cast<std::size_t>(index) * h_ + r) * w_ + c];
        }
    }
    const std::vector<int>& counts() const { return counts_; }

  private:
    int w_, h_;
    std::vector<int> counts_;
};

}  // namespace

// Common practice, no source: the bar of the issue on synthetic rough terrain (two seeds).
TEST(HorizonAgreementTest, FastMatchesReferenceOnRoughTerrain) {
    const EarthModel earth(EarthShape::Ellipsoid, Ellipsoid::wgs84(), EarthModel::kMeanRadiusM,
                           0.13);
    for (std::uint64_t seed : {1u, 2u}) {
        const Grid<float> z = roughTerrain(256, seed);
        HorizonOptions o;
        o.directions = 16;
        o.observer_height_m = 1.7;
        o.latitude_deg = 50.5;
        expectIssueBar(compare(z, utmGrid(256, 256, 90), earth, o, 3));
    }
}

// The same bar with a limited reach (the sliding-window hulls of the fast engine).
TEST(HorizonAgreementTest, FastMatchesReferenceWithALimitedReach) {
    const EarthModel earth(EarthShape::Ellipsoid, Ellipsoid::wgs84(), EarthModel::kMeanRadiusM,
                           0.13);
    const Grid<float> z = roughTerrain(256, 3);
    HorizonOptions o;
    o.directions = 12;
    o.observer_height_m = 10.0;
    o.reach_m = 4000;
    o.latitude_deg = 50.5;
    expectIssueBar(compare(z, utmGrid(256, 256, 90), earth, o, 3));
}

// Row 13: the USGS 3-arc-second sample (real terrain on a geographic grid, 236–1076 m), an eye
// 1.7 m above the ground, 16 directions.
TEST(HorizonAgreementTest, FastMatchesReferenceOnTheUsgsSample) {
    const Dem dem = readDem(lookfar::testing::usgsSample());
    ASSERT_TRUE(dem.crs.geographic);
    const EarthModel earth(EarthShape::Ellipsoid, dem.crs.ellipsoid, EarthModel::kMeanRadiusM,
                           0.13);
    HorizonOptions o;
    o.directions = 16;
    o.observer_height_m = 1.7;
    o.latitude_deg = dem.geometry.latitudeOfRow(dem.geometry.height() / 2.0);
    expectIssueBar(compare(dem.z, dem.geometry, earth, o, 4));
}

// Every cell of every direction is delivered to the sink exactly once, whatever the direction
// (steep, shallow, grid-aligned) and on a grid that is not a whole number of tiles.
TEST(HorizonAgreementTest, EveryCellIsDeliveredOncePerDirection) {
    const Grid<float> z = roughTerrain(300, 4);
    Grid<float> part(300, 170);
    for (int r = 0; r < 170; ++r) {
        for (int c = 0; c < 300; ++c)
            part(c, r) = z(c, r);
    }
    const EarthModel earth(EarthShape::Sphere, Ellipsoid::wgs84(), EarthModel::kMeanRadiusM, 0.13);
    for (HorizonMethod method : {HorizonMethod::Fast, HorizonMethod::Reference}) {
        HorizonOptions o;
        o.directions = method == HorizonMethod::Fast ? 24 : 5;
        o.method = method;
        CountingSink sink(300, 170, o.directions);
        HorizonScan(part, utmGrid(300, 170, 30), earth, o).run(sink);
        const auto& counts = sink.counts();
        EXPECT_EQ(std::count(counts.begin(), counts.end(), 1),
                  static_cast<std::ptrdiff_t>(counts.size()));
    }
}

// docs/design.md style rule: results are identical for any --threads (bit for bit).
TEST(HorizonAgreementTest, IdenticalResultsForOneAndTwoThreads) {
    const Grid<float> z = roughTerrain(200, 5);
    const EarthModel earth(EarthShape::Ellipsoid, Ellipsoid::wgs84(), EarthModel::kMeanRadiusM,
                           0.13);
    const GridGeometry g = utmGrid(200, 200, 30);
    const int saved = omp_get_max_threads();
    for (HorizonMethod method : {HorizonMethod::Fast, HorizonMethod::Reference}) {
        HorizonOptions o;
        o.directions = method == HorizonMethod::Fast ? 16 : 3;
        o.method = method;
        o.want_svf = o.want_dip = true;
        o.reach_m = method == HorizonMethod::Fast ? 3000 : 1e300;
        omp_set_num_threads(1);
        const HorizonGrids one = HorizonScan(z, g, earth, o).runInMemory();
        omp_set_num_threads(2);
        const HorizonGrids two = HorizonScan(z, g, earth, o).runInMemory();
        for (int i = 0; i < o.directions; ++i) {
            EXPECT_EQ(std::memcmp(one.angle_deg[i].data(), two.angle_deg[i].data(),
                                  one.angle_deg[i].size() * sizeof(float)),
                      0);
            EXPECT_EQ(std::memcmp(one.distance_m[i].data(), two.distance_m[i].data(),
                                  one.distance_m[i].size() * sizeof(float)),
                      0);
        }
        EXPECT_EQ(std::memcmp(one.summary.svf.data(), two.summary.svf.data(),
                              one.summary.svf.size() * sizeof(float)),
                  0);
        EXPECT_EQ(std::memcmp(one.summary.dip.data(), two.summary.dip.data(),
                              one.summary.dip.size() * sizeof(float)),
                  0);
    }
    omp_set_num_threads(saved);
}
