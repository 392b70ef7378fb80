// lookfar_bench scale: work in proportion to the question, not to the file (issue 13).
//
// One seeded fractal tile (4096² cells of 10 m, Float32 GeoTIFF) is generated, and a VRT mosaic
// of 10 × 10 copies of it (40960² cells, 6.7 GB as Float32) is written next to it: nothing of
// it is committed. Then, as child processes of the built CLI (median wall time of 3 runs, peak
// resident memory):
//   - `lookfar viewshed MOSAIC --observer (middle) --reach 5km -o v.tif` (the default --extent
//     dem: a 40960² raster of which only the blocks within reach are stored), and the same with
//     --extent reach;
//   - the same viewshed on a GeoTIFF cut from the mosaic to the window that run read (the
//     "cropped DEM"), and the check that both see the same cells.
//   - `lookfar info MOSAIC`, which reads every cell strip by strip.
//   - `lookfar horizon MOSAIC16 --directions 16 --reach 2km --svf s.tif --memory 512M` over a
//     VRT of 4 × 4 copies of the tile (16384²), worked tile by tile, against the same command on
//     the 4096² tile alone, held in memory: cell-directions per second and peak memory.
// Targets (2-core machine): the mosaic viewshed within 2× the cropped one, under 300 MiB; info
// under 300 MiB; the tiled horizon under 640 MiB and at least 70 % of the in-memory rate.
// --quick: a 1024² tile, a 4 × 4 mosaic, 2 km reach, 1 run each; the horizon with --memory 64M.
#include <cstdio>
#include <fstream>
#include <stdexcept>

#include "Bench.hpp"
#include "lookfar/io/Dem.hpp"
#include "lookfar/io/RasterWriter.hpp"

