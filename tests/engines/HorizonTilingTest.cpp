// The horizon of a DEM over the memory budget, tile by tile (issue 13 items 3, 7): every band of
// angles and distances, the sky-view factor and the dip are the same bits as one run over the
// whole DEM, for several tilings (cores of 1 to 3 blocks; budgets choose among such) and thread
// counts. The whole-DEM run is the reference (common practice, no source: tiling is a way of
// computing, not a change of result).
#include <gtest/gtest.h>

#ifdef _OPENMP
#include <omp.h>
#endif

#include <cmath>
#include <cstdint>
#include <cstring>
#include <limits>
#include <string>
#include <vector>

#include "../support/CliRunner.hpp"
#include "lookfar/core/Errors.hpp"
#include "lookfar/core/FractalTerrain.hpp"
#include "lookfar/core/MemorySize.hpp"
#include "lookfar/horizon/HorizonTiling.hpp"
#include "lookfar/io/Dem.hpp"
#include "lookfar/stats/GridStats.hpp"

using namespace lookfar;
using namespace lookfar::testing;

namespace {

/// Every output of a run, kept in memory, in cells of the whole grid.
class GridsSink final : public TiledHorizonSink {
  public:
    GridsSink(int w, int h, int n) : w_(w) {
        const float nan = std::numeric_limits<float>::quiet_NaN();
        angle.assign(n, Grid<float>(w, h, nan));
        distance.assign(n, Grid<float>(w, h, nan));
        svf = Grid<float>(w, h, nan);
        dip = Grid<float>(w, h, nan);
        delivered.assign(static_cast<std::size_t>(w) * h * n, 0);
    }
    void rectangle(int index, int col0, int row0, int width, int height, int stride, const float* a,
                   const float* d) override {
        for (int r = 0; r < height; ++r) {
            for (int c = 0; c < width; ++c) {
                angle[index](col0 + c, row0 + r) = a[r * stride + c];
                distance[index](col0 + c, row0 + r) = d[r * stride + c];
                ++delivered[(static_cast<std::size_t>(index) * angle[0].height() + row0 + r) * w_ +
                            col0 + c];
            }
        }
    }
    void summary(int col0, int row0, int width, int height, int stride, const float* s,
                 const float* d) override {
        for (int r = 0; r < height; ++r) {
            for (int c = 0; c < width; ++c) {
                if (s)
                    svf(col0 + c, row0 + r) = s[r * stride + c];
                if (d)
                    dip(col0 + c, row0 + r) = d[r * stride + c];
            }
        }
        svf_stats.add(s, width, height, stride);
    }
    std::vector<Grid<float>> angle, distance;
    Grid<float> svf, dip;
    std::vector<int> delivered;
    ExactGridStats svf_stats;

  private:
    int w_;
};

/// FNV-1a of a grid's bytes.
std::uint64_t hashOf(const Grid<float>& g) {
    std::uint64_t h = 1469598103934665603ull;
    const unsigned char* p = reinterpret_cast<const unsigned char*>(g.data());
    for (std::size_t i = 0; i < g.cells().size() * sizeof(float); ++i)
        h = (h ^ p[i]) * 1099511628211ull;
    return h;
}

struct Outcome {
    HorizonTilePlan plan;
    std::vector<std::uint64_t> hashes;  // every band of angles and distances, svf, dip
    double svf_mean = 0;
    bool every_cell_once = true;
};

Outcome run(const Grid<float>& dem, const GridGeometry& g, const EarthModel& earth,
            const HorizonOptions& o, int max_core, int threads) {
#ifdef _OPENMP
    omp_set_num_threads(threads);
#endif
    Outcome out;
    out.plan = planHorizonTiles(g, o, threads, std::int64_t(1) << 40, "the test DEM", 0, max_core);
    GridsSink sink(g.width(), g.height(), o.directions);
    runHorizonTiles(
        g, earth, o, out.plan,
        [&](int c0, int r0, int w, int h) {
            Grid<float> win(w, h);
            for (int r = 0; r < h; ++r) {
                for (int c = 0; c < w; ++c)
                    win(c, r) = dem(c0 + c, r0 + r);
            }
            return win;
        },
        sink);
    for (int i = 0; i < o.directions; ++i) {
        out.hashes.push_back(hashOf(sink.angle[i]));
        out.hashes.push_back(hashOf(sink.distance[i]));
    }
    out.hashes.push_back(hashOf(sink.svf));
    out.hashes.push_back(hashOf(sink.dip));
    out.svf_mean = sink.svf_stats.mean();
    for (int v : sink.delivered)
        out.every_cell_once = out.every_cell_once && v == 1;
#ifdef _OPENMP
    omp_set_num_threads(omp_get_num_procs());
#endif
    return out;
}

/// Runs the whole grid in one piece, then cut into tiles of several sizes with 1 and 2 threads:
/// every run must give the same hashes.
void expectSameForAnyTiling(const Grid<float>& dem, const GridGeometry& g, const EarthModel& earth,
                            const HorizonOptions& o) {
    const Outcome ref = run(dem, g, earth, o, 0, 2);
    ASSERT_FALSE(ref.plan.tiled());
    ASSERT_TRUE(ref.every_cell_once);
    const std::pair<int, int> runs[] = {{128, 1}, {256, 2}, {384, 1}};
    for (auto [core, threads] : runs) {
        const Outcome t = run(dem, g, earth, o, core, threads);
        SCOPED_TRACE(std::to_string(t.plan.tiles()) + " tiles of " + std::to_string(t.plan.core) +
                     " cells, halo " + std::to_string(t.plan.halo) + ", threads " +
                     std::to_string(threads));
        EXPECT_TRUE(t.plan.tiled());
        EXPECT_TRUE(t.every_cell_once);
        ASSERT_EQ(t.hashes.size(), ref.hashes.size());
        for (std::size_t i = 0; i < ref.hashes.size(); ++i)
            EXPECT_EQ(t.hashes[i], ref.hashes[i]) << "output " << i;
        EXPECT_EQ(std::memcmp(&t.svf_mean, &ref.svf_mean, sizeof(double)), 0);
    }
}

HorizonOptions tiledOptions(int directions, double reach_m) {
    HorizonOptions o;
    o.directions = directions;
    o.reach_m = reach_m;
    o.observer_height_m = 1.7;
    o.want_svf = true;
    o.want_dip = true;
    return o;
}

}  // namespace

