#include "lookfar/run/RunContext.hpp"

#include <strings.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <map>

#ifdef _OPENMP
#include <omp.h>
#endif

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/MemorySize.hpp"
#include "lookfar/core/Text.hpp"
#include "lookfar/core/Units.hpp"
#include "lookfar/io/FileNames.hpp"

namespace lookfar::run {

namespace {

/// The common option values a run needs once they are checked (exit 2 on a bad one).
struct CheckedCommon {
    double observer_height_m = 0, target_height_m = 0, reach_m = 0, radius_m = 0;
    EarthShape shape = EarthShape::Ellipsoid;
    std::optional<LinearUnit> z_unit;
    MemoryShares memory;
};

CheckedCommon checkCommonOptions(const CommonOptions& options) {
    CheckedCommon c;
    c.observer_height_m = parseHeightOption(options.observer_height, "--observer-height");
    c.target_height_m = parseHeightOption(options.target_height, "--target-height");
    c.reach_m = parseReachOption(options.reach);
    c.memory =
        splitMemoryBudget(options.memory.empty() ? defaultMemoryBudget()
                                                 : parseMemorySize(options.memory, "--memory"));
    c.shape = parseEarthShape(options.earth_model);
    c.radius_m = parseEarthRadiusOption(options.earth_radius, options.earth_model);
    EarthModel probe_earth(c.shape, Ellipsoid::wgs84(), c.radius_m,
                           options.refraction);  // validates k
    if (!options.z_unit.empty()) {
        c.z_unit = parseLinearUnit(options.z_unit);
        if (!c.z_unit)
            throw UsageError("--z-unit: '" + echoText(options.z_unit) + "' is not m, ft or us-ft");
    }
    if (!options.crs.empty())
        validateCrs(options.crs, "--crs");
    checkCreationOptions(options.creation_options, "--co");  // GDAL's own list, before any work
#ifdef _OPENMP
    if (options.threads > 0)
        omp_set_num_threads(options.threads);
#endif
    return c;
}

/// Raster outputs are GeoTIFFs and vector outputs GeoPackage or GeoJSON: a name asking for
/// anything else is refused before any work (exit 2) rather than written in another format.
void checkOutputFormats(const std::vector<NamedPath>& outputs) {
    for (const auto& out : outputs) {
        if (out.path.empty())
            continue;
        if (out.kind == OutputKind::Raster)
            checkRasterExtension(out.path, out.option);
        else if (out.kind == OutputKind::Vector)
            vectorFormatFor(out.path, out.option);
        // A Folder's name is free: its files are named by the command.
    }
}

/// Every output path given (and --summary): no two the same file (exit 2), each writable and
/// not an input (exit 4).
void checkOutputs(const CommonOptions& options, const std::vector<NamedPath>& outputs,
                  const std::vector<std::string>& inputs) {
    std::vector<NamedPath> all;
    for (const auto& out : outputs)
        if (!out.path.empty())
            all.push_back(out);
    if (!options.summary.empty())
        all.push_back({"--summary", options.summary});
    for (std::size_t i = 0; i < all.size(); ++i) {
        for (std::size_t j = i + 1; j < all.size(); ++j) {
            if (sameFile(all[i].path, all[j].path)) {
                throw UsageError(all[i].option + " " + all[i].path + " and " + all[j].option + " " +
                                 all[j].path +
                                 " are the same file; give each output a path of its own");
            }
        }
    }
    for (const auto& out : all) {
        if (out.kind == OutputKind::Folder)
            checkOutputFolder(out.path, out.option, options.overwrite);
        else
            checkOutputPath(out.path, inputs, options.overwrite);
    }
}

/// The summary's and the metadata's description of the run.
void describeRun(RunContext& ctx, const RunEnv& env, const std::string& command) {
    const CommonOptions& options = ctx.options;
    RunDescription& run = ctx.run;
    run.command = command;
    run.command_line = escapeInvalidUtf8(env.command_line);  // paths may hold any bytes
    run.dem_path = escapeInvalidUtf8(options.dem);
    run.crs_name = ctx.dem.crs.name;
    run.crs_code = ctx.dem.crs.epsg;
    run.width = ctx.grid.width();
    run.height = ctx.grid.height();
    run.cell_size_m = ctx.grid.nominalCellSizeM();
    run.refraction = options.refraction;
    run.earth_model = options.earth_model;
    const auto& g = ctx.grid;
    const MapPoint centre{g.mapX((g.width() - 1) / 2.0), g.mapY((g.height() - 1) / 2.0)};
    run.earth_radius_m = ctx.earth.nominalRadius(latitudeOf(ctx, centre));
    run.reach_m = ctx.reach_m;
    run.observer_height_m = ctx.observer_height_m;
    run.target_height_m = ctx.target_height_m;
    run.method = options.method;
}

}  // namespace

RunContext prepareRun(const RunEnv& env, const std::string& command, const CommonOptions& options,
                      const std::vector<NamedPath>& outputs,
                      const std::vector<std::string>& extra_inputs, DemCells cells) {
    RunContext ctx;
    ctx.start = std::chrono::steady_clock::now();
    ctx.options = options;
    ctx.progress = env.progress;
    // Option values first (exit 2) ...
    const CheckedCommon c = checkCommonOptions(options);
    checkOutputFormats(outputs);
    ctx.observer_height_m = c.observer_height_m;
    ctx.target_height_m = c.target_height_m;
    ctx.reach_m = c.reach_m;
    ctx.memory = c.memory;
    applyGdalCacheShare(ctx.memory);
    // ... then the DEM (exit 3) ...
    DemReadOptions read;
    read.band = options.band;
    read.z_unit = c.z_unit;
    read.allow_south_up = cells == DemCells::Describe;
    Dem probe = probeDem(options.dem, read);
    // ... then the outputs, before any long work (exit 4).
    ctx.inputs = {options.dem};
    ctx.inputs.insert(ctx.inputs.end(), extra_inputs.begin(), extra_inputs.end());
    checkOutputs(options, outputs, ctx.inputs);
    ctx.dem = std::move(probe);
    ctx.grid = ctx.dem.geometry;
    if (!ctx.dem.crs.geographic && !ctx.dem.z_unit_from_band && options.z_unit.empty() &&
        std::fabs(ctx.dem.crs.horizontal_unit.metres - 1.0) > 0.01) {
        // Elevations in the CRS's feet would be read as metres: 3.28 times too high.
        ctx.progress->warn(options.dem + ": the CRS is in " + ctx.dem.crs.horizontal_unit.name +
                           " and the band gives no vertical unit: its elevations are read as "
                           "metres; give --z-unit ft or us-ft if they are feet");
    }
    ctx.window = {0, 0, ctx.grid.width(), ctx.grid.height()};
    if (cells == DemCells::Whole)
        readDemWindow(ctx, ctx.window);
    ctx.earth = EarthModel(c.shape, ctx.dem.crs.ellipsoid, c.radius_m, options.refraction);
    describeRun(ctx, env, command);
    return ctx;
}

CellWindow workWindow(const RunContext& ctx, const std::vector<Observer>& observers) {
    const GridGeometry& g = ctx.grid;
    if (!std::isfinite(ctx.reach_m) || observers.empty())
        return {0, 0, g.width(), g.height()};
    int c0 = g.width(), r0 = g.height(), c1 = -1, r1 = -1;
    for (const Observer& o : observers) {
        const CellWindow w = reachWindow(g, o, ctx.reach_m);
        c0 = std::min(c0, w.col0);
        r0 = std::min(r0, w.row0);
        c1 = std::max(c1, w.col0 + w.width - 1);
        r1 = std::max(r1, w.row0 + w.height - 1);
    }
    // One cell of margin: the engines interpolate between a cell and its neighbour.
    c0 = std::max(0, c0 - 1);
    r0 = std::max(0, r0 - 1);
    c1 = std::min(g.width() - 1, c1 + 1);
    r1 = std::min(g.height() - 1, r1 + 1);
    return {c0, r0, c1 - c0 + 1, r1 - r0 + 1};
}

namespace {

/// Says on stderr how many cells of the window read hold implausible elevations, and the first.
void warnImplausibleElevations(const RunContext& ctx) {
    const Grid<float>& z = ctx.dem.z;
    ImplausibleCells bad;
    for (int r = 0; r < z.height(); ++r)
        bad.scan(z.row(r), z.width(), ctx.window.col0, ctx.window.row0 + r);
    if (bad.count > 0)
        ctx.progress->warn(bad.sentence(ctx.dem.path));
}

}  // namespace

void ImplausibleCells::scan(const float* row, int width, int col0, int row_index) {
    for (int c = 0; c < width; ++c) {
        const float v = row[c];
        if (v < kLowestPlausibleM || v > kHighestPlausibleM) {  // NaN (no data) is neither
            if (count++ == 0)
                first = v, col = col0 + c, this->row = row_index;
        }
    }
}

std::string ImplausibleCells::sentence(const std::string& dem_path) const {
    char buf[200];
    std::snprintf(buf, sizeof buf,
                  ": %lld cells hold elevations outside −12 km to +9 km (the first %g m at column "
                  "%d, row %d); check the DEM's no-data value and --z-unit",
                  static_cast<long long>(count), static_cast<double>(first), col, row);
    return dem_path + buf;
}

DemReadOptions demReadOptions(const RunContext& ctx, const CellWindow& window) {
    DemReadOptions read;
    read.band = ctx.options.band;
    if (!ctx.options.z_unit.empty())
        read.z_unit = ctx.dem.z_unit;
    read.win_col = window.col0;
    read.win_row = window.row0;
    read.win_width = window.width;
    read.win_height = window.height;
    return read;
}

void readDemWindow(RunContext& ctx, const CellWindow& window) {
    requireWindowFits(ctx.memory, escapeInvalidUtf8(ctx.options.dem), window.width, window.height,
                      8,
                      std::isfinite(ctx.reach_m) &&
                          (window.width < ctx.grid.width() || window.height < ctx.grid.height()));
    ctx.dem = readDem(ctx.options.dem, demReadOptions(ctx, window));
    describeWindow(ctx, window);
    warnImplausibleElevations(ctx);
}

void describeWindow(RunContext& ctx, const CellWindow& window) {
    ctx.window = window;
    warnImplausibleElevations(ctx);
    if (!ctx.options.extent.empty()) {
        ctx.run.extra["EXTENT"] = ctx.options.extent;
        ctx.run.extra["WINDOW"] = std::to_string(window.col0) + "," + std::to_string(window.row0) +
                                  "," + std::to_string(window.width) + "," +
                                  std::to_string(window.height);
    }
}

bool reachExtent(const RunContext& ctx) {
    return ctx.options.extent == "reach";
}

nlohmann::json extentJson(const RunContext& ctx) {
    const CellWindow& w = ctx.window;
    const bool reach = reachExtent(ctx);
    return {
        {"mode", ctx.options.extent},
        {"window", {{"col", w.col0}, {"row", w.row0}, {"width", w.width}, {"height", w.height}}},
        {"raster_width", reach ? w.width : ctx.grid.width()},
        {"raster_height", reach ? w.height : ctx.grid.height()}};
}

Observer inWindow(const RunContext& ctx, Observer o) {
    o.col -= ctx.window.col0;
    o.row -= ctx.window.row0;
    return o;
}

std::string coordinateCrs(const RunContext& ctx) {
    if (!ctx.options.crs.empty())
        return ctx.options.crs;
    return ctx.dem.crs.epsg.empty() ? ctx.dem.crs.name : ctx.dem.crs.epsg;
}

float groundAt(const RunContext& ctx, int col, int row) {
    return ctx.dem.z(col - ctx.window.col0, row - ctx.window.row0);
}

void requireData(const RunContext& ctx, const std::string& what, const MapPoint& given,
                 const Observer& o) {
    if (std::isnan(groundAt(ctx, o.col, o.row))) {
        char buf[256];
        std::snprintf(buf, sizeof buf, " %.10g,%.10g lies on a no-data cell of %s", given.x,
                      given.y, ctx.dem.path.c_str());
        throw InputError(what + buf);
    }
}

void requireData(const RunContext& ctx, const PlacedSites& placed) {
    for (std::size_t i = 0; i < placed.rows.size(); ++i) {
        requireData(ctx, placed.what[i], {placed.rows[i].x, placed.rows[i].y}, placed.observers[i]);
    }
}

/// `p` (in the DEM's CRS) on the DEM's own branch of longitudes when it lies outside the DEM
/// and the same meridian is inside: on a geographic DEM across the antimeridian (179° to 181°)
/// the point −179.5 is 180.5 (issue 12 item 17c). Other points are returned as they are.
MapPoint onDemLongitudes(const RunContext& ctx, MapPoint p) {
    const GridGeometry& g = ctx.grid;
    if (!ctx.dem.crs.geographic || g.containsMap(p.x, p.y))
        return p;
    const double centre = g.mapX((g.width() - 1) / 2.0);
    const double wrapped = p.x + 360.0 * std::round((centre - p.x) / 360.0);
    if (g.containsMap(wrapped, p.y))
        p.x = wrapped;
    return p;
}

MapPoint toDemCrs(const RunContext& ctx, const MapPoint& p) {
    if (ctx.options.crs.empty())
        return onDemLongitudes(ctx, p);
    CoordinateTransform t(ctx.options.crs, ctx.dem.crs.wkt);
    return onDemLongitudes(ctx, t.apply(p));
}

double latitudeOf(const RunContext& ctx, const MapPoint& p_dem) {
    LonLatOf ll(ctx.dem.crs.wkt);
    return ll.apply(p_dem).y;
}

Observer placeObserver(const RunContext& ctx, const std::string& what, double x, double y,
                       double height_m, const std::string& name) {
    return placeObservers(ctx, {what}, {{x, y}}, {height_m}, {name}).front();
}

std::vector<Observer> placeObservers(const RunContext& ctx, const std::vector<std::string>& what,
                                     const std::vector<MapPoint>& points,
                                     const std::vector<double>& heights_m,
                                     const std::vector<std::string>& names,
                                     std::vector<MapPoint>* points_dem) {
    std::unique_ptr<CoordinateTransform> to_dem;
    if (!ctx.options.crs.empty())
        to_dem = std::make_unique<CoordinateTransform>(ctx.options.crs, ctx.dem.crs.wkt);
    const LonLatOf lonlat(ctx.dem.crs.wkt);
    const auto& g = ctx.grid;
    const bool cells_read = !ctx.dem.z.empty();
    std::vector<Observer> out;
    if (points_dem)
        points_dem->clear();
    for (std::size_t i = 0; i < points.size(); ++i) {
        const double x = points[i].x, y = points[i].y;
        MapPoint p = points[i];
        if (to_dem) {
            try {
                p = to_dem->apply(points[i]);
            } catch (const InputError&) {
                char buf[160];
                std::snprintf(buf, sizeof buf,
                              " %.10g,%.10g cannot be transformed from --crs into the DEM's CRS", x,
                              y);
                throw InputError(what[i] + buf);
            }
        }
        p = onDemLongitudes(ctx, p);
        if (!g.containsMap(p.x, p.y)) {
            // The extent is half-open: a point on the east or south edge belongs to no cell.
            char buf[256];
            std::snprintf(buf, sizeof buf,
                          " %.10g,%.10g is outside the DEM %s (it holds %.10g ≤ x < %.10g and "
                          "%.10g < y ≤ %.10g)",
                          x, y, ctx.dem.path.c_str(), g.mapX(-0.5), g.mapX(g.width() - 0.5),
                          g.mapY(g.height() - 0.5), g.mapY(-0.5));
            std::string hint;
            if (ctx.options.crs.empty() && !ctx.dem.crs.geographic && std::fabs(x) <= 180 &&
                std::fabs(y) <= 90) {
                hint =
                    "; the values look like longitude,latitude: if they are, give --crs "
                    "EPSG:4326";
            }
            throw InputError(what[i] + buf + hint);
        }
        Observer o;
        o.name = names[i];
        o.col = g.cellColOf(p.x);
        o.row = g.cellRowOf(p.y);
        o.height_m = heights_m[i];
        if (cells_read)
            requireData(ctx, what[i], {x, y}, o);
        o.latitude_deg = lonlat.apply({g.mapX(o.col), g.mapY(o.row)}).y;
        out.push_back(o);
        if (points_dem)
            points_dem->push_back(p);
    }
    return out;
}

PlacedSites placeSitesCsv(const RunContext& ctx, const std::string& path, const std::string& role,
                          const std::string& unique_because) {
    PlacedSites placed;
    placed.rows = readSitesCsv(path, role);
    std::map<std::string, int> line_of_name;
    std::vector<std::string> what, names;
    std::vector<MapPoint> given;
    std::vector<double> heights;
    for (const Site& site : placed.rows) {
        const std::string where = path + ", line " + std::to_string(site.line);
        // Names are unique in every command: they name the rows in summaries and outputs.
        auto [it, fresh] = line_of_name.emplace(site.name, site.line);
        if (!fresh) {
            throw InputError(where + ": the " + role + " name '" + echoText(site.name) +
                             "' is already used on line " + std::to_string(it->second) + "; " +
                             (unique_because.empty() ? "names must be unique" : unique_because));
        }
        what.push_back(where + ": " + role + " '" + echoText(site.name) + "' at");
        names.push_back(site.name);
        given.push_back({site.x, site.y});
        heights.push_back(site.height_m.value_or(ctx.observer_height_m));
    }
    placed.observers = placeObservers(ctx, what, given, heights, names, &placed.points_dem);
    placed.what = std::move(what);
    return placed;
}

namespace {

/// outputSpec for work on `window`, whose geometry is `window_grid`.
RasterSpec specOver(const RunContext& ctx, const CellWindow& window,
                    const GridGeometry& window_grid, const std::string& path, PixelType type,
                    int bands, double nodata) {
    RasterSpec spec;
    spec.path = path;
    // --extent reach: the window, on the DEM's grid lines; dem: the whole grid, of which only
    // the blocks the window touches are written (the others stay sparse: no data).
    const GridGeometry& grid = reachExtent(ctx) ? window_grid : ctx.grid;
    spec.width = grid.width();
    spec.height = grid.height();
    spec.bands = bands;
    spec.type = type;
    spec.nodata = nodata;
    spec.geotransform = grid.geotransform();
    spec.crs_wkt = ctx.dem.crs.wkt;
    spec.metadata = rasterMetadata(ctx.run);
    spec.creation_options = ctx.options.creation_options;
    // Colours for class layers (1/0/255); count layers get their ramp from the command.
    if (type == PixelType::Byte)
        spec.palette = classPalette();
    spec.layout = ctx.options.format == "COG" ? RasterLayout::Cog : RasterLayout::GTiff;
    if (ctx.options.overviews || spec.layout == RasterLayout::Cog)
        spec.overviews = type == PixelType::Float32 ? Overviews::Average : Overviews::Nearest;
    // --threads also bounds GDAL's compression threads (the default compresses on every core).
    bool threads_given = false;
    for (const auto& co : spec.creation_options)
        threads_given = threads_given || strncasecmp(co.c_str(), "NUM_THREADS=", 12) == 0;
    if (ctx.options.threads > 0 && !threads_given)
        spec.creation_options.push_back("NUM_THREADS=" + std::to_string(ctx.options.threads));
    const bool whole = window.width == ctx.grid.width() && window.height == ctx.grid.height();
    bool sparse_given = false;
    for (const auto& co : spec.creation_options)
        sparse_given = sparse_given || strncasecmp(co.c_str(), "SPARSE_OK=", 10) == 0;
    if (!whole && !reachExtent(ctx) && !sparse_given)
        spec.creation_options.push_back("SPARSE_OK=TRUE");
    return spec;
}

}  // namespace

RasterSpec outputSpec(const RunContext& ctx, const std::string& path, PixelType type, int bands,
                      double nodata) {
    return specOver(ctx, ctx.window, ctx.dem.geometry, path, type, bands, nodata);
}

RasterSpec outputSpecFor(const RunContext& ctx, const CellWindow& window, const std::string& path,
                         PixelType type, int bands, double nodata) {
    return specOver(ctx, window,
                    ctx.grid.window(window.col0, window.row0, window.width, window.height), path,
                    type, bands, nodata);
}

void writeWindowBand(const RunContext& ctx, RasterWriter& writer, int band, const void* data) {
    const CellWindow& w = ctx.window;
    if (reachExtent(ctx))
        writer.writeWindow(band, 0, 0, w.width, w.height, data, w.width);
    else
        writer.writeWindow(band, w.col0, w.row0, w.width, w.height, data, w.width);
}

void writeGrid(const RunContext& ctx, const std::string& path, PixelType type, double nodata,
               const void* data, const std::string& description, const std::string& unit,
               int max_count) {
    RasterSpec spec = outputSpec(ctx, path, type, 1, nodata);
    if (max_count > 0)
        spec.palette = countPalette(max_count);
    spec.band_descriptions = {description};
    spec.unit_type = unit;
    RasterWriter writer(spec);
    writeWindowBand(ctx, writer, 1, data);
    ctx.outputs->addRaster(writer);
}

nlohmann::json writePolygons(RunContext& ctx, const std::string& path,
                             const Grid<std::int32_t>& values, const std::string& value_field,
                             const std::string& description, const std::string& observers) {
    using K = VectorField::Kind;
    const VectorLayerSpec spec{path,
                               "visible_areas",
                               ctx.dem.crs.wkt,
                               {{value_field, K::Integer}, {"observers", K::Text}},
                               description};
    const AreaPolygons written = writeAreaPolygons(spec, values, ctx.dem.geometry, {observers});
    ctx.outputs->adopt(written.temp, path);
    return {{"path", path},
            {"features", written.features},
            {"cells", written.cells},
            {"area_m2", written.area_m2}};
}

void writeTextFile(const RunContext& ctx, const std::string& path, const std::string& content) {
    ctx.outputs->addText(path, content);
}

RunReport finishRun(RunContext& ctx, nlohmann::json summary, const std::string& table) {
    summary = jsonSafe(summary);  // output paths are echoed as given, in any bytes
    double elapsed =
        std::chrono::duration<double>(std::chrono::steady_clock::now() - ctx.start).count();
    if (!ctx.options.extent.empty())
        summary["extent"] = extentJson(ctx);
    summary["elapsed_s"] = std::round(elapsed * 1000.0) / 1000.0;
    if (!ctx.options.summary.empty())
        writeTextFile(ctx, ctx.options.summary, summary.dump(2) + "\n");
    // Every output of the run is finished in its temporary file by now: rename them together.
    ctx.outputs->commit();
    return {std::move(summary), table};
}

}  // namespace lookfar::run
