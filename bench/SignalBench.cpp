// lookfar_bench signal: cells per second of `lookfar signal` (the reference engine: each cell's
// profile on its own, O(distance) per cell) on seeded fractal terrain at 10 m cells, the
// transmitter 30 m above the middle cell, 450 MHz, unlimited reach, and the peak memory. Runs the
// built CLI as a child; reports medians. Issue 14 item 5 asks ≥ 10 M cells/s at 4096² from a
// fast engine, which does not exist yet: these figures are the reference's, the baseline it will
// be measured against.
//   full:    256², 512² and 1024², 3 runs each (+1 on 1 thread at 512²)
//   --quick: 256², 1 run
#include <algorithm>
#include <cstdio>
#include <fstream>

#include "Bench.hpp"

namespace lookfar::bench {

nlohmann::json benchSignal(const BenchArgs& args) {
    const std::vector<int> sizes =
        args.quick ? std::vector<int>{256} : std::vector<int>{256, 512, 1024};
    const int repeats = args.quick ? 1 : 3;
    const double cell_m = 10.0;
    double load_before = 0;
    std::ifstream("/proc/loadavg") >> load_before;
    nlohmann::json rows = nlohmann::json::array();
    for (int size : sizes) {
        const std::string dem = args.work_dir + "/signal-dem-" + std::to_string(size) + ".tif";
        const std::string out = args.work_dir + "/signal-loss.tif";
        writeFractalDem(dem, size, cell_m, 1414);
        char tx[64];
        std::snprintf(tx, sizeof tx, "%.1f,%.1f", 400000.0 + (size / 2 + 0.5) * cell_m,
                      5600000.0 - (size / 2 + 0.5) * cell_m);
        auto run = [&](const std::vector<std::string>& extra) {
            std::vector<std::string> argv = {args.cli_path,     "signal", dem,  "--tx", tx,
                                             "--frequency-mhz", "450",    "-o", out,    "--quiet",
                                             "--overwrite"};
            argv.insert(argv.end(), extra.begin(), extra.end());
            const ChildRun c = runChild(argv);
            if (c.exit_code != 0)
                throw std::runtime_error("lookfar signal failed with exit code " +
                                         std::to_string(c.exit_code));
            return c;
        };
        std::vector<double> times;
        std::int64_t peak = 0;
        for (int i = 0; i < repeats; ++i) {
            const ChildRun c = run({});
            times.push_back(c.wall_s);
            peak = std::max(peak, c.peak_rss_bytes);
        }
        const double med = median(times);
        const double cells = static_cast<double>(size) * size;
        nlohmann::json row = {{"dem_cells", {size, size}},
                              {"engine", "reference"},
                              {"runs_wall_s", times},
                              {"median_wall_s", med},
                              {"cells_per_s", med > 0 ? cells / med : 0},
                              {"peak_rss_bytes", peak}};
        if (!args.quick && size == 512) {
            const ChildRun one = run({"--threads", "1"});
            row["one_thread_wall_s"] = one.wall_s;
            row["speedup_all_threads_vs_one"] = med > 0 ? one.wall_s / med : 0;
        }
        rows.push_back(row);
        std::remove(out.c_str());
    }
    nlohmann::json j;
    j["cell_m"] = cell_m;
    j["frequency_mhz"] = 450;
    j["tx_height_m"] = 30;
    j["reach"] = "unlimited";
    j["sizes"] = rows;
    j["fast_engine"] = "not written yet (issue 14 item 5)";
    j["quick"] = args.quick;
    j["load_average_1min_before"] = load_before;
    return j;
}

}  // namespace lookfar::bench
