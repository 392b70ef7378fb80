#include "lookfar/run/ViewshedRun.hpp"

#include <sys/stat.h>

#include <cmath>
#include <cstdio>
#include <limits>
#include <memory>
#include <string>
#include <vector>

#include "lookfar/core/Errors.hpp"
#include "lookfar/io/FileNames.hpp"
#include "lookfar/io/OutputSet.hpp"
#include "lookfar/io/SitesCsv.hpp"
#include "lookfar/io/VectorOutput.hpp"
#include "lookfar/report/TextTable.hpp"
#include "lookfar/stats/ViewshedStats.hpp"
#include "lookfar/viewshed/MultiViewshed.hpp"
#include "lookfar/viewshed/Viewshed.hpp"

namespace lookfar::run {

namespace {

std::string fixed3(double v) {
    return printfNumber("%.3f", v);
}

std::string percent(double fraction) {
    return formatNumber(100.0 * fraction, 2) + " %";
}

/// A placed observer with what the summary reports about it.
struct PlacedSite {
    Observer observer;
    double x = 0, y = 0;  ///< as given, in --crs
    MapPoint dem_xy;      ///< the point in the DEM's CRS
    double ground_m = 0;
    int line = 0;  ///< line of the sites CSV (0 for --observer)
};

nlohmann::json observerJson(const RunContext& ctx, const PlacedSite& p, const ViewshedStats& s) {
    const GridGeometry& g = ctx.grid;
    // An array, nearest band first (an object's keys would come out in alphabetical order).
    nlohmann::json bands = nlohmann::json::array();
    for (const DistanceBand& b : s.bands) {
        bands.push_back({{"band", b.label},
                         {"from_m", b.from_m},
                         {"to_m", std::isfinite(b.to_m) ? nlohmann::json(b.to_m) : nullptr},
                         {"visible_area_m2", b.visible_area_m2}});
    }
    return {{"name", p.observer.name},
            {"x", p.x},
            {"y", p.y},
            {"ground_m", summaryMetres(p.ground_m)},
            {"eye_m", summaryMetres(p.ground_m + p.observer.height_m)},
            {"height_m", p.observer.height_m},
            {"col", p.observer.col},
            {"row", p.observer.row},
            {"cell_x", g.mapX(p.observer.col)},
            {"cell_y", g.mapY(p.observer.row)},
            {"visible_cells", s.visible_cells},
            {"evaluated_cells", s.evaluated_cells},
            {"visible_area_m2", s.visible_area_m2},
            {"evaluated_area_m2", s.evaluated_area_m2},
            {"visible_fraction", s.visible_fraction},
            {"farthest_visible_m", s.farthest_visible_m},
            {"visible_area_by_distance", bands}};
}

std::string bandTable(const ViewshedStats& s) {
    TextTable t("Visible area by distance from the observer");
    t.setHeader({"distance", "visible area", "share of the visible area"});
    for (const DistanceBand& b : s.bands) {
        const double a = b.visible_area_m2;
        t.addRow(
            {b.label, formatArea(a), s.visible_area_m2 > 0 ? percent(a / s.visible_area_m2) : "-"});
    }
    return t.render();
}

/// The observers placed on the DEM (exit 3 when outside); then the cells within their reach
/// are read (exit 3 when an observer stands on no-data).
std::vector<PlacedSite> placeViewshedObservers(RunContext& ctx, const ViewshedRunOptions& st,
                                               bool single, const MapPoint& given) {
    std::vector<PlacedSite> placed;
    if (single) {
        PlacedSite p;
        p.x = given.x;
        p.y = given.y;
        std::vector<MapPoint> dem_xy;
        p.observer = placeObservers(ctx, {"--observer"}, {given}, {ctx.observer_height_m},
                                    {st.name}, &dem_xy)
                         .front();
        p.dem_xy = dem_xy.front();
        placed.push_back(p);
        readDemWindow(ctx, workWindow(ctx, {p.observer}));
        requireData(ctx, "--observer", given, p.observer);
    } else {
        const PlacedSites rows = placeSitesCsv(ctx, st.sites, "site");
        for (std::size_t i = 0; i < rows.rows.size(); ++i) {
            PlacedSite p;
            p.x = rows.rows[i].x;
            p.y = rows.rows[i].y;
            p.observer = rows.observers[i];
            p.dem_xy = rows.points_dem[i];
            p.line = rows.rows[i].line;
            placed.push_back(p);
        }
        readDemWindow(ctx, workWindow(ctx, rows.observers));
        requireData(ctx, rows);
    }
    for (PlacedSite& p : placed)
        p.ground_m = groundAt(ctx, p.observer.col, p.observer.row);
    return placed;
}

/// What a raster's metadata records of its one observer.
void describeObserver(RunDescription& run, const PlacedSite& p) {
    run.extra["OBSERVER"] = p.observer.name;
    run.extra["OBSERVER_XY"] = fmtg(p.x) + "," + fmtg(p.y);
    run.extra["OBSERVER_CELL"] =
        std::to_string(p.observer.col) + "," + std::to_string(p.observer.row);
    run.extra["OBSERVER_GROUND_M"] = fixed3(p.ground_m);
    run.extra["OBSERVER_EYE_M"] = fixed3(p.ground_m + p.observer.height_m);
}

/// What the rasters' metadata records of the observers.
void describeObservers(RunContext& ctx, const ViewshedRunOptions& st, bool single,
                       const std::vector<PlacedSite>& placed) {
    RunDescription& run = ctx.run;
    run.extra["COORDINATE_CRS"] = coordinateCrs(ctx);
    if (single) {
        describeObserver(run, placed.front());
    } else {
        run.extra["SITES"] = st.sites;
        run.extra["SITE_COUNT"] = std::to_string(placed.size());
        run.extra["SITE_HEIGHTS"] = "per-site height column, else --observer-height";
    }
}

/// The run's rasters, each written to its temporary file first; handed to the run's outputs at
/// the end, so that they are renamed into place together and a failure leaves none behind.
class ViewshedRasters {
  public:
    explicit ViewshedRasters(RunContext& ctx) : ctx_(ctx) {}
    /// Writes `data` (a grid over the window read) into a new one-band raster.
    void write(const std::string& path, PixelType type, double nodata,
               const std::string& description, const std::string& unit, const void* data,
               int max_count = 0) {
        RasterSpec spec = outputSpec(ctx_, path, type, 1, nodata);
        if (max_count > 0)
            spec.palette = countPalette(max_count);
        spec.band_descriptions = {description};
        spec.unit_type = unit;
        writers_.push_back(std::make_unique<RasterWriter>(spec));
        writeWindowBand(ctx_, *writers_.back(), 1, data);
    }
    void handOver() {
        for (auto& w : writers_)
            ctx_.outputs->addRaster(*w);
    }

