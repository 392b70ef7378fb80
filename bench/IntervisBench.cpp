// lookfar_bench intervis: time of `lookfar intervis` on a network of stations over fractal
// terrain at 10 m cells (the target of issue 5: 500 stations, pairs up to 20 km apart, under
// 30 s on the project's 2-core machine). Runs the built CLI as a child; reports medians.
//   full:    2048² DEM (20.48 km square), 500 stations, --reach 20000, 3 runs (+1 on 1 thread)
//   --quick: 512² DEM, 100 stations, 1 run each
#include <cstdio>
#include <fstream>
#include <random>

#include "Bench.hpp"

namespace lookfar::bench {

nlohmann::json benchIntervis(const BenchArgs& args) {
    const int size = args.quick ? 512 : 2048;
    const int stations = args.quick ? 100 : 500;
    const int repeats = args.quick ? 1 : 3;
    const double cell_m = 10.0, reach_m = 20000.0;
    const std::string dem = args.work_dir + "/intervis-dem-" + std::to_string(size) + ".tif";
    const std::string csv =
        args.work_dir + "/intervis-stations-" + std::to_string(stations) + ".csv";
    const std::string out = args.work_dir + "/intervis-matrix.csv";
    const std::string summary = args.work_dir + "/intervis-summary.json";
    writeFractalDem(dem, size, cell_m, 5005);
    {
        // Stations at seeded random cell centres (the DEM's origin is 400000, 5600000), masts of
        // 5–30 m.
        std::mt19937 rng(20240611);
        std::uniform_int_distribution<int> cell(0, size - 1);
        std::uniform_real_distribution<double> mast(5.0, 30.0);
        std::ofstream f(csv);
        f << "name,x,y,height\n";
        for (int i = 0; i < stations; ++i) {
            const int c = cell(rng), r = cell(rng);
            char line[128];
            std::snprintf(line, sizeof line, "st%03d,%.1f,%.1f,%.1f\n", i + 1,
                          400000.0 + (c + 0.5) * cell_m, 5600000.0 - (r + 0.5) * cell_m, mast(rng));
            f << line;
        }
    }
    // The machine is shared: the load before the runs says how far the times are inflated.
    double load_before = 0;
    std::ifstream("/proc/loadavg") >> load_before;
    auto run = [&](const std::vector<std::string>& extra) {
        std::vector<std::string> argv = {args.cli_path, "intervis", dem,          "--stations",
                                         csv,           "-o",       out,          "--reach",
                                         "20000",       "--quiet",  "--overwrite"};
        argv.insert(argv.end(), extra.begin(), extra.end());
        return runChild(argv);
    };
    std::vector<double> times;
    std::int64_t peak = 0;
    for (int i = 0; i < repeats; ++i) {
        const ChildRun c = run(i == 0 ? std::vector<std::string>{"--summary", summary}
                                      : std::vector<std::string>{});
        if (c.exit_code != 0)
            throw std::runtime_error("lookfar intervis failed with exit code " +
                                     std::to_string(c.exit_code));
        times.push_back(c.wall_s);
        peak = std::max(peak, c.peak_rss_bytes);
    }
    const ChildRun one = run({"--threads", "1"});
    nlohmann::json s = nlohmann::json::parse(std::ifstream(summary));
    const double med = median(times);
    const std::int64_t judged = s["pairs_within_reach"].get<std::int64_t>() * 2;
    nlohmann::json j;
    j["dem_cells"] = {size, size};
    j["cell_m"] = cell_m;
    j["stations"] = stations;
    j["reach_m"] = reach_m;
    j["ordered_pairs_judged"] = judged;
    j["pairs_visible"] = s["pairs_visible"];
    j["runs_wall_s"] = times;
    j["median_wall_s"] = med;
    j["one_thread_wall_s"] = one.wall_s;
    j["speedup_all_threads_vs_one"] = med > 0 ? one.wall_s / med : 0;
    j["median_us_per_ordered_pair"] = judged > 0 ? 1e6 * med / judged : 0;
    j["peak_rss_bytes"] = peak;
    j["target_s"] = 30.0;
    j["target_met"] = !args.quick && med < 30.0;
    j["quick"] = args.quick;
    j["load_average_1min_before"] = load_before;
    std::remove(out.c_str());
    return j;
}

}  // namespace lookfar::bench