TEST(HorizonTiling, ProjectedFractalTerrainSameBitsForAnyBudgetAndThreads) {
    // Rough terrain, 30 m cells, 1.5 km reach: halos of 53 cells around cores of 1 to 3 blocks.
    FractalSpec spec;
    spec.width = 530;
    spec.height = 470;
    spec.spectral_exponent = 2.2;
    spec.seed = 1313;
    const Grid<float> dem = fractalTerrain(spec);
    const GridGeometry g(530, 470, {420000, 30, 0, 5600000, 0, -30}, false, 1.0,
                         Ellipsoid::wgs84());
    const EarthModel earth(EarthShape::Ellipsoid, Ellipsoid::wgs84(), 6371008.8, 0.13);
    // 9 directions: none of them an axis or a diagonal but north (lines between cell centres).
    expectSameForAnyTiling(dem, g, earth, tiledOptions(9, 1500.0));
}

TEST(HorizonTiling, GeographicDemSameBitsForAnyBudget) {
    // geographic_hills.tif: lat/lon cells of 1/1200°, whose rows differ in metres.
    const Dem d = readDem(testRaster("geographic_hills.tif"));
    const EarthModel earth(EarthShape::Ellipsoid, d.crs.ellipsoid, 6371008.8, 0.13);
    HorizonOptions o = tiledOptions(8, 1500.0);
    o.directions = 11;
    o.latitude_deg = d.geometry.mapY((d.geometry.height() - 1) / 2.0);
    expectSameForAnyTiling(d.z, d.geometry, earth, o);
}

TEST(HorizonTiling, RefusesAnUnlimitedReachOverTheBudget) {
    const GridGeometry g(4096, 4096, {0, 10, 0, 0, 0, -10}, false, 1.0, Ellipsoid::wgs84());
    HorizonOptions o = tiledOptions(16, std::numeric_limits<double>::infinity());
    try {
        planHorizonTiles(g, o, 2, std::int64_t(64) << 20, "big.tif");
        FAIL() << "an unlimited reach over the budget must be refused";
    } catch (const UsageError& e) {
        const std::string m = e.what();
        EXPECT_NE(m.find("big.tif (4096 × 4096 cells)"), std::string::npos) << m;
        EXPECT_NE(m.find("64 MiB"), std::string::npos) << m;
        EXPECT_NE(m.find("--reach"), std::string::npos) << m;
        EXPECT_NE(m.find("--memory"), std::string::npos) << m;
    }
    // With a reach it is tiled, every tile within the budget.
    o.reach_m = 2000;
    const HorizonTilePlan p = planHorizonTiles(g, o, 2, std::int64_t(64) << 20, "big.tif");
    EXPECT_TRUE(p.tiled());
    EXPECT_LE(p.peak_bytes, std::int64_t(64) << 20);
    EXPECT_EQ(p.core % 128, 0);
}

TEST(HorizonTiling, RefusesABudgetBelowOneTileNamingTheMinimum) {
    const GridGeometry g(4096, 4096, {0, 10, 0, 0, 0, -10}, false, 1.0, Ellipsoid::wgs84());
    const HorizonOptions o = tiledOptions(16, 20000.0);  // halo of 2003 cells
    try {
        planHorizonTiles(g, o, 2, std::int64_t(16) << 20, "big.tif");
        FAIL() << "a budget below one tile must be refused";
    } catch (const UsageError& e) {
        const std::string m = e.what();
        EXPECT_NE(m.find("--memory: 16 MiB is below what one tile"), std::string::npos) << m;
        EXPECT_NE(m.find("give at least"), std::string::npos) << m;
    }
}

TEST(MemorySize, ParsesBinaryUnitsAndRefusesTheRest) {
    // Binary units as the option's help states them (common practice, no source).
    EXPECT_EQ(parseMemorySize("512M", "--memory"), std::int64_t(512) << 20);
    EXPECT_EQ(parseMemorySize("2G", "--memory"), std::int64_t(2) << 30);
    EXPECT_EQ(parseMemorySize("1.5g", "--memory"), std::int64_t(3) << 29);
    EXPECT_EQ(parseMemorySize("64MiB", "--memory"), std::int64_t(64) << 20);
    EXPECT_EQ(parseMemorySize("4096", "--memory"), 4096);
    for (const char* bad : {"", "M", "-1G", "12X", "1e400", "0", "2 GB extra", "nan"})
        EXPECT_THROW(parseMemorySize(bad, "--memory"), UsageError) << bad;
    EXPECT_EQ(formatMemorySize(std::int64_t(512) << 20), "512 MiB");
    EXPECT_EQ(formatMemorySize(std::int64_t(3) << 29), "1.5 GiB");
    EXPECT_GT(defaultMemoryBudget(), 0);
}
