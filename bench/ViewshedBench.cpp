// lookfar_bench viewshed: speed, agreement and memory of `lookfar viewshed` (issue 3's targets).
//
// For seeded fractal DEMs (β 2.2, 0–800 m, 10 m cells) of 1024², 2048², 4096² and 8192² cells,
// observer in the middle 10 m above the ground (docs/design.md's notes on engines), unlimited
// reach:
//   - the fast engine in memory: cells per second (median of runs), and the same with a 300 m
//     eye, which sees more and leaves more cells to the exact re-check;
//   - the reference engine (up to 2048²): cells per second, the speed-up of the fast engine and
//     the share of cells on which the two agree;
//   - the whole command (`lookfar viewshed … -o visible.tif`) as a child process: wall time
//     (median) and peak resident memory, against the memory budget DEM bytes + 2 bytes a cell
//     + 64 MiB;
//   - in the same run, the I/O floor: reading the DEM and writing one Byte GeoTIFF of its size
//     with the same creation options (median), and the command's time over it.
// Targets (2-core machine): ≥ 40 M cells/s at 8192²; command ≤ 2× the I/O floor; ≥ 50× the
// reference at 2048²; time growing no faster than n^1.15 from 1024² to 8192²; memory within
// budget. --quick runs 1024² only.
#include <algorithm>
#include <cmath>
#include <cstdio>
#include <fstream>
#include <stdexcept>

#ifdef _OPENMP
#include <omp.h>
#endif

#include "Bench.hpp"
#include "lookfar/io/Dem.hpp"
#include "lookfar/viewshed/Viewshed.hpp"

