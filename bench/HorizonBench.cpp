// lookfar_bench horizon: speed and memory of `lookfar horizon` (issue 4's targets).
//
// Seeded fractal DEMs (β 2.2, 0–800 m, 10 m cells, seed 4004) of 2048² and 4096² cells; N = 8,
// 32 and 128 directions; unlimited reach and a 5 km reach; eye 1.7 m above every cell (and the
// 2048² terrain on a geographic grid of 1″ cells, N = 32, engine only):
//   - the fast engine in memory (only the sky-view factor accumulated, no per-direction output):
//     cell-directions per second, the median of the runs (3 runs up to 2048² × 8 cell-directions,
//     1 run above: the whole set takes about 15 minutes on 2 cores);
//   - the whole command with --svf as a child process: wall time and peak resident memory;
//   - the whole command with every output (-o, --distance, --svf, --dip; without --distance for
//     N = 128, to keep the run short): peak resident memory against the bound DEM bytes +
//     3 Float32 grids + 64 MiB, for several N (memory must not grow with N), and its wall time
//     (GeoTIFF compression of the N bands included);
//   - ratios: time for 4× the directions, time for 4× the cells (linear cost: both ≈ 4).
// Target (2-core machine): ≥ 150 million cell-directions per second at 4096² × 32, cost linear in
// N and in cells. --quick: 2048², N = 8 and 32 only.
#include <algorithm>
#include <cmath>
#include <cstdio>
#include <fstream>
#include <limits>
#include <map>
#include <stdexcept>
#include <tuple>

#ifdef _OPENMP
#include <omp.h>
#endif

#include "Bench.hpp"
#include "lookfar/horizon/HorizonScan.hpp"
#include "lookfar/io/Dem.hpp"

