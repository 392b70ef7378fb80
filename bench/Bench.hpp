#pragma once
// lookfar_bench: speed and memory figures written as JSON (never asserted in unit tests).
// Each benchmark is one function; tools/bench NAME runs `lookfar_bench NAME --out FILE`.
#include <cstdint>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "../tests/support/ChildRun.hpp"
#include "lookfar/core/Grid.hpp"

namespace lookfar::bench {

struct BenchArgs {
    std::vector<std::string> args;  ///< arguments after the benchmark's name
    std::string cli_path;           ///< the built lookfar binary
    std::string work_dir;           ///< scratch folder for generated DEMs and outputs
    bool quick = false;             ///< --quick: smallest sizes only (for a smoke run)
};

/// A command run as a child process: its wall time and peak resident memory (shared with the
/// tests).
using testing::ChildRun;
using testing::runChild;
/// Median of the values.
double median(std::vector<double> values);
/// Peak resident memory of this process so far, bytes.
std::int64_t selfPeakRssBytes();
/// Writes a seeded fractal DEM (β 2.2, 0–800 m) of size × size cells of `cell_m` metres in
/// EPSG:32630 as a Float32 GeoTIFF with lookfar's default creation options.
void writeFractalDem(const std::string& path, int size, double cell_m, std::uint64_t seed);
/// I/O floor of a command on `dem_path`: the median time (of `repeats`) to read the DEM and write
/// one Byte GeoTIFF of the same size with the default creation options.
double ioFloorSeconds(const std::string& dem_path, int repeats);
/// Wall-clock seconds of a callable (steady clock).
template <typename F>
double timeIt(F&& f);

nlohmann::json benchViewshed(const BenchArgs& args);
nlohmann::json benchHorizon(const BenchArgs& args);
nlohmann::json benchIntervis(const BenchArgs& args);
nlohmann::json benchScale(const BenchArgs& args);
nlohmann::json benchSignal(const BenchArgs& args);

}  // namespace lookfar::bench

#include <chrono>
template <typename F>
double lookfar::bench::timeIt(F&& f) {
    auto t0 = std::chrono::steady_clock::now();
    f();
    return std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
}
