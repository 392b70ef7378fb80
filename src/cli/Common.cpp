#include "Common.hpp"

#include <unistd.h>
#include <strings.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <fstream>
#include <map>
#include <iostream>

#ifdef _OPENMP
#include <omp.h>
#endif

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Text.hpp"
#include "lookfar/core/Units.hpp"

namespace lookfar::cli {

std::string& commandLine() {
    static std::string line;
    return line;
}

void addCommonOptions(CLI::App* app, CommonOptions& o, unsigned which) {
    app->add_option("DEM", o.dem, "digital elevation model (any raster GDAL reads)")
        ->type_name("FILE")
        ->required();
    app->add_option("--crs", o.crs,
                    "CRS of coordinates on the command line and in CSVs (default: the DEM's), "
                    "x/easting/longitude first, e.g. EPSG:4326")
        ->group("Coordinates");
    if (which & kHeightOptions) {
        app->add_option("--observer-height", o.observer_height,
                        "eye above the ground, metres (suffix m, ft or us-ft allowed)")
            ->capture_default_str()
            ->group("Geometry");
        app->add_option("--target-height", o.target_height,
                        "target point above the ground of each cell, metres")
            ->capture_default_str()
            ->group("Geometry");
    }
    if (which & kGeometryOptions) {
        app->add_option("--reach", o.reach,
                        "farthest distance considered, metres (default unlimited)")
            ->group("Geometry");
        app->add_option("--refraction", o.refraction,
                        "refraction coefficient k, -1 <= k < 1; 0.13 light over land, 0.25 radio "
                        "(4/3 Earth)")
            ->capture_default_str()
            ->check(refractionCheck())
            ->group("Geometry");
        app->add_option("--earth-model", o.earth_model,
                        "ellipsoid (radius along each sightline, from the CRS), sphere, or flat")
            ->capture_default_str()
            ->check(oneOfCheck({"ellipsoid", "sphere", "flat"}))
            ->group("Geometry");
        app->add_option("--earth-radius", o.earth_radius,
                        "radius of --earth-model sphere (only with it), metres, 1 km to "
                        "100 000 km (default 6371008.8, the mean Earth radius)")
            ->group("Geometry");
    }
    app->add_option("--z-unit", o.z_unit,
                    "unit of the DEM's elevations when the band does not say (m, ft, us-ft)")
        ->group("Input");
    app->add_option("--band", o.band, "band of the DEM to read")
        ->capture_default_str()
        ->check(wholeNumberCheck(1, 65535))
        ->group("Input");
    if (which & kMethodOption) {
        app->add_option("--method", o.method,
                        "engine: fast (default), or reference (the sightline rule cell by cell: "
                        "same result, slow)")
            ->capture_default_str()
            ->check(oneOfCheck({"fast", "reference"}))
            ->group("Engine");
    }
    app->add_option("--threads", o.threads,
                    "worker threads, for the engines and for compressing GeoTIFFs, 1 to 1024 "
                    "(default or 0: all cores)")
        ->check(wholeNumberCheck(0, kMaxThreads, "(0: every core)"))
        ->group("Engine");
    app->add_option("--summary", o.summary, "also write the summary as JSON to this file")
        ->type_name("FILE")
        ->group("Output");
    app->add_flag("--json", o.json, "print the summary as JSON on stdout instead of the table")
        ->group("Output");
    app->add_flag("--quiet", o.quiet, "no progress on stderr")->group("Output");
    app->add_flag("--overwrite", o.overwrite, "replace existing output files")->group("Output");
    if (which & kOutputOptions) {
        app->add_option("--co", o.creation_options,
                        "GDAL creation option KEY=VALUE for output GeoTIFFs (repeatable; default "
                        "tiled, DEFLATE, predictor, compressed on every processor)")
            ->group("Output");
        o.extent = "dem";
        app->add_option("--extent", o.extent,
                        "grid of the output rasters: dem (the DEM's whole grid; only the blocks "
                        "within --reach are written, the rest read as no data) or reach (only the "
                        "window of cells within --reach, on the DEM's grid lines; the whole DEM "
                        "without --reach)")
            ->capture_default_str()
            ->type_name("dem|reach")
            ->check(oneOfCheck({"dem", "reach"}))
            ->group("Output");
    }
}

CLI::Validator wholeNumberCheck(long long lo, long long hi, const std::string& note) {
    return CLI::Validator(
        [lo, hi, note](const std::string& text) -> std::string {
            const auto v = parseWholeNumber(trim(text));
            if (v && *v >= lo && *v <= hi)
                return "";
            return "'" + echoText(text) + "' is not a whole number from " + std::to_string(lo) +
                   " to " + std::to_string(hi) + (note.empty() ? "" : " " + note);
        },
        "");
}

CLI::Validator decimalCheck(double lo, double hi, const std::string& unit) {
    return CLI::Validator(
        [lo, hi, unit](const std::string& text) -> std::string {
            const auto v = parseDecimal(trim(text));
            if (v && *v >= lo && *v <= hi)
                return "";
            return "'" + echoText(text) + "' is not a number from " + printfNumber("%g", lo) +
                   " to " + printfNumber("%g", hi) + (unit.empty() ? "" : " " + unit);
        },
        "");
}

CLI::Validator refractionCheck() {
    return CLI::Validator(
        [](const std::string& text) -> std::string {
            const auto k = parseDecimal(trim(text));
            if (!k) {
                return "'" + echoText(text) +
                       "' is not a decimal number; k is from -1 to below 1, e.g. 0.13 (light over "
                       "land) or 0.25 (radio, a 4/3 Earth)";
            }
            if (*k >= -1.0 && *k < 1.0)
                return "";
            std::string message = echoText(text) + " is outside -1 <= k < 1";
            if (*k > 1.0 && *k <= 4.0) {
                message +=
                    "; if it is the K-factor (effective over true Earth radius), k = 1 - 1/K "
                    "= " +
                    printfNumber("%.4g", 1.0 - 1.0 / *k) + " (a 4/3 Earth is k = 0.25)";
            } else if (*k >= 1.0) {
                message += " (k >= 1 bends sightlines as much as the Earth curves: ducting)";
            }
            return message;
        },
        "");
}

CLI::Validator oneOfCheck(const std::vector<std::string>& names) {
    return CLI::Validator(
        [names](const std::string& text) -> std::string {
            std::string list;
            for (std::size_t i = 0; i < names.size(); ++i) {
                if (text == names[i])
                    return "";
                list += (i == 0 ? "" : i + 1 == names.size() ? " or " : ", ") + names[i];
            }
            return "'" + echoText(text) + "' is not " + list;
        },
        "");
}

void checkTextOptionsAreUtf8(const CLI::App& app) {
    for (const CLI::Option* opt : app.get_options()) {
        if (opt->get_type_name() == "FILE")
            continue;
        for (const std::string& value : opt->results()) {
            if (invalidUtf8Offset(value) != std::string::npos) {
                throw UsageError(opt->get_name() + ": the value '" + echoText(value) +
                                 "' is not UTF-8 (" + describeInvalidUtf8(value) +
                                 "); lookfar reads text as UTF-8");
            }
        }
    }
}

nlohmann::json jsonSafe(const nlohmann::json& j) {
    if (j.is_string())
        return escapeInvalidUtf8(j.get<std::string>());
    if (j.is_array()) {
        nlohmann::json out = nlohmann::json::array();
        for (const auto& v : j)
            out.push_back(jsonSafe(v));
        return out;
    }
    if (j.is_object()) {
        nlohmann::json out = nlohmann::json::object();
        for (auto it = j.begin(); it != j.end(); ++it)
            out[escapeInvalidUtf8(it.key())] = jsonSafe(it.value());
        return out;
    }
    return j;
}

// ---------------------------------------------------------------------------------------------

TerminalProgress::TerminalProgress(bool quiet) : quiet_(quiet), tty_(isatty(STDERR_FILENO) != 0) {}
TerminalProgress::~TerminalProgress() {
    if (open_ && tty_ && !quiet_)
        std::fputs("\n", stderr);
}

void TerminalProgress::begin(const std::string& label, std::int64_t total) {
    label_ = label;
    total_ = total > 0 ? total : 1;
    last_shown_ = -1;
    start_ = std::chrono::steady_clock::now();
    open_ = true;
    advance(0);
}

void TerminalProgress::advance(std::int64_t done) {
    if (quiet_ || !open_)
        return;
    int percent = static_cast<int>(100.0 * static_cast<double>(done) / total_);
    if (percent > 100)
        percent = 100;
    // Never backwards: a figure at or below the last one shown is not drawn again.
    if (tty_) {
        if (percent <= last_shown_)
            return;
        last_shown_ = percent;
        int filled = percent * 30 / 100;
        std::fprintf(stderr, "\r%-24s [%s%s] %3d%%", label_.c_str(),
                     std::string(filled, '#').c_str(), std::string(30 - filled, '.').c_str(),
                     percent);
        std::fflush(stderr);
    } else {
        int decile = percent / 10;
        if (decile <= last_shown_)
            return;
        last_shown_ = decile;
        std::fprintf(stderr, "lookfar: %s %d%%\n", label_.c_str(), decile * 10);
    }
}

void TerminalProgress::end() {
    if (quiet_ || !open_)
        return;
    if (cancelled()) {  // an interrupted stage is not completed: no 100 %, no "done"
        if (tty_)
            std::fprintf(stderr, "\n");
        open_ = false;
        return;
    }
    double s = std::chrono::duration<double>(std::chrono::steady_clock::now() - start_).count();
    if (tty_) {
        std::fprintf(stderr, "\r%-24s [%s] 100%% (%.1f s)\n", label_.c_str(),
                     std::string(30, '#').c_str(), s);
    } else {
        if (last_shown_ < 10)
            std::fprintf(stderr, "lookfar: %s 100%%\n", label_.c_str());
        std::fprintf(stderr, "lookfar: %s done in %.1f s\n", label_.c_str(), s);
    }
    open_ = false;
}

bool TerminalProgress::cancelled() const {
    return interruptFlag().load(std::memory_order_relaxed);
}

// ---------------------------------------------------------------------------------------------

double parseHeightOption(const std::string& text, const std::string& what) {
    const double h = parseLengthMetres(text, what);
    if (!(h >= 0)) {
        throw UsageError(what + ": " + echoText(text) + " is negative; heights are above ground");
    }
    if (h > kMaxHeightAboveGroundM) {
        throw UsageError(what + ": " + echoText(text) + " is over " + kMaxHeightAboveGroundText +
                         " above the ground");
    }
    return h;
}

double parseReachOption(const std::string& text) {
    if (text.empty())
        return std::numeric_limits<double>::infinity();  // not given
    if (trim(text).empty()) {
        throw UsageError(
            "--reach: the value is blank; give a distance such as 10km, or leave "
            "--reach out for no limit");
    }
    const double r = parseLengthMetres(text, "--reach");
    if (!(r > 0))
        throw UsageError("--reach: " + echoText(text) + " must be a positive distance");
    return r;
}

double parseEarthRadiusOption(const std::string& text, const std::string& earth_model) {
    if (text.empty())
        return EarthModel::kMeanRadiusM;
    if (earth_model != "sphere") {
        throw UsageError("--earth-radius needs --earth-model sphere: " +
                         std::string(earth_model == "flat"
                                         ? "a flat Earth has no radius"
                                         : "the ellipsoid's radii come from the DEM's CRS"));
    }
    const double r = parseLengthMetres(text, "--earth-radius");
    if (!(r >= 1e3 && r <= 1e8)) {
        throw UsageError("--earth-radius: " + echoText(text) + " is outside 1 km to 100 000 km");
    }
    return r;
}

RunContext prepareRun(const std::string& command, const CommonOptions& options,
                      const std::vector<NamedPath>& outputs,
                      const std::vector<std::string>& extra_inputs, DemCells cells) {
    RunContext ctx;
    ctx.start = std::chrono::steady_clock::now();
    ctx.options = options;
    ctx.progress = std::make_unique<TerminalProgress>(options.quiet);
    // Option values first (exit 2) ...
    ctx.observer_height_m = parseHeightOption(options.observer_height, "--observer-height");
    ctx.target_height_m = parseHeightOption(options.target_height, "--target-height");
    ctx.reach_m = parseReachOption(options.reach);
    EarthShape shape = parseEarthShape(options.earth_model);
    const double radius = parseEarthRadiusOption(options.earth_radius, options.earth_model);
    EarthModel probe_earth(shape, Ellipsoid::wgs84(), radius, options.refraction);  // validates k
    std::optional<LinearUnit> z_unit;
    if (!options.z_unit.empty()) {
        z_unit = parseLinearUnit(options.z_unit);
        if (!z_unit)
            throw UsageError("--z-unit: '" + echoText(options.z_unit) + "' is not m, ft or us-ft");
    }
    if (!options.crs.empty())
        validateCrs(options.crs, "--crs");
    checkCreationOptions(options.creation_options, "--co");  // GDAL's own list, before any work
#ifdef _OPENMP
    if (options.threads > 0)
        omp_set_num_threads(options.threads);
#endif
    // ... then the DEM (exit 3) ...
    DemReadOptions read;
    read.band = options.band;
    read.z_unit = z_unit;
    Dem probe = probeDem(options.dem, read);
    // ... then the outputs, before any long work (exit 4).
    ctx.inputs = {options.dem};
    ctx.inputs.insert(ctx.inputs.end(), extra_inputs.begin(), extra_inputs.end());
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
    for (const auto& out : all)
        checkOutputPath(out.path, ctx.inputs, options.overwrite);
    ctx.dem = std::move(probe);
    ctx.grid = ctx.dem.geometry;
    ctx.window = {0, 0, ctx.grid.width(), ctx.grid.height()};
    if (cells == DemCells::Whole)
        readDemWindow(ctx, ctx.window);
    ctx.earth = EarthModel(shape, ctx.dem.crs.ellipsoid, radius, options.refraction);

    RunDescription& run = ctx.run;
    run.command = command;
    run.command_line = escapeInvalidUtf8(commandLine());  // paths may hold any bytes
    run.dem_path = escapeInvalidUtf8(options.dem);
    run.crs_name = ctx.dem.crs.name;
    run.crs_code = ctx.dem.crs.epsg;
    run.width = ctx.grid.width();
    run.height = ctx.grid.height();
    run.cell_size_m = ctx.grid.nominalCellSizeM();
    run.refraction = options.refraction;
    run.earth_model = options.earth_model;
    {
        const auto& g = ctx.grid;
        MapPoint centre{g.mapX((g.width() - 1) / 2.0), g.mapY((g.height() - 1) / 2.0)};
        run.earth_radius_m = ctx.earth.nominalRadius(latitudeOf(ctx, centre));
    }
    run.reach_m = ctx.reach_m;
    run.observer_height_m = ctx.observer_height_m;
    run.target_height_m = ctx.target_height_m;
    run.method = options.method;
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

void readDemWindow(RunContext& ctx, const CellWindow& window) {
    DemReadOptions read;
    read.band = ctx.options.band;
    if (!ctx.options.z_unit.empty())
        read.z_unit = ctx.dem.z_unit;
    read.win_col = window.col0;
    read.win_row = window.row0;
    read.win_width = window.width;
    read.win_height = window.height;
    ctx.dem = readDem(ctx.options.dem, read);
    ctx.window = window;
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

MapPoint toDemCrs(const RunContext& ctx, const MapPoint& p) {
    if (ctx.options.crs.empty())
        return p;
    CoordinateTransform t(ctx.options.crs, ctx.dem.crs.wkt);
    return t.apply(p);
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
        if (!g.containsMap(p.x, p.y)) {
            char buf[256];
            std::snprintf(buf, sizeof buf,
                          " %.10g,%.10g is outside the DEM %s (x %.10g to %.10g, y %.10g to %.10g)",
                          x, y, ctx.dem.path.c_str(), g.mapX(-0.5), g.mapX(g.width() - 0.5),
                          g.mapY(g.height() - 0.5), g.mapY(-0.5));
            throw InputError(what[i] + buf);
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

RasterSpec outputSpec(const RunContext& ctx, const std::string& path, PixelType type, int bands,
                      double nodata) {
    RasterSpec spec;
    spec.path = path;
    // --extent reach: the window read, on the DEM's grid lines; dem: the whole grid, of which
    // only the blocks the window touches are written (the others stay sparse: no data).
    const GridGeometry& grid = reachExtent(ctx) ? ctx.dem.geometry : ctx.grid;
    spec.width = grid.width();
    spec.height = grid.height();
    spec.bands = bands;
    spec.type = type;
    spec.nodata = nodata;
    spec.geotransform = grid.geotransform();
    spec.crs_wkt = ctx.dem.crs.wkt;
    spec.metadata = rasterMetadata(ctx.run);
    spec.creation_options = ctx.options.creation_options;
    // --threads also bounds GDAL's compression threads (the default compresses on every core).
    bool threads_given = false;
    for (const auto& co : spec.creation_options)
        threads_given = threads_given || strncasecmp(co.c_str(), "NUM_THREADS=", 12) == 0;
    if (ctx.options.threads > 0 && !threads_given)
        spec.creation_options.push_back("NUM_THREADS=" + std::to_string(ctx.options.threads));
    const bool whole =
        ctx.window.width == ctx.grid.width() && ctx.window.height == ctx.grid.height();
    bool sparse_given = false;
    for (const auto& co : spec.creation_options)
        sparse_given = sparse_given || strncasecmp(co.c_str(), "SPARSE_OK=", 10) == 0;
    if (!whole && !reachExtent(ctx) && !sparse_given)
        spec.creation_options.push_back("SPARSE_OK=TRUE");
    return spec;
}

void writeWindowBand(const RunContext& ctx, RasterWriter& writer, int band, const void* data) {
    const CellWindow& w = ctx.window;
    if (reachExtent(ctx))
        writer.writeWindow(band, 0, 0, w.width, w.height, data, w.width);
    else
        writer.writeWindow(band, w.col0, w.row0, w.width, w.height, data, w.width);
}

void writeGrid(const RunContext& ctx, const std::string& path, PixelType type, double nodata,
               const void* data, const std::string& description, const std::string& unit) {
    RasterSpec spec = outputSpec(ctx, path, type, 1, nodata);
    spec.band_descriptions = {description};
    spec.unit_type = unit;
    RasterWriter writer(spec);
    writeWindowBand(ctx, writer, 1, data);
    ctx.outputs->addRaster(writer);
}

void writeTextFile(const RunContext& ctx, const std::string& path, const std::string& content) {
    ctx.outputs->addText(path, content);
}

void finishSummary(RunContext& ctx, nlohmann::json summary, const std::string& table) {
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
    if (ctx.options.json) {
        std::cout << summary.dump(2) << "\n";
    } else {
        std::cout << table;
    }
    std::cout.flush();
}

std::string printfNumber(const char* format, double v) {
    char buf[64];
    std::snprintf(buf, sizeof buf, format, v);
    return buf;
}

std::string printfFinite(const char* format, double v) {
    return std::isfinite(v) ? printfNumber(format, v) : std::string();
}

std::string fmtg(double v) {
    return printfNumber("%.10g", v);
}

double wrap360(double az) {
    az = std::fmod(az, 360.0);
    if (az < 0)
        az += 360.0;
    return az >= 360.0 ? 0.0 : az;
}

}  // namespace lookfar::cli