  private:
    RunContext& ctx_;
    std::vector<std::unique_ptr<RasterWriter>> writers_;
};

std::string visibilityText(const std::string& observer) {
    return "visibility from " + observer +
           ": 1 visible, 0 hidden, 255 no data (outside reach or DEM no-data)";
}

/// --per-site: each site's own visibility raster in a folder, laid out as the single-observer
/// -o raster of that site would be (its window, its metadata). Each is finished in its
/// temporary file as soon as the engine hands over the site's grid (from any thread), so that
/// no more than one site's grid per thread is held; handed to the run's outputs in the order of
/// the sites at the end.
class PerSiteRasters {
  public:
    /// Names the files (uniqueFileNames), checks them against the run's other outputs (exit 2)
    /// and, in an existing folder, as any output (exit 4); then makes the folder.
    PerSiteRasters(RunContext& ctx, const ViewshedRunOptions& st,
                   const std::vector<PlacedSite>& placed)
        : ctx_(ctx), placed_(placed) {
        std::vector<std::string> names;
        std::vector<int> lines;
        for (const PlacedSite& p : placed) {
            names.push_back(p.observer.name);
            lines.push_back(p.line);
        }
        std::string folder = st.per_site;
        if (folder.size() > 1 && folder.back() == '/')
            folder.pop_back();
        struct stat info {};
        const bool folder_exists = stat(folder.c_str(), &info) == 0;
        const NamedPath others[] = {{"-o", st.output},
                                    {"--margin", st.margin},
                                    {"--polygons", st.polygons},
                                    {"--points", st.points},
                                    {"--summary", st.common.summary}};
        for (const std::string& name : uniqueFileNames(names, lines, ".tif")) {
            const std::string path = folder + "/" + name;
            for (const NamedPath& o : others) {
                if (!o.path.empty() && sameFile(o.path, path)) {
                    throw UsageError(o.option + " " + o.path + " is also the --per-site raster " +
                                     path + "; give each output a path of its own");
                }
            }
            if (folder_exists)
                checkOutputPath(path, ctx.inputs, st.common.overwrite);
            paths_.push_back(path);
        }
        temps_.resize(paths_.size());
        ctx.outputs->makeFolder(folder);
    }
    ~PerSiteRasters() {
        for (const std::string& t : temps_)
            if (!t.empty())
                std::remove(t.c_str());
    }
    PerSiteRasters(const PerSiteRasters&) = delete;
    PerSiteRasters& operator=(const PerSiteRasters&) = delete;