namespace lookfar::bench {

namespace {

double loadAverage() {
    double load = 0;
    std::ifstream("/proc/loadavg") >> load;
    return load;
}

std::string fmt(const char* format, double v) {
    char buf[64];
    std::snprintf(buf, sizeof buf, format, v);
    return buf;
}

}  // namespace

nlohmann::json benchViewshed(const BenchArgs& args) {
    const std::vector<int> sizes =
        args.quick ? std::vector<int>{1024} : std::vector<int>{1024, 2048, 4096, 8192};
    const int max_reference = 2048;
    const double cell_m = 10.0, eye_m = 10.0, high_eye_m = 300.0;
    constexpr double kMiB = 1024.0 * 1024.0;
    nlohmann::json j;
    int threads = 1;
#ifdef _OPENMP
    threads = omp_get_max_threads();
#endif
    j["machine"] = {{"threads", threads}, {"load_average_before", loadAverage()}};
    j["setup"] = {{"terrain", "fractal, spectral exponent 2.2, 0-800 m, 10 m cells, seed 3003"},
                  {"observer", "middle cell, 10 m above the ground (also 300 m for high_eye)"},
                  {"reach", "unlimited"},
                  {"refraction", 0.13},
                  {"earth_model", "ellipsoid"},
                  {"creation_options", "lookfar's default: tiled 256, DEFLATE, predictor"}};
    nlohmann::json rows = nlohmann::json::array();
    std::map<int, double> fast_s;
    for (int size : sizes) {
        const std::string dem_path =
            args.work_dir + "/viewshed-dem-" + std::to_string(size) + ".tif";
        const std::string out_path =
            args.work_dir + "/viewshed-visible-" + std::to_string(size) + ".tif";
        std::fprintf(stderr, "lookfar_bench viewshed: %d² DEM\n", size);
        writeFractalDem(dem_path, size, cell_m, 3003);
        const double cells = static_cast<double>(size) * size;
        nlohmann::json row;
        row["cells_per_side"] = size;
        row["cells"] = cells;
        row["dem_bytes"] = cells * 4.0;

        // The engines, in memory.
        {
            Dem dem = readDem(dem_path);
            Observer o;
            o.name = "middle";
            o.col = size / 2;
            o.row = size / 2;
            o.height_m = eye_m;
            o.latitude_deg = 50.5;  // the bench DEM lies in UTM 30N near 50.5° N
            EarthModel earth(EarthShape::Ellipsoid, dem.crs.ellipsoid);
            ViewshedOptions opt;
            const int runs = size >= 8192 ? 3 : 5;
            std::vector<double> times;
            ViewshedGrids fast;
            for (int i = 0; i < runs; ++i) {
                times.push_back(
                    timeIt([&] { fast = fastViewshed(dem.z, dem.geometry, earth, o, opt); }));
            }
            const double t_fast = median(times);
            fast_s[size] = t_fast;
            std::int64_t visible = 0;
            for (std::uint8_t v : fast.visible.cells())
                visible += v == kVisible;
            row["fast_engine_runs_s"] = times;
            row["fast_engine_s"] = t_fast;
            row["fast_engine_cells_per_s"] = cells / t_fast;
            row["visible_fraction"] = visible / cells;

            Observer high = o;
            high.height_m = high_eye_m;
            std::vector<double> high_times;
            std::int64_t high_visible = 0;
            for (int i = 0; i < std::max(1, runs / 2); ++i) {
                high_times.push_back(timeIt([&] {
                    ViewshedGrids g = fastViewshed(dem.z, dem.geometry, earth, high, opt);
                    high_visible = 0;
                    for (std::uint8_t v : g.visible.cells())
                        high_visible += v == kVisible;
                }));
            }
            row["high_eye"] = {{"observer_height_m", high_eye_m},
                               {"fast_engine_s", median(high_times)},
                               {"fast_engine_cells_per_s", cells / median(high_times)},
                               {"visible_fraction", high_visible / cells}};

            if (size <= max_reference) {
                ViewshedGrids ref;
                const double t_ref =
                    timeIt([&] { ref = referenceViewshed(dem.z, dem.geometry, earth, o, opt); });
                std::int64_t same = 0;
                for (std::size_t i = 0; i < ref.visible.size(); ++i)
                    same += ref.visible.data()[i] == fast.visible.data()[i];
                row["reference_engine_s"] = t_ref;
                row["reference_engine_cells_per_s"] = cells / t_ref;
                row["speedup_vs_reference"] = t_ref / t_fast;
                row["agreement_with_reference"] = same / cells;
            }
        }

        // The whole command, as users run it, and the I/O floor in the same run.
        const double floor_s = ioFloorSeconds(dem_path, 3);
        const std::string observer = fmt("%.1f", 400000.0 + (size / 2 + 0.5) * cell_m) + "," +
                                     fmt("%.1f", 5600000.0 - (size / 2 + 0.5) * cell_m);
        std::vector<double> command_times;
        std::int64_t peak = 0;
        for (int i = 0; i < 3; ++i) {
            const ChildRun c =
                runChild({args.cli_path, "viewshed", dem_path, "--observer", observer,
                          "--observer-height", "10", "-o", out_path, "--overwrite", "--quiet"});
            if (c.exit_code != 0) {
                throw std::runtime_error("lookfar viewshed failed with exit code " +
                                         std::to_string(c.exit_code));
            }
            command_times.push_back(c.wall_s);
            peak = std::max(peak, c.peak_rss_bytes);
        }
        const double t_cmd = median(command_times);
        const double budget = cells * 4.0 + cells * 2.0 + 64.0 * kMiB;
        row["command_runs_s"] = command_times;
        row["command_s"] = t_cmd;
        row["io_floor_s"] = floor_s;
        row["command_over_io_floor"] = t_cmd / floor_s;
        row["peak_rss_bytes"] = peak;
        row["peak_rss_mib"] = peak / kMiB;
        row["memory_budget_bytes"] = budget;
        row["memory_within_budget"] = peak <= budget;
        rows.push_back(row);
        std::remove(out_path.c_str());
    }
    j["sizes"] = rows;

    // The targets, judged on the figures above.
    nlohmann::json targets;
    auto find = [&](int size) -> const nlohmann::json* {
        for (const auto& r : rows) {
            if (r["cells_per_side"] == size)
                return &r;
        }
        return nullptr;
    };
    if (const auto* r = find(8192)) {
        const double cps = (*r)["fast_engine_cells_per_s"];
        targets["fast_cells_per_s_at_8192"] = {
            {"target", 40e6}, {"measured", cps}, {"met", cps >= 40e6}};
        const double ratio = (*r)["command_over_io_floor"];
        targets["command_over_io_floor_at_8192"] = {
            {"target", 2.0}, {"measured", ratio}, {"met", ratio <= 2.0}};
        const double peak = (*r)["peak_rss_bytes"], budget = (*r)["memory_budget_bytes"];
        targets["peak_memory_at_8192"] = {
            {"target_bytes", budget}, {"measured_bytes", peak}, {"met", peak <= budget}};
    }
    if (const auto* r = find(2048)) {
        const double s = (*r)["speedup_vs_reference"];
        targets["speedup_vs_reference_at_2048"] = {
            {"target", 50.0}, {"measured", s}, {"met", s >= 50.0}};
    }
    if (fast_s.count(1024) && fast_s.count(8192)) {
        // time ∝ n^e with n the number of cells: e = log(t₂/t₁) / log(n₂/n₁).
        const double e = std::log(fast_s[8192] / fast_s[1024]) / std::log(64.0);
        targets["growth_exponent_1024_to_8192"] = {
            {"target", 1.15}, {"measured", e}, {"met", e <= 1.15}};
    }
    for (const auto& r : rows) {
        if (r.contains("agreement_with_reference")) {
            const double a = r["agreement_with_reference"];
            targets["agreement_at_" + std::to_string(r["cells_per_side"].get<int>())] = {
                {"target", 0.995}, {"measured", a}, {"met", a >= 0.995}};
        }
    }
    j["targets"] = targets;
    j["machine"]["load_average_after"] = loadAverage();
    return j;
}

}  // namespace lookfar::bench
