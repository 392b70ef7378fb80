#include "lookfar/run/InfoRun.hpp"

#include <cmath>
#include <cstdio>
#include <limits>
#include <utility>

#include "lookfar/core/Errors.hpp"
#include "lookfar/io/Crs.hpp"
#include "lookfar/report/TextTable.hpp"

namespace lookfar::run {

namespace {

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
    return printfNumber("%.6f", v);
}

/// What info measures of the DEM.
struct DemFigures {
    std::int64_t nodata_count = 0, valid = 0;
    double zmin = std::numeric_limits<double>::infinity(), zmax = -zmin, sum = 0;
    int overview = -1;  ///< the overview read (--approx), −1 for the full resolution
    std::pair<int, int> overview_size{0, 0};
    double west = 0, east = 0, south = 0, north = 0;
    double lon_min = 1e9, lon_max = -1e9, lat_min = 1e9, lat_max = -1e9;
    double area_m2 = 0;
    std::string horizontal_unit, vertical_unit_source;
    ImplausibleCells implausible;
};

/// Elevation statistics strip by strip, in the order of the cells (the same sums as over the
/// whole grid), in bounded memory: one strip of at least 256 rows, and 64 MiB of GDAL's cache.
void readStatistics(const RunContext& ctx, bool approx, DemFigures& f) {
    const CommonOptions& o = ctx.options;
    DemReadOptions read;
    read.band = o.band;
    if (!o.z_unit.empty())
        read.z_unit = ctx.dem.z_unit;
    read.allow_south_up = true;
    if (approx) {
        const auto sizes = demOverviews(o.dem, read);
        read.overview = approxOverview(sizes);
        if (read.overview >= 0)
            f.overview_size = sizes[read.overview];
    }
    f.overview = read.overview;
    Progress& progress = *ctx.progress;
    progress.begin("reading the DEM",
                   read.overview >= 0 ? f.overview_size.second : ctx.dem.geometry.height());
    readDemStrips(o.dem, read, 256, std::int64_t{64} << 20,
                  [&](int row0, const Grid<float>& strip) {
                      for (int r = 0; r < strip.height(); ++r)
                          f.implausible.scan(strip.row(r), strip.width(), 0, row0 + r);
                      for (float v : strip.cells()) {
                          if (std::isnan(v)) {
                              ++f.nodata_count;
                              continue;
                          }
                          ++f.valid;
                          f.zmin = std::min<double>(f.zmin, v);
                          f.zmax = std::max<double>(f.zmax, v);
                          f.sum += v;
                      }
                      progress.advance(row0 + strip.height());
                      if (progress.cancelled())
                          throw Interrupted();
                  });
    progress.end();
    if (f.implausible.count > 0) {
        progress.warn(f.implausible.sentence(ctx.dem.path) +
                      (f.overview >= 0 ? " (cells of the overview --approx read)" : ""));
    }
}

/// Extent in map units and in lon/lat, area, units.
void measureExtent(const RunContext& ctx, DemFigures& f) {
    const Dem& dem = ctx.dem;
    const GridGeometry& g = dem.geometry;
    f.west = g.mapX(-0.5), f.east = g.mapX(g.width() - 0.5);
    f.north = g.mapY(-0.5), f.south = g.mapY(g.height() - 0.5);
    if (dem.south_up)
        std::swap(f.north, f.south);
    LonLatOf ll(dem.crs.wkt);
    // Lon/lat extent from the corners and edge midpoints (a projected extent is not a box in
    // lon/lat).
    for (double fx : {0.0, 0.5, 1.0}) {
        for (double fy : {0.0, 0.5, 1.0}) {
            MapPoint p =
                ll.apply({f.west + fx * (f.east - f.west), f.north + fy * (f.south - f.north)});
            f.lon_min = std::min(f.lon_min, p.x);
            f.lon_max = std::max(f.lon_max, p.x);
            f.lat_min = std::min(f.lat_min, p.y);
            f.lat_max = std::max(f.lat_max, p.y);
        }
    }
    for (int r = 0; r < g.height(); ++r)
        f.area_m2 += g.cellAreaM2(r) * g.width();
    f.horizontal_unit = dem.crs.geographic ? "degree" : dem.crs.horizontal_unit.name;
    f.vertical_unit_source = dem.z_unit_from_band
                                 ? "band unit type"
                                 : (ctx.options.z_unit.empty() ? "assumed metres" : "--z-unit");
}

nlohmann::json demJson(const RunContext& ctx, const DemFigures& f) {
    const Dem& dem = ctx.dem;
    const GridGeometry& g = dem.geometry;
    nlohmann::json d;
    d["driver"] = dem.driver;
    d["geographic"] = dem.crs.geographic;
    d["horizontal_unit"] = f.horizontal_unit;
    d["horizontal_unit_m"] = dem.crs.geographic ? nlohmann::json(nullptr)
                                                : nlohmann::json(dem.crs.horizontal_unit.metres);
    d["vertical_unit"] = dem.z_unit.name;
    d["vertical_unit_source"] = f.vertical_unit_source;
    d["cell_width_m"] = g.cellWidthM(g.height() / 2);
    d["cell_height_m"] = g.cellHeightM(g.height() / 2);
    d["pixel_size"] = {g.geotransform()[1], g.geotransform()[5]};
    d["south_up"] = dem.south_up;
    d["extent"] = {{"west", f.west}, {"south", f.south}, {"east", f.east}, {"north", f.north}};
    d["extent_lonlat"] = {
        {"west", f.lon_min}, {"south", f.lat_min}, {"east", f.lon_max}, {"north", f.lat_max}};
    d["area_m2"] = f.area_m2;
    d["ellipsoid"] = {
        {"a", dem.crs.ellipsoid.a},
        {"inverse_flattening", dem.crs.ellipsoid.f > 0 ? 1.0 / dem.crs.ellipsoid.f : 0.0}};
    d["nodata_value"] = dem.nodata ? finiteOrNull(*dem.nodata) : nlohmann::json(nullptr);
    d["nodata_cells"] = f.nodata_count;
    return d;
}

nlohmann::json summaryJson(const RunContext& ctx, const DemFigures& f, bool approx) {
    nlohmann::json j = summaryBase(ctx.run);
    j.erase("parameters");
    j["dem"].update(demJson(ctx, f));
    j["cells_read"] = f.nodata_count + f.valid;
    if (approx) {
        // Figures from an overview: cell counts are the overview's, elevations approximate.
        j["approximate"] = f.overview >= 0
                               ? nlohmann::json{{"overview", f.overview},
                                                {"overview_width", f.overview_size.first},
                                                {"overview_height", f.overview_size.second}}
                               : nlohmann::json("no overviews: every cell was read");
    }
    const bool any = f.valid > 0;
    j["elevation_m"] = {{"min", any ? finiteOrNull(f.zmin) : nullptr},
                        {"max", any ? finiteOrNull(f.zmax) : nullptr},
                        {"mean", any ? finiteOrNull(f.sum / f.valid) : nullptr},
                        {"cells_with_data", f.valid},
                        {"implausible_cells", f.implausible.count}};
    return j;
}

std::string summaryTable(const RunContext& ctx, const DemFigures& f) {
    const Dem& dem = ctx.dem;
    const GridGeometry& g = dem.geometry;
    TextTable t("DEM " + dem.path);
    t.add("driver", dem.driver);
    t.add("size", std::to_string(g.width()) + " × " + std::to_string(g.height()) + " cells");
    t.add("CRS", dem.crs.name + (dem.crs.epsg.empty() ? "" : " (" + dem.crs.epsg + ")"));
    t.add("horizontal unit", f.horizontal_unit);
    t.add("vertical unit", dem.z_unit.name + " (" + f.vertical_unit_source + ")");
    t.add("cell size", formatNumber(g.cellWidthM(g.height() / 2), 3) + " m × " +
                           formatNumber(g.cellHeightM(g.height() / 2), 3) + " m" +
                           (dem.crs.geographic ? " (at the middle row)" : ""));
    if (dem.south_up) {
        t.add("orientation",
              "south-up (rows run northwards): the other commands refuse it; warp "
              "it to a north-up grid first");
    }
    t.add("extent (x)", fmtg(f.west) + " to " + fmtg(f.east));
    t.add("extent (y)", fmtg(f.south) + " to " + fmtg(f.north));
    t.add("longitude", fmt6(f.lon_min) + "° to " + fmt6(f.lon_max) + "°");
    t.add("latitude", fmt6(f.lat_min) + "° to " + fmt6(f.lat_max) + "°");
    t.add("area", formatArea(f.area_m2));
    t.add("no-data value", dem.nodata ? fmtg(*dem.nodata) : "none");
    t.add("no-data cells", formatNumber(static_cast<double>(f.nodata_count), 0));
    t.add("cells read",
          formatNumber(static_cast<double>(f.nodata_count + f.valid), 0) +
              (f.overview >= 0 ? " of overview " + std::to_string(f.overview_size.first) + " × " +
                                     std::to_string(f.overview_size.second) +
                                     " (--approx: counts and elevations of the overview)"
                               : " (all, strip by strip)"));
    if (f.valid) {
        t.add("elevation", formatNumber(f.zmin, 2) + " to " + formatNumber(f.zmax, 2) +
                               " m, mean " + formatNumber(f.sum / f.valid, 2) + " m");
    } else {
        t.add("elevation", "no cell has data");
    }
    return t.render();
}

}  // namespace

CommandHelp InfoRun::help() const {
    return {"info", "describe a DEM: size, CRS, units, cell size, extent, elevations", ""};
}

OptionTable InfoRun::declare() {
    OptionTable t = commonOptions(options.common, 0);
    t.push_back(OptionDecl("--approx", &options.approx,
                           "statistics from the DEM's overview of at least a million cells (the "
                           "coarsest such, else the finest), when it has overviews: quick on "
                           "large DEMs; cell counts and elevations are then the overview's",
                           "Input"));
    return t;
}

RunReport InfoRun::run(const RunEnv& env) {
    // Validate and open: the DEM described, no cells (they are read strip by strip).
    RunContext ctx = prepareRun(env, "info", options.common, {}, {}, DemCells::Describe);
    DemFigures f;
    readStatistics(ctx, options.approx, f);
    measureExtent(ctx, f);
    return finishRun(ctx, summaryJson(ctx, f, options.approx), summaryTable(ctx, f));
}

}  // namespace lookfar::run