    /// Writes site `i`'s raster from its grid (cells of the window read) into its temporary.
    void write(std::size_t i, const ViewshedGrids& g) {
        const PlacedSite& p = placed_[i];
        // The window a single-observer run of this site works on (cells of the whole DEM).
        const CellWindow w = workWindow(ctx_, {p.observer});
        std::vector<std::uint8_t> cells(static_cast<std::size_t>(w.width) * w.height,
                                        kNoVisibility);
        for (int r = 0; r < g.window.height; ++r) {
            const int row = ctx_.window.row0 + g.window.row0 + r - w.row0;
            if (row < 0 || row >= w.height)
                continue;
            for (int c = 0; c < g.window.width; ++c) {
                const int col = ctx_.window.col0 + g.window.col0 + c - w.col0;
                if (col >= 0 && col < w.width)
                    cells[static_cast<std::size_t>(row) * w.width + col] = g.visible(c, r);
            }
        }
        RunDescription run = ctx_.run;
        run.extra.erase("SITE_COUNT");
        run.extra.erase("SITE_HEIGHTS");
        run.extra["SITE_LINE"] = std::to_string(p.line);
        run.observer_height_m = p.observer.height_m;
        describeObserver(run, p);
        if (run.extra.count("WINDOW")) {
            run.extra["WINDOW"] = std::to_string(w.col0) + "," + std::to_string(w.row0) + "," +
                                  std::to_string(w.width) + "," + std::to_string(w.height);
        }
        RasterSpec spec = outputSpecFor(ctx_, w, paths_[i], PixelType::Byte, 1, kNoVisibility);
        spec.metadata = rasterMetadata(run);
        spec.band_descriptions = {visibilityText(p.observer.name)};
        RasterWriter writer(spec);
        if (reachExtent(ctx_))
            writer.writeWindow(1, 0, 0, w.width, w.height, cells.data(), w.width);
        else
            writer.writeWindow(1, w.col0, w.row0, w.width, w.height, cells.data(), w.width);
        temps_[i] = writer.finish();  // each site its own slot: no lock needed
    }
    /// Hands every finished raster to the run's outputs, in the order of the sites.
    void handOver() {
        for (std::size_t i = 0; i < temps_.size(); ++i) {
            if (temps_[i].empty())
                throw InternalError("the --per-site raster of a site was not written");
            ctx_.outputs->adopt(temps_[i], paths_[i]);
            temps_[i].clear();
        }
    }
    const std::vector<std::string>& paths() const { return paths_; }