namespace lookfar::bench {

namespace {

double loadAverage() {
    double load = 0;
    std::ifstream("/proc/loadavg") >> load;
    return load;
}

/// The engine's work without its output: only the summary grids are kept.
class SummaryOnlySink final : public HorizonSink {
  public:
    void rectangle(int, int, int, int, int, int, const float*, const float*) override {}
    bool wantsRectangles() const override { return false; }
};

nlohmann::json reachJson(double reach_m) {
    return std::isfinite(reach_m) ? nlohmann::json(reach_m) : nlohmann::json(nullptr);
}

}  // namespace

nlohmann::json benchHorizon(const BenchArgs& args) {
    const std::vector<int> sizes =
        args.quick ? std::vector<int>{2048} : std::vector<int>{2048, 4096};
    const std::vector<int> directions =
        args.quick ? std::vector<int>{8, 32} : std::vector<int>{8, 32, 128};
    const double inf = std::numeric_limits<double>::infinity();
    const std::vector<double> reaches = {inf, 5000.0};
    const double cell_m = 10.0;
    constexpr double kMiB = 1024.0 * 1024.0;
    int threads = 1;
#ifdef _OPENMP
    threads = omp_get_max_threads();
#endif
    HorizonOptions defaults;
    nlohmann::json j;
    j["machine"] = {{"threads", threads}, {"load_average_before", loadAverage()}};
    j["setup"] = {
        {"terrain", "fractal, spectral exponent 2.2, 0-800 m, 10 m cells, seed 4004"},
        {"observer_height_m", 1.7},
        {"refraction", 0.13},
        {"earth_model", "ellipsoid"},
        {"engine", "fast"},
        {"fast_exact_steps", defaults.exact_steps},
        {"fast_refine_steps", defaults.refine_steps},
        {"creation_options",
         "lookfar's defaults: N-band rasters tiled 128, band-interleaved, DEFLATE level 1, "
         "floating-point predictor, compressed on every core"}};

    nlohmann::json engine_rows = nlohmann::json::array();
    nlohmann::json command_rows = nlohmann::json::array();
    nlohmann::json memory_rows = nlohmann::json::array();
    // engine seconds by (size, reach index, N)
    std::map<std::tuple<int, int, int>, double> engine_s;
    for (int size : sizes) {
        const std::string tag = std::to_string(size);
        const std::string dem_path = args.work_dir + "/horizon-dem-" + tag + ".tif";
        std::fprintf(stderr, "lookfar_bench horizon: %d² DEM\n", size);
        writeFractalDem(dem_path, size, cell_m, 4004);
        const double cells = static_cast<double>(size) * size;

        // The engine in memory.
        {
            const Dem dem = readDem(dem_path);
            const EarthModel earth(EarthShape::Ellipsoid, dem.crs.ellipsoid);
            for (std::size_t ri = 0; ri < reaches.size(); ++ri) {
                for (int n : directions) {
                    HorizonOptions o;
                    o.directions = n;
                    o.observer_height_m = 1.7;
                    o.reach_m = reaches[ri];
                    o.latitude_deg = 50.5;  // the bench DEMs lie in UTM 30N near 50.5° N
                    o.want_svf = true;
                    const HorizonScan scan(dem.z, dem.geometry, earth, o);
                    const int runs = cells * n <= 2048.0 * 2048.0 * 8 ? 3 : 1;
                    std::vector<double> times;
                    for (int r = 0; r < runs; ++r) {
                        std::fprintf(stderr, "  engine %d² N=%d reach %s run %d\n", size, n,
                                     std::isfinite(reaches[ri]) ? "5 km" : "unlimited", r + 1);
                        times.push_back(timeIt([&] {
                            SummaryOnlySink sink;
                            scan.run(sink);
                        }));
                    }
                    const double t = median(times);
                    engine_s[{size, static_cast<int>(ri), n}] = t;
                    engine_rows.push_back({{"cells_per_side", size},
                                           {"grid", "projected, 10 m cells"},
                                           {"directions", n},
                                           {"reach_m", reachJson(reaches[ri])},
                                           {"runs_s", times},
                                           {"median_s", t},
                                           {"cell_directions_per_s", cells * n / t}});
                }
            }
        }

        // The same terrain on a geographic grid of 1″ cells (about 31 m × 20 m at 51° N, the
        // spacing of the common global DEMs): the exact samples then measure every distance
        // with the ellipsoid's radii of their own rows.
        if (size == 2048) {
            const Dem dem = readDem(dem_path);
            const double arcsec = 1.0 / 3600.0;
            const GridGeometry geo(size, size, {-4.0, arcsec, 0, 51.0, 0, -arcsec}, true, 1.0,
                                   Ellipsoid::wgs84());
            const EarthModel earth(EarthShape::Ellipsoid, Ellipsoid::wgs84());
            const int n = 32;
            HorizonOptions o;
            o.directions = n;
            o.observer_height_m = 1.7;
            o.latitude_deg =
                geo.latitudeOfRow((size - 1) / 2.0);  // the centre, as the CLI takes it
            o.want_svf = true;
            const HorizonScan scan(dem.z, geo, earth, o);
            std::fprintf(stderr, "  engine %d² N=%d geographic 1″\n", size, n);
            const double t = timeIt([&] {
                SummaryOnlySink sink;
                scan.run(sink);
            });
            engine_rows.push_back({{"cells_per_side", size},
                                   {"grid", "geographic, 1 arc-second cells at 51° N"},
                                   {"directions", n},
                                   {"reach_m", nullptr},
                                   {"runs_s", {t}},
                                   {"median_s", t},
                                   {"cell_directions_per_s", cells * n / t}});
        }

        // The whole command with --svf, as users run it.
        const std::string svf_path = args.work_dir + "/horizon-svf-" + tag + ".tif";
        for (std::size_t ri = 0; ri < reaches.size(); ++ri) {
            const int n = 32;
            std::vector<std::string> argv = {args.cli_path,     "horizon", dem_path,
                                             "--svf",           svf_path,  "--directions",
                                             std::to_string(n), "--quiet", "--overwrite"};
            if (std::isfinite(reaches[ri])) {
                argv.push_back("--reach");
                argv.push_back("5000");
            }
            std::fprintf(stderr, "  command --svf %d² N=%d\n", size, n);
            const ChildRun c = runChild(argv);
            if (c.exit_code != 0)
                throw std::runtime_error("lookfar horizon failed with exit code " +
                                         std::to_string(c.exit_code));
            command_rows.push_back({{"cells_per_side", size},
                                    {"directions", n},
                                    {"reach_m", reachJson(reaches[ri])},
                                    {"outputs", "--svf"},
                                    {"wall_s", c.wall_s},
                                    {"cell_directions_per_s", cells * n / c.wall_s},
                                    {"peak_rss_mib", c.peak_rss_bytes / kMiB}});
        }
        std::remove(svf_path.c_str());

        // Every output: memory must not grow with N.
        const std::vector<int> memory_n =
            size <= 2048 ? directions : std::vector<int>{directions.front()};
        const double bound = cells * 4.0 + 3 * cells * 4.0 + 64.0 * kMiB;
        for (int n : memory_n) {
            const std::string a = args.work_dir + "/horizon-angle-" + tag + ".tif";
            const std::string d = args.work_dir + "/horizon-distance-" + tag + ".tif";
            const std::string s = args.work_dir + "/horizon-svf-" + tag + ".tif";
            const std::string p = args.work_dir + "/horizon-dip-" + tag + ".tif";
            std::fprintf(stderr, "  command, every output, %d² N=%d\n", size, n);
            std::vector<std::string> argv = {
                args.cli_path,     "horizon", dem_path,     "-o", a,
                "--svf",           s,         "--dip",      p,    "--directions",
                std::to_string(n), "--quiet", "--overwrite"};
            if (n < 128) {
                argv.push_back("--distance");
                argv.push_back(d);
            }
            const ChildRun c = runChild(argv);
            if (c.exit_code != 0)
                throw std::runtime_error("lookfar horizon failed with exit code " +
                                         std::to_string(c.exit_code));
            memory_rows.push_back(
                {{"cells_per_side", size},
                 {"directions", n},
                 {"outputs", n < 128 ? "-o --distance --svf --dip" : "-o --svf --dip"},
                 {"wall_s", c.wall_s},
                 {"cell_directions_per_s", cells * n / c.wall_s},
                 {"peak_rss_mib", c.peak_rss_bytes / kMiB},
                 {"bound_mib", bound / kMiB},
                 {"within_bound", c.peak_rss_bytes <= bound}});
            for (const auto& f : {a, d, s, p})
                std::remove(f.c_str());
        }
        std::remove(dem_path.c_str());
    }
    j["engine"] = engine_rows;
    j["command_svf"] = command_rows;
    j["command_all_outputs"] = memory_rows;

    // Ratios: linear cost means 4× the directions or 4× the cells take 4× the time.
    nlohmann::json ratios = nlohmann::json::array();
    for (int size : sizes) {
        for (std::size_t ri = 0; ri < reaches.size(); ++ri) {
            for (std::size_t k = 1; k < directions.size(); ++k) {
                const double t1 = engine_s[{size, static_cast<int>(ri), directions[k - 1]}];
                const double t2 = engine_s[{size, static_cast<int>(ri), directions[k]}];
                ratios.push_back({{"what", "time for " + std::to_string(directions[k]) + " over " +
                                               std::to_string(directions[k - 1]) + " directions"},
                                  {"cells_per_side", size},
                                  {"reach_m", reachJson(reaches[ri])},
                                  {"ratio", t2 / t1},
                                  {"linear", 1.0 * directions[k] / directions[k - 1]}});
            }
        }
    }
    if (sizes.size() > 1) {
        for (std::size_t ri = 0; ri < reaches.size(); ++ri) {
            for (int n : directions) {
                const double t1 = engine_s[{sizes[0], static_cast<int>(ri), n}];
                const double t2 = engine_s[{sizes[1], static_cast<int>(ri), n}];
                ratios.push_back({{"what", "time for 4096² over 2048² cells"},
                                  {"directions", n},
                                  {"reach_m", reachJson(reaches[ri])},
                                  {"ratio", t2 / t1},
                                  {"linear", 4.0}});
            }
        }
    }
    j["ratios"] = ratios;

    nlohmann::json targets;
    const int big = sizes.back();
    if (engine_s.count({big, 0, 32})) {
        const double rate = static_cast<double>(big) * big * 32 / engine_s[{big, 0, 32}];
        targets["cell_directions_per_s_at_" + std::to_string(big) + "x32"] = {
            {"target", 150e6}, {"measured", rate}, {"met", rate >= 150e6}};
    }
    bool within = true;
    double lo = 1e300, hi = 0;
    for (const auto& r : memory_rows) {
        within = within && r["within_bound"].get<bool>();
        if (r["cells_per_side"] == sizes.front()) {
            lo = std::min(lo, r["peak_rss_mib"].get<double>());
            hi = std::max(hi, r["peak_rss_mib"].get<double>());
        }
    }
    targets["memory_within_bound"] = within;
    targets["peak_memory_largest_over_smallest_N_at_" + std::to_string(sizes.front())] = hi / lo;
    j["targets"] = targets;
    j["machine"]["load_average_after"] = loadAverage();
    return j;
}

}  // namespace lookfar::bench