namespace lookfar::bench {

namespace {

/// A VRT of n × n copies of the square tile `tile` (its path relative to the VRT's folder).
void writeMosaicVrt(const std::string& path, const std::string& tile_name, int tile, int n,
                    double cell_m) {
    std::ofstream f(path);
    const long long size = static_cast<long long>(tile) * n;
    f << "<VRTDataset rasterXSize=\"" << size << "\" rasterYSize=\"" << size << "\">\n"
      << "  <SRS>EPSG:32630</SRS>\n"
      << "  <GeoTransform>400000, " << cell_m << ", 0, 5600000, 0, " << -cell_m
      << "</GeoTransform>\n"
      << "  <VRTRasterBand dataType=\"Float32\" band=\"1\">\n"
      << "    <NoDataValue>-32768</NoDataValue>\n"
      << "    <UnitType>m</UnitType>\n";
    for (int i = 0; i < n; ++i) {
        for (int k = 0; k < n; ++k) {
            f << "    <SimpleSource>\n"
              << "      <SourceFilename relativeToVRT=\"1\">" << tile_name << "</SourceFilename>\n"
              << "      <SourceBand>1</SourceBand>\n"
              << "      <SourceProperties RasterXSize=\"" << tile << "\" RasterYSize=\"" << tile
              << "\" DataType=\"Float32\" BlockXSize=\"256\" BlockYSize=\"256\"/>\n"
              << "      <SrcRect xOff=\"0\" yOff=\"0\" xSize=\"" << tile << "\" ySize=\"" << tile
              << "\"/>\n"
              << "      <DstRect xOff=\"" << static_cast<long long>(k) * tile << "\" yOff=\""
              << static_cast<long long>(i) * tile << "\" xSize=\"" << tile << "\" ySize=\"" << tile
              << "\"/>\n"
              << "    </SimpleSource>\n";
        }
    }
    f << "  </VRTRasterBand>\n</VRTDataset>\n";
    if (!f)
        throw std::runtime_error("cannot write " + path);
}

/// Cuts the window (col, row, width, height) out of `dem_path` into a Float32 GeoTIFF.
void cropDem(const std::string& dem_path, const std::string& out, int col, int row, int width,
             int height) {
    DemReadOptions read;
    read.win_col = col;
    read.win_row = row;
    read.win_width = width;
    read.win_height = height;
    const Dem dem = readDem(dem_path, read);
    RasterSpec rs;
    rs.path = out;
    rs.width = width;
    rs.height = height;
    rs.type = PixelType::Float32;
    rs.nodata = -32768;
    rs.geotransform = dem.geometry.geotransform();
    rs.crs_wkt = dem.crs.wkt;
    rs.unit_type = "m";
    std::remove(out.c_str());
    RasterWriter w(rs);
    w.writeBand(1, dem.z.data());  // no NaN: the fractal tile has data everywhere
    w.commit();
}

std::int64_t fileBytes(const std::string& path) {
    std::ifstream f(path, std::ios::binary | std::ios::ate);
    return f ? static_cast<std::int64_t>(f.tellg()) : -1;
}

}  // namespace

nlohmann::json benchScale(const BenchArgs& args) {
    const int tile = args.quick ? 1024 : 4096;
    const int n = args.quick ? 4 : 10;
    const int repeats = args.quick ? 1 : 3;
    const double cell_m = 10.0;
    const std::string reach = args.quick ? "2km" : "5km";
    constexpr double kMiB = 1024.0 * 1024.0;

    const std::string tile_name = "scale-tile-" + std::to_string(tile) + ".tif";
    const std::string tile_path = args.work_dir + "/" + tile_name;
    const std::string mosaic =
        args.work_dir + "/scale-mosaic-" + std::to_string(n) + "x" + std::to_string(n) + ".vrt";
    writeFractalDem(tile_path, tile, cell_m, 1313);
    writeMosaicVrt(mosaic, tile_name, tile, n, cell_m);
    const long long size = static_cast<long long>(tile) * n;
    // The observer stands 10 m above the middle cell of the mosaic.
    const long long mid = size / 2;
    char observer[96];
    std::snprintf(observer, sizeof observer, "%.1f,%.1f", 400000.0 + (mid + 0.5) * cell_m,
                  5600000.0 - (mid + 0.5) * cell_m);

    double load_before = 0;
    std::ifstream("/proc/loadavg") >> load_before;

    struct Measured {
        std::vector<double> times;
        std::int64_t peak = 0;
        nlohmann::json summary;
        std::int64_t output_bytes = 0;
    };
    auto measure = [&](const std::string& dem, const std::string& tag,
                       const std::vector<std::string>& extra) {
        Measured m;
        const std::string out = args.work_dir + "/scale-out-" + tag + ".tif";
        const std::string summary = args.work_dir + "/scale-out-" + tag + ".json";
        for (int i = 0; i < repeats; ++i) {
            std::vector<std::string> argv = {
                args.cli_path, "viewshed",          dem,      "--observer", observer, "--reach",
                reach,         "--observer-height", "10",     "-o",         out,      "--summary",
                summary,       "--overwrite",       "--quiet"};
            argv.insert(argv.end(), extra.begin(), extra.end());
            const ChildRun c = runChild(argv);
            if (c.exit_code != 0)
                throw std::runtime_error("lookfar viewshed (" + tag + ") failed with exit code " +
                                         std::to_string(c.exit_code));
            m.times.push_back(c.wall_s);
            m.peak = std::max(m.peak, c.peak_rss_bytes);
        }
        m.summary = nlohmann::json::parse(std::ifstream(summary));
        m.output_bytes = fileBytes(out);
        std::remove(out.c_str());
        return m;
    };
    auto figures = [&](const Measured& m) {
        const auto& o = m.summary["observers"][0];
        return nlohmann::json{{"runs_wall_s", m.times},
                              {"median_wall_s", median(m.times)},
                              {"peak_rss_bytes", m.peak},
                              {"peak_rss_mib", m.peak / kMiB},
                              {"output_bytes", m.output_bytes},
                              {"extent", m.summary["extent"]},
                              {"visible_cells", o["visible_cells"]},
                              {"evaluated_cells", o["evaluated_cells"]}};
    };

    const Measured on_mosaic = measure(mosaic, "mosaic", {});
    const Measured on_mosaic_reach = measure(mosaic, "mosaic-reach", {"--extent", "reach"});
    const auto& w = on_mosaic.summary["extent"]["window"];
    const std::string cropped = args.work_dir + "/scale-cropped.tif";
    cropDem(mosaic, cropped, w["col"], w["row"], w["width"], w["height"]);
    const Measured on_cropped = measure(cropped, "cropped", {});

    nlohmann::json j;
    j["tile_cells"] = {tile, tile};
    j["mosaic_cells"] = {size, size};
    j["mosaic_tiles"] = n * n;
    j["mosaic_float32_bytes"] = static_cast<double>(size) * size * 4;
    j["cell_m"] = cell_m;
    j["reach"] = reach;
    j["observer"] = observer;
    j["viewshed_on_mosaic"] = figures(on_mosaic);
    j["viewshed_on_mosaic_extent_reach"] = figures(on_mosaic_reach);
    j["viewshed_on_cropped_dem"] = figures(on_cropped);
    const double ratio = median(on_mosaic.times) / median(on_cropped.times);
    j["mosaic_over_cropped_time"] = ratio;
    const bool same = on_mosaic.summary["observers"][0]["visible_cells"] ==
                          on_cropped.summary["observers"][0]["visible_cells"] &&
                      on_mosaic.summary["observers"][0]["evaluated_cells"] ==
                          on_cropped.summary["observers"][0]["evaluated_cells"];
    j["same_cells_seen"] = same;
    j["target_time_ratio"] = 2.0;
    j["target_peak_mib"] = 300.0;
    const std::string info_json = args.work_dir + "/scale-out-info.json";
    const ChildRun info =
        runChild({args.cli_path, "info", mosaic, "--quiet", "--summary", info_json, "--overwrite"});
    if (info.exit_code != 0)
        throw std::runtime_error("lookfar info failed with exit code " +
                                 std::to_string(info.exit_code));
    const nlohmann::json info_summary = nlohmann::json::parse(std::ifstream(info_json));
    j["info_on_mosaic"] = {{"wall_s", info.wall_s},
                           {"peak_rss_bytes", info.peak_rss_bytes},
                           {"peak_rss_mib", info.peak_rss_bytes / kMiB},
                           {"cells_read", info_summary["cells_read"]},
                           {"cells_per_s", info_summary["cells_read"].get<double>() / info.wall_s}};
    j["target_info_peak_mib"] = 300.0;
    j["targets_met"] = !args.quick && same && ratio <= 2.0 && on_mosaic.peak / kMiB < 300.0 &&
                       info.peak_rss_bytes / kMiB < 300.0;
    // The tiled horizon, against the in-memory rate on one tile.
    const std::string mosaic4 = args.work_dir + "/scale-mosaic-4x4.vrt";
    writeMosaicVrt(mosaic4, tile_name, tile, 4, cell_m);
    const std::string memory = args.quick ? "64M" : "512M";
    auto horizon = [&](const std::string& dem, const std::string& tag,
                       const std::vector<std::string>& extra) {
        const std::string out = args.work_dir + "/scale-out-" + tag + ".tif";
        const std::string summary = args.work_dir + "/scale-out-" + tag + ".json";
        std::vector<std::string> argv = {
            args.cli_path, "horizon", dem,         "--directions", "16",          "--reach", "2km",
            "--svf",       out,       "--summary", summary,        "--overwrite", "--quiet"};
        argv.insert(argv.end(), extra.begin(), extra.end());
        const ChildRun c = runChild(argv);
        if (c.exit_code != 0)
            throw std::runtime_error("lookfar horizon (" + tag + ") failed with exit code " +
                                     std::to_string(c.exit_code));
        const nlohmann::json s = nlohmann::json::parse(std::ifstream(summary));
        std::remove(out.c_str());
        const GridGeometry g = probeDem(dem).geometry;
        const double cell_dirs = 16.0 * g.width() * g.height();
        return nlohmann::json{{"cells", {g.width(), g.height()}},
                              {"wall_s", c.wall_s},
                              {"cell_directions_per_s", cell_dirs / c.wall_s},
                              {"peak_rss_bytes", c.peak_rss_bytes},
                              {"peak_rss_mib", c.peak_rss_bytes / kMiB},
                              {"tiles", s["horizon"].value("tiles", nlohmann::json())}};
    };
    const nlohmann::json in_memory = horizon(tile_path, "horizon-tile", {});
    const nlohmann::json tiled = horizon(mosaic4, "horizon-mosaic", {"--memory", memory});
    const double rate_ratio = tiled["cell_directions_per_s"].get<double>() /
                              in_memory["cell_directions_per_s"].get<double>();
    j["tiled_horizon"] = {{"command",
                           "lookfar horizon MOSAIC --directions 16 --reach 2km --svf "
                           "FILE --memory " +
                               memory},
                          {"memory", memory},
                          {"in_memory_one_tile", in_memory},
                          {"tiled_mosaic", tiled},
                          {"rate_over_in_memory", rate_ratio},
                          {"target_rate_ratio", 0.7},
                          {"target_peak_mib", 640.0}};
    j["targets_met"] = j["targets_met"].get<bool>() && rate_ratio >= 0.7 &&
                       tiled["peak_rss_mib"].get<double>() < 640.0;
    j["quick"] = args.quick;
    j["load_average_1min_before"] = load_before;
    std::remove(cropped.c_str());
    return j;
}

}  // namespace lookfar::bench