  private:
    RunContext& ctx_;
    const std::vector<PlacedSite>& placed_;
    std::vector<std::string> paths_, temps_;
};

const char* const kMarginText =
    "margin: DEM + target height minus the height of the limiting sightline, metres "
    "(>= 0 visible; -margin is the extra height a target needs)";

std::string singleTable(const RunContext& ctx, const PlacedSite& p, const ViewshedStats& s) {
    const RunDescription& run = ctx.run;
    TextTable t("Viewshed from " + p.observer.name + " on " + ctx.dem.path);
    t.add("observer", fmtg(p.x) + ", " + fmtg(p.y) + " (cell " + std::to_string(p.observer.col) +
                          ", " + std::to_string(p.observer.row) + ")");
    t.add("ground", formatNumber(p.ground_m, 2) + " m");
    t.add("eye", formatNumber(p.ground_m + p.observer.height_m, 2) + " m (" +
                     formatNumber(p.observer.height_m, 2) + " m above the ground)");
    t.add("target height", formatNumber(ctx.target_height_m, 2) + " m above the ground");
    t.add("reach", reachText(ctx.reach_m));
    t.add("earth", run.earth_model + ", refraction k = " + fmtg(run.refraction) +
                       (ctx.earth.shape() == EarthShape::Flat
                            ? ""
                            : ", effective radius " +
                                  formatDistance(run.earth_radius_m / (1.0 - run.refraction))));
    t.add("method", ctx.options.method);
    t.add("visible cells", formatNumber(static_cast<double>(s.visible_cells), 0) + " of " +
                               formatNumber(static_cast<double>(s.evaluated_cells), 0) +
                               " evaluated");
    t.add("visible area",
          formatArea(s.visible_area_m2) + " of " + formatArea(s.evaluated_area_m2) + " evaluated");
    t.add("visible fraction", percent(s.visible_fraction) + " of the evaluated area");
    t.add("farthest visible", formatDistance(s.farthest_visible_m));
    return t.render() + "\n" + bandTable(s);
}

/// One observer: the engine, its rasters, its summary entry; returns the table.
/// --points: each observer or site as a point in the DEM's CRS with its figures.
void writeObserverPoints(RunContext& ctx, const std::string& path,
                         const std::vector<PlacedSite>& placed,
                         const std::vector<ViewshedStats>& stats) {
    using K = VectorField::Kind;
    const VectorLayerSpec spec{path,
                               "observers",
                               ctx.dem.crs.wkt,
                               {{"name", K::Text},
                                {"height_m", K::Real},
                                {"ground_m", K::Real},
                                {"eye_m", K::Real},
                                {"visible_cells", K::Integer},
                                {"visible_area_m2", K::Real},
                                {"visible_fraction", K::Real},
                                {"farthest_visible_m", K::Real}},
                               "lookfar viewshed: the observers and what each sees"};
    std::vector<VectorFeature> features;
    for (std::size_t i = 0; i < placed.size(); ++i) {
        const PlacedSite& p = placed[i];
        const ViewshedStats& s = stats[i];
        features.push_back({{{p.dem_xy.x, p.dem_xy.y}},
                            {p.observer.name, p.observer.height_m, summaryMetres(p.ground_m),
                             summaryMetres(p.ground_m + p.observer.height_m),
                             static_cast<long long>(s.visible_cells), s.visible_area_m2,
                             s.visible_fraction, s.farthest_visible_m}});
    }
    ctx.outputs->adopt(writeVectorFeatures(spec, features), path);
}

std::string runSingle(RunContext& ctx, const ViewshedRunOptions& st, const PlacedSite& p,
                      const ViewshedOptions& opt, ViewshedRasters& rasters, nlohmann::json& j) {
    const GridGeometry& g = ctx.dem.geometry;  // of the window read
    const Observer o = inWindow(ctx, p.observer);
    ViewshedGrids grids = computeViewshed(ctx.dem.z, g, ctx.earth, o, opt, *ctx.progress);
    const ViewshedStats s = summarizeViewshed(grids.visible, grids.window, g, o, opt.reach_m);
    ctx.dem.z = Grid<float>();  // the elevations are no longer needed: free them first
    const float nan = std::numeric_limits<float>::quiet_NaN();
    rasters.write(st.output, PixelType::Byte, kNoVisibility, visibilityText(p.observer.name), "",
                  grids.visible.data());
    if (!st.polygons.empty())
        j["polygons"] = writePolygons(
            ctx, st.polygons, areaValues(grids.visible, [](std::uint8_t v) { return v == 1; }),
            "visible", "lookfar viewshed: areas seen from " + p.observer.name, p.observer.name);
    if (!st.points.empty())
        writeObserverPoints(ctx, st.points, {p}, {s});
    grids.visible = Grid<std::uint8_t>();
    if (opt.want_margin) {
        rasters.write(st.margin, PixelType::Float32, nan, kMarginText, "m", grids.margin.data());
        grids.margin = Grid<float>();
    }
    if (opt.want_angle) {
        rasters.write(st.angle, PixelType::Float32, nan,
                      "elevation angle from the eye to the target point, degrees above the eye's "
                      "local horizontal (negative below)",
                      "deg", grids.angle.data());
    }
    j["observers"] = nlohmann::json::array({observerJson(ctx, p, s)});
    return singleTable(ctx, p, s);
}

std::string coverageTables(const RunContext& ctx, const CoverageStats& cov, double any_fraction) {
    TextTable c("Coverage");
    c.add("seen by any site", formatArea(cov.area_seen_by_any_m2) + " (" +
                                  formatNumber(static_cast<double>(cov.cells_seen_by_any), 0) +
                                  " cells), " + percent(any_fraction) + " of the evaluated area");
    c.add("evaluated", formatArea(cov.evaluated_area_m2) + " (" +
                           formatNumber(static_cast<double>(cov.evaluated_cells), 0) +
                           " cells within reach of a site)");
    c.add("target height", formatNumber(ctx.target_height_m, 2) + " m above the ground");
    c.add("reach", reachText(ctx.reach_m));
    TextTable k("Cells by number of sites that see them");
    k.setHeader({"sites", "cells", "share of the evaluated cells"});
    for (std::size_t n = 0; n < cov.cells_by_count.size(); ++n) {
        const double cells = static_cast<double>(cov.cells_by_count[n]);
        k.addRow({std::to_string(n), formatNumber(cells, 0),
                  cov.evaluated_cells ? percent(cells / cov.evaluated_cells) : "-"});
    }
    return c.render() + "\n" + k.render();
}

/// The sites' summary entries and their table.
std::string sitesTable(const RunContext& ctx, const std::vector<PlacedSite>& placed,
                       const MultiViewshedResult& res, nlohmann::json& j) {
    nlohmann::json obs = nlohmann::json::array();
    TextTable t("Viewsheds of " + std::to_string(placed.size()) + " sites on " + ctx.dem.path);
    t.setHeader(
        {"site", "height", "ground", "visible area", "visible fraction", "farthest visible"});
    for (std::size_t i = 0; i < placed.size(); ++i) {
        const PlacedSite& p = placed[i];
        const ViewshedStats& s = res.sites[i];
        obs.push_back(observerJson(ctx, p, s));
        t.addRow({p.observer.name, formatNumber(p.observer.height_m, 1) + " m",
                  formatNumber(p.ground_m, 1) + " m", formatArea(s.visible_area_m2),
                  percent(s.visible_fraction), formatDistance(s.farthest_visible_m)});
    }
    j["observers"] = obs;
    return t.render();
}

/// Several sites: the engine, the count and margin rasters, the summary; returns the table.
std::string runSites(RunContext& ctx, const ViewshedRunOptions& st,
                     const std::vector<PlacedSite>& placed, const ViewshedOptions& opt,
                     ViewshedRasters& rasters, PerSiteRasters* per_site, nlohmann::json& j) {
    const GridGeometry& g = ctx.dem.geometry;  // of the window read
    std::vector<Observer> observers;
    for (const PlacedSite& p : placed)
        observers.push_back(inWindow(ctx, p.observer));
    SiteGridsReceiver each_site;
    if (per_site)
        each_site = [per_site](std::size_t i, const ViewshedGrids& grids) {
            per_site->write(i, grids);
        };
    MultiViewshedResult res =
        multiViewshed(ctx.dem.z, g, ctx.earth, observers, opt, each_site, *ctx.progress);
    const CoverageStats cov = summarizeCoverage(res.count, g, static_cast<int>(placed.size()));
    ctx.dem.z = Grid<float>();
    rasters.write(st.output, PixelType::UInt16, kNoCount,
                  "number of the " + std::to_string(placed.size()) +
                      " sites that see the cell; 65535 no data (outside every site's reach or DEM "
                      "no-data)",
                  "", res.count.data(), static_cast<int>(placed.size()));
    if (!st.polygons.empty()) {
        std::string names;
        for (const PlacedSite& p : placed)
            names += (names.empty() ? "" : "; ") + p.observer.name;
        j["polygons"] = writePolygons(
            ctx, st.polygons,
            areaValues(res.count, [](std::uint16_t v) { return v >= 1 && v != kNoCount; }), "count",
            "lookfar viewshed: areas seen by the same number of sites", names);
    }
    res.count = Grid<std::uint16_t>();
    if (!st.points.empty())
        writeObserverPoints(ctx, st.points, placed, res.sites);
    if (opt.want_margin) {
        rasters.write(st.margin, PixelType::Float32, std::numeric_limits<float>::quiet_NaN(),
                      std::string("largest over the sites of the ") + kMarginText, "m",
                      res.best_margin.data());
    }
    std::string table = sitesTable(ctx, placed, res, j);
    if (per_site) {
        for (std::size_t i = 0; i < placed.size(); ++i)
            j["observers"][i]["raster"] = per_site->paths()[i];
        table += "Each site's own raster: " + std::to_string(placed.size()) + " files in " +
                 st.per_site + "\n";
        per_site->handOver();
    }
    const double any_fraction =
        cov.evaluated_area_m2 > 0 ? cov.area_seen_by_any_m2 / cov.evaluated_area_m2 : 0.0;
    j["coverage"] = {{"cells_seen_by_any", cov.cells_seen_by_any},
                     {"area_seen_by_any_m2", cov.area_seen_by_any_m2},
                     {"cells_by_count", cov.cells_by_count},
                     {"evaluated_cells", cov.evaluated_cells},
                     {"evaluated_area_m2", cov.evaluated_area_m2},
                     {"fraction_seen_by_any", any_fraction}};
    return table + "\n" + coverageTables(ctx, cov, any_fraction);
}

/// The observer options checked (exit 2 before any file is touched); true for one observer.
bool checkObserverOptions(const ViewshedRunOptions& st, MapPoint* given) {
    const bool single = !st.observer.empty();
    if (single == !st.sites.empty()) {
        throw UsageError(
            "give either --observer X,Y (one observer) or --sites FILE (several sites)");
    }
    if (!single && !st.angle.empty()) {
        throw UsageError(
            "--angle needs a single observer (--observer); an elevation angle has no meaning "
            "over several sites");
    }
    if (single && !st.per_site.empty()) {
        throw UsageError(
            "--per-site writes one raster per site of --sites; with one --observer, -o is its "
            "raster");
    }
    if (single)
        *given = parsePoint(st.observer, "--observer");
    return single;
}

nlohmann::json outputsJson(const ViewshedRunOptions& st, bool single) {
    nlohmann::json outputs = nlohmann::json::object();
    outputs[single ? "visibility" : "count"] = st.output;
    if (!st.margin.empty())
        outputs["margin"] = st.margin;
    if (!st.angle.empty())
        outputs["angle"] = st.angle;
    if (!st.polygons.empty())
        outputs["polygons"] = st.polygons;
    if (!st.points.empty())
        outputs["points"] = st.points;
    if (!st.per_site.empty())
        outputs["per_site"] = st.per_site;
    return outputs;
}

}  // namespace

CommandHelp ViewshedRun::help() const {
    return {"viewshed",
            "which cells a target can be seen from: one observer (--observer) or how many of "
            "several sites (--sites) see each cell, with margins and a summary",
            "\nEngines: 'fast' (the default) follows wedges of sightlines outward from the "
            "observer,\n"
            "  with bounds of the terrain they meet, and re-checks exactly the cells the bounds "
            "leave\n"
            "  open; 'reference' judges every cell on its own. Both give the same result, cell "
            "for\n"
            "  cell; the reference is much slower.\n"
            "Summary: visible cells and their true ground area, the visible fraction of the "
            "evaluated\n"
            "  area (cells within reach with data), the farthest visible cell and the visible "
            "area by\n"
            "  distance band (0-1, 1-5, 5-10, 10-25, 25-50, >50 km).\n"};
}

OptionTable ViewshedRun::declare() {
    ViewshedRunOptions& st = options;
    OptionTable t = commonOptions(st.common, kAllCommon);
    findOption(t, "--observer-height").help =
        "eye above the ground, metres (a site's CSV height overrides it)";
    t.push_back(OptionDecl("--observer", &st.observer,
                           "observer position X,Y in --crs (the observer stands on the centre of "
                           "the cell that holds it)",
                           "Observers")
                    .excluding("--sites"));
    t.push_back(OptionDecl("--name", &st.name, "name of the --observer in the summary", "Observers")
                    .showDefault());
    t.push_back(OptionDecl("--sites", &st.sites,
                           "CSV of sites (RFC 4180, UTF-8): name,x,y and optional height (metres "
                           "above ground; overrides --observer-height); names unique",
                           "Observers")
                    .fileType());
    t.push_back(OptionDecl("-o,--output", &st.output,
                           "visibility raster (Byte: 1 visible, 0 hidden, 255 no data); with "
                           "--sites a count raster (UInt16: sites that see the cell, 65535 no "
                           "data)",
                           "Output")
                    .fileType()
                    .mandatory());
    t.push_back(OptionDecl("--margin", &st.margin,
                           "Float32 raster of margins, metres: DEM + target height minus the "
                           "limiting sightline (>= 0 visible); with --sites the largest over the "
                           "sites",
                           "Output")
                    .fileType());
    t.push_back(OptionDecl("--angle", &st.angle,
                           "Float32 raster of the elevation angle from the eye to each target "
                           "point, degrees (single observer)",
                           "Output")
                    .fileType());
    t.push_back(OptionDecl("--polygons", &st.polygons,
                           "the visible area as polygons (with --sites: one per connected area "
                           "seen by the same number of sites), each with its true ground area: "
                           ".gpkg (GeoPackage, the DEM's CRS) or .geojson (WGS 84 lon/lat)",
                           "Output")
                    .fileType());
    t.push_back(OptionDecl("--points", &st.points,
                           "the observer (or every site) as points with height, ground, eye, "
                           "visible cells, area, fraction and farthest visible distance: .gpkg "
                           "or .geojson",
                           "Output")
                    .fileType());
    t.push_back(OptionDecl("--per-site", &st.per_site,
                           "with --sites, a folder for each site's own visibility raster (as -o "
                           "of --observer gives), named after the site: letters, digits, - and _ "
                           "kept, other characters _, clashes _2, _3 ...; made if missing; an "
                           "existing folder must be empty unless --overwrite",
                           "Output")
                    .typeName("DIR"));
    return t;
}

RunReport ViewshedRun::run(const RunEnv& env) {
    const ViewshedRunOptions& st = options;
    MapPoint given{};
    const bool single = checkObserverOptions(st, &given);
    std::vector<NamedPath> outputs = {{"-o", st.output, OutputKind::Raster},
                                      {"--margin", st.margin, OutputKind::Raster},
                                      {"--angle", st.angle, OutputKind::Raster},
                                      {"--polygons", st.polygons, OutputKind::Vector},
                                      {"--points", st.points, OutputKind::Vector},
                                      {"--per-site", st.per_site, OutputKind::Folder}};
    std::vector<std::string> extra_inputs;
    if (!single)
        extra_inputs.push_back(st.sites);
    RunContext ctx = prepareRun(env, "viewshed", st.common, outputs, extra_inputs, DemCells::Later);
    const std::vector<PlacedSite> placed = placeViewshedObservers(ctx, st, single, given);

    ViewshedOptions opt;
    opt.target_height_m = ctx.target_height_m;
    opt.reach_m = ctx.reach_m;
    opt.method = st.common.method == "reference" ? ViewshedMethod::Reference : ViewshedMethod::Fast;
    opt.want_margin = !st.margin.empty();
    opt.want_angle = !st.angle.empty();
    describeObservers(ctx, st, single, placed);

    nlohmann::json j = summaryBase(ctx.run);
    j["outputs"] = outputsJson(st, single);
    ViewshedRasters rasters(ctx);
    std::unique_ptr<PerSiteRasters> per_site;
    if (!st.per_site.empty())
        per_site = std::make_unique<PerSiteRasters>(ctx, st, placed);
    std::string table = single ? runSingle(ctx, st, placed.front(), opt, rasters, j)
                               : runSites(ctx, st, placed, opt, rasters, per_site.get(), j);
    rasters.handOver();
    if (!table.empty() && table.back() != '\n')
        table += "\n";
    return finishRun(ctx, j, table);
}

}  // namespace lookfar::run
