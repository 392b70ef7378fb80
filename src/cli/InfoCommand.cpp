// lookfar info DEM: what lookfar sees in a DEM before any engine runs.
#include <cmath>
#include <cstdio>
#include <limits>

#include "Commands.hpp"
#include "lookfar/core/Errors.hpp"
#include "lookfar/io/Crs.hpp"
#include "lookfar/report/TextTable.hpp"

namespace lookfar::cli {

namespace {

struct InfoState {
    CommonOptions options;
    bool approx = false;
};

/// The overview --approx reads: the coarsest with at least a million cells, else the finest;
/// −1 when the DEM has none.
int approxOverview(const std::vector<std::pair<int, int>>& sizes) {
    int chosen = -1;
    double chosen_cells = 0;
    for (std::size_t i = 0; i < sizes.size(); ++i) {
        const double cells = static_cast<double>(sizes[i].first) * sizes[i].second;
        const bool better =
            chosen < 0 || (cells >= 1e6 ? (chosen_cells < 1e6 || cells < chosen_cells)
                                        : (chosen_cells < 1e6 && cells > chosen_cells));
        if (better) {
            chosen = static_cast<int>(i);
            chosen_cells = cells;
        }
    }
    return chosen;
}

std::string fmt6(double v) {
    char buf[64];
    std::snprintf(buf, sizeof buf, "%.6f", v);
    return buf;
}
void runInfo(const CommonOptions& o, bool approx) {
    RunContext ctx = prepareRun("info", o, {}, {}, DemCells::Later);
    const Dem& dem = ctx.dem;  // described, no cells: they are read strip by strip below
    const GridGeometry& g = dem.geometry;
    std::int64_t nodata_count = 0, valid = 0;
    double zmin = std::numeric_limits<double>::infinity(), zmax = -zmin, sum = 0;
    // Statistics strip by strip, in the order of the cells (the same sums as over the whole
    // grid), in bounded memory: one strip of at least 256 rows, and 64 MiB of GDAL's cache.
    DemReadOptions read;
    read.band = o.band;
    if (!o.z_unit.empty())
        read.z_unit = dem.z_unit;
    std::pair<int, int> overview_size{0, 0};
    if (approx) {
        const auto sizes = demOverviews(o.dem, read);
        read.overview = approxOverview(sizes);
        if (read.overview >= 0)
            overview_size = sizes[read.overview];
    }
    ctx.progress->begin("reading the DEM", read.overview >= 0 ? overview_size.second : g.height());
    readDemStrips(o.dem, read, 256, std::int64_t{64} << 20,
                  [&](int row0, const Grid<float>& strip) {
                      for (float v : strip.cells()) {
                          if (std::isnan(v)) {
                              ++nodata_count;
                              continue;
                          }
                          ++valid;
                          zmin = std::min<double>(zmin, v);
                          zmax = std::max<double>(zmax, v);
                          sum += v;
                      }
                      ctx.progress->advance(row0 + strip.height());
                      if (ctx.progress->cancelled())
                          throw Interrupted();
                  });
    ctx.progress->end();
    const std::int64_t cells_read = nodata_count + valid;
    double west = g.mapX(-0.5), east = g.mapX(g.width() - 0.5);
    double north = g.mapY(-0.5), south = g.mapY(g.height() - 0.5);
    LonLatOf ll(dem.crs.wkt);
    // Lon/lat extent from the corners and edge midpoints (a projected extent is not a box in
    // lon/lat).
    double lon_min = 1e9, lon_max = -1e9, lat_min = 1e9, lat_max = -1e9;
    for (double fx : {0.0, 0.5, 1.0}) {
        for (double fy : {0.0, 0.5, 1.0}) {
            MapPoint p = ll.apply({west + fx * (east - west), north + fy * (south - north)});
            lon_min = std::min(lon_min, p.x);
            lon_max = std::max(lon_max, p.x);
            lat_min = std::min(lat_min, p.y);
            lat_max = std::max(lat_max, p.y);
        }
    }
    double area = 0;
    for (int r = 0; r < g.height(); ++r)
        area += g.cellAreaM2(r) * g.width();

    nlohmann::json j = summaryBase(ctx.run);
    j.erase("parameters");
    std::string hunit = dem.crs.geographic ? "degree" : dem.crs.horizontal_unit.name;
    j["dem"]["driver"] = dem.driver;
    j["dem"]["geographic"] = dem.crs.geographic;
    j["dem"]["horizontal_unit"] = hunit;
    j["dem"]["horizontal_unit_m"] = dem.crs.geographic
                                        ? nlohmann::json(nullptr)
                                        : nlohmann::json(dem.crs.horizontal_unit.metres);
    j["dem"]["vertical_unit"] = dem.z_unit.name;
    j["dem"]["vertical_unit_source"] = dem.z_unit_from_band
                                           ? "band unit type"
                                           : (o.z_unit.empty() ? "assumed metres" : "--z-unit");
    j["dem"]["cell_width_m"] = g.cellWidthM(g.height() / 2);
    j["dem"]["cell_height_m"] = g.cellHeightM(g.height() / 2);
    j["dem"]["pixel_size"] = {g.geotransform()[1], g.geotransform()[5]};
    j["dem"]["extent"] = {{"west", west}, {"south", south}, {"east", east}, {"north", north}};
    j["dem"]["extent_lonlat"] = {
        {"west", lon_min}, {"south", lat_min}, {"east", lon_max}, {"north", lat_max}};
    j["dem"]["area_m2"] = area;
    j["dem"]["ellipsoid"] = {
        {"a", dem.crs.ellipsoid.a},
        {"inverse_flattening", dem.crs.ellipsoid.f > 0 ? 1.0 / dem.crs.ellipsoid.f : 0.0}};
    j["dem"]["nodata_value"] = dem.nodata ? finiteOrNull(*dem.nodata) : nlohmann::json(nullptr);
    j["dem"]["nodata_cells"] = nodata_count;
    j["cells_read"] = cells_read;
    if (approx) {
        // Figures from an overview: cell counts are the overview's, elevations approximate.
        j["approximate"] = read.overview >= 0
                               ? nlohmann::json{{"overview", read.overview},
                                                {"overview_width", overview_size.first},
                                                {"overview_height", overview_size.second}}
                               : nlohmann::json("no overviews: every cell was read");
    }
    j["elevation_m"] = {{"min", valid ? finiteOrNull(zmin) : nullptr},
                        {"max", valid ? finiteOrNull(zmax) : nullptr},
                        {"mean", valid ? finiteOrNull(sum / valid) : nullptr},
                        {"cells_with_data", valid}};

    TextTable t("DEM " + dem.path);
    t.add("driver", dem.driver);
    t.add("size", std::to_string(g.width()) + " × " + std::to_string(g.height()) + " cells");
    t.add("CRS", dem.crs.name + (dem.crs.epsg.empty() ? "" : " (" + dem.crs.epsg + ")"));
    t.add("horizontal unit", hunit);
    t.add("vertical unit",
          dem.z_unit.name + " (" + j["dem"]["vertical_unit_source"].get<std::string>() + ")");
    t.add("cell size", formatNumber(g.cellWidthM(g.height() / 2), 3) + " m × " +
                           formatNumber(g.cellHeightM(g.height() / 2), 3) + " m" +
                           (dem.crs.geographic ? " (at the middle row)" : ""));
    t.add("extent (x)", fmtg(west) + " to " + fmtg(east));
    t.add("extent (y)", fmtg(south) + " to " + fmtg(north));
    t.add("longitude", fmt6(lon_min) + "° to " + fmt6(lon_max) + "°");
    t.add("latitude", fmt6(lat_min) + "° to " + fmt6(lat_max) + "°");
    t.add("area", formatArea(area));
    t.add("no-data value", dem.nodata ? fmtg(*dem.nodata) : "none");
    t.add("no-data cells", formatNumber(static_cast<double>(nodata_count), 0));
    t.add("cells read",
          formatNumber(static_cast<double>(cells_read), 0) +
              (read.overview >= 0 ? " of overview " + std::to_string(overview_size.first) + " × " +
                                        std::to_string(overview_size.second) +
                                        " (--approx: counts and elevations of the overview)"
                                  : " (all, strip by strip)"));
    if (valid) {
        t.add("elevation", formatNumber(zmin, 2) + " to " + formatNumber(zmax, 2) + " m, mean " +
                               formatNumber(sum / valid, 2) + " m");
    } else {
        t.add("elevation", "no cell has data");
    }
    finishSummary(ctx, j, t.render());
}

}  // namespace

Command addInfoCommand(CLI::App& root) {
    auto state = std::make_shared<InfoState>();
    CLI::App* app = root.add_subcommand(
        "info", "describe a DEM: size, CRS, units, cell size, extent, elevations");
    addCommonOptions(app, state->options, 0);
    app->add_flag("--approx", state->approx,
                  "statistics from the DEM's overview of at least a million cells (the coarsest "
                  "such, else the finest), when it has overviews: quick on large DEMs; cell counts "
                  "and elevations are then the overview's")
        ->group("Input");
    return {app, [state] { runInfo(state->options, state->approx); }};
}

}  // namespace lookfar::cli
