// lookfar viewshed: which cells a target can be seen from, for one observer (--observer) or many
// sites (--sites), with optional margin and elevation-angle layers, a summary table and JSON.
// A thin command: options → prepareRun → place observers → engine → stats → write.
#include <cmath>
#include <cstdio>
#include <limits>
#include <memory>
#include <string>
#include <vector>

#include "Commands.hpp"
#include "lookfar/core/Errors.hpp"
#include "lookfar/io/SitesCsv.hpp"
#include "lookfar/report/TextTable.hpp"
#include "lookfar/stats/ViewshedStats.hpp"
#include "lookfar/viewshed/MultiViewshed.hpp"
#include "lookfar/viewshed/Viewshed.hpp"

namespace lookfar::cli {

namespace {

struct ViewshedState {
    CommonOptions options;
    std::string observer;  ///< "X,Y" in --crs
    std::string name = "observer";
    std::string sites;  ///< CSV path
    std::string output;
    std::string margin;
    std::string angle;
};

std::string fixed3(double v) {
    char buf[64];
    std::snprintf(buf, sizeof buf, "%.3f", v);
    return buf;
}

std::string percent(double fraction) {
    return formatNumber(100.0 * fraction, 2) + " %";
}

/// A placed observer with what the summary reports about it.
struct PlacedSite {
    Observer observer;
    double x = 0, y = 0;  ///< as given, in --crs
    double ground_m = 0;
};

nlohmann::json observerJson(const RunContext& ctx, const PlacedSite& p, const ViewshedStats& s) {
    const GridGeometry& g = ctx.grid;
    nlohmann::json bands = nlohmann::json::object();
    for (int b = 0; b < kDistanceBandCount; ++b)
        bands[distanceBandLabel(b)] = s.visible_area_by_band_m2[b];
    return {{"name", p.observer.name},
            {"x", p.x},
            {"y", p.y},
            {"ground_m", p.ground_m},
            {"eye_m", p.ground_m + p.observer.height_m},
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
            {"visible_area_by_distance_m2", bands}};
}

std::string bandTable(const ViewshedStats& s) {
    TextTable t("Visible area by distance from the observer");
    t.setHeader({"distance", "visible area", "share of the visible area"});
    for (int b = 0; b < kDistanceBandCount; ++b) {
        const double a = s.visible_area_by_band_m2[b];
        t.addRow({distanceBandLabel(b), formatArea(a),
                  s.visible_area_m2 > 0 ? percent(a / s.visible_area_m2) : "-"});
    }
    return t.render();
}

std::string reachText(double reach_m) {
    return std::isfinite(reach_m) ? formatDistance(reach_m) : "unlimited";
}

void runViewshed(const ViewshedState& st) {
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
    MapPoint given{};
    if (single)
        given = parsePoint(st.observer, "--observer");  // exit 2 before any file is touched

    std::vector<NamedPath> outputs = {
        {"-o", st.output}, {"--margin", st.margin}, {"--angle", st.angle}};
    std::vector<std::string> extra_inputs;
    if (!single)
        extra_inputs.push_back(st.sites);
    RunContext ctx = prepareRun("viewshed", st.options, outputs, extra_inputs, DemCells::Later);

    // Observers, placed on the DEM (exit 3 when outside); then the cells within their reach are
    // read (exit 3 when an observer stands on no-data).
    std::vector<PlacedSite> placed;
    if (single) {
        PlacedSite p;
        p.x = given.x;
        p.y = given.y;
        p.observer =
            placeObserver(ctx, "--observer", given.x, given.y, ctx.observer_height_m, st.name);
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
            placed.push_back(p);
        }
        readDemWindow(ctx, workWindow(ctx, rows.observers));
        requireData(ctx, rows);
    }
    for (PlacedSite& p : placed)
        p.ground_m = groundAt(ctx, p.observer.col, p.observer.row);
    const GridGeometry& g = ctx.dem.geometry;  // of the window read

    ViewshedOptions opt;
    opt.target_height_m = ctx.target_height_m;
    opt.reach_m = ctx.reach_m;
    opt.method =
        st.options.method == "reference" ? ViewshedMethod::Reference : ViewshedMethod::Fast;
    opt.want_margin = !st.margin.empty();
    opt.want_angle = !st.angle.empty();

    RunDescription& run = ctx.run;
    run.extra["COORDINATE_CRS"] = st.options.crs.empty() ? "the DEM's" : st.options.crs;
    if (single) {
        const PlacedSite& p = placed.front();
        run.extra["OBSERVER"] = p.observer.name;
        run.extra["OBSERVER_XY"] = fmtg(p.x) + "," + fmtg(p.y);
        run.extra["OBSERVER_CELL"] =
            std::to_string(p.observer.col) + "," + std::to_string(p.observer.row);
        run.extra["OBSERVER_GROUND_M"] = fixed3(p.ground_m);
        run.extra["OBSERVER_EYE_M"] = fixed3(p.ground_m + p.observer.height_m);
    } else {
        run.extra["SITES"] = st.sites;
        run.extra["SITE_COUNT"] = std::to_string(placed.size());
        run.extra["SITE_HEIGHTS"] = "per-site height column, else --observer-height";
    }

    nlohmann::json j = summaryBase(run);
    j["outputs"] = nlohmann::json::object();
    j["outputs"][single ? "visibility" : "count"] = st.output;
    if (!st.margin.empty())
        j["outputs"]["margin"] = st.margin;
    if (!st.angle.empty())
        j["outputs"]["angle"] = st.angle;
    std::string table;

    // The rasters are written to temporary files first and renamed into place together at the
    // end, so a failure leaves none of them behind.
    std::vector<std::unique_ptr<RasterWriter>> writers;
    auto openRaster = [&](const std::string& path, PixelType type, double nodata,
                          const std::string& description,
                          const std::string& unit) -> RasterWriter& {
        RasterSpec spec = outputSpec(ctx, path, type, 1, nodata);
        spec.band_descriptions = {description};
        spec.unit_type = unit;
        writers.push_back(std::make_unique<RasterWriter>(spec));
        return *writers.back();
    };
    const float nan = std::numeric_limits<float>::quiet_NaN();
    const std::string margin_text =
        "margin: DEM + target height minus the height of the limiting sightline, metres "
        "(>= 0 visible; -margin is the extra height a target needs)";

    if (single) {
        const PlacedSite& p = placed.front();
        const Observer o = inWindow(ctx, p.observer);
        ViewshedGrids grids = computeViewshed(ctx.dem.z, g, ctx.earth, o, opt, *ctx.progress);
        const ViewshedStats s = summarizeViewshed(grids.visible, grids.window, g, o);
        ctx.dem.z = Grid<float>();  // the elevations are no longer needed: free them first
        openRaster(st.output, PixelType::Byte, kNoVisibility,
                   "visibility from " + p.observer.name +
                       ": 1 visible, 0 hidden, 255 no data (outside reach or DEM no-data)",
                   "");
        writeWindowBand(ctx, *writers.back(), 1, grids.visible.data());
        grids.visible = Grid<std::uint8_t>();
        if (opt.want_margin) {
            writeWindowBand(ctx, openRaster(st.margin, PixelType::Float32, nan, margin_text, "m"),
                            1, grids.margin.data());
            grids.margin = Grid<float>();
        }
        if (opt.want_angle) {
            writeWindowBand(ctx,
                            openRaster(st.angle, PixelType::Float32, nan,
                                       "elevation angle from the eye to the target point, degrees "
                                       "above the eye's local horizontal (negative below)",
                                       "deg"),
                            1, grids.angle.data());
        }
        j["observers"] = nlohmann::json::array({observerJson(ctx, p, s)});

        TextTable t("Viewshed from " + p.observer.name + " on " + ctx.dem.path);
        t.add("observer", fmtg(p.x) + ", " + fmtg(p.y) + " (cell " +
                              std::to_string(p.observer.col) + ", " +
                              std::to_string(p.observer.row) + ")");
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
        t.add("method", st.options.method);
        t.add("visible cells", formatNumber(static_cast<double>(s.visible_cells), 0) + " of " +
                                   formatNumber(static_cast<double>(s.evaluated_cells), 0) +
                                   " evaluated");
        t.add("visible area", formatArea(s.visible_area_m2) + " of " +
                                  formatArea(s.evaluated_area_m2) + " evaluated");
        t.add("visible fraction", percent(s.visible_fraction) + " of the evaluated area");
        t.add("farthest visible", formatDistance(s.farthest_visible_m));
        table = t.render() + "\n" + bandTable(s);
    } else {
        std::vector<Observer> observers;
        for (const PlacedSite& p : placed)
            observers.push_back(inWindow(ctx, p.observer));
        MultiViewshedResult res =
            multiViewshed(ctx.dem.z, g, ctx.earth, observers, opt, *ctx.progress);
        const CoverageStats cov = summarizeCoverage(res.count, g, static_cast<int>(placed.size()));
        ctx.dem.z = Grid<float>();
        openRaster(st.output, PixelType::UInt16, kNoCount,
                   "number of the " + std::to_string(placed.size()) +
                       " sites that see the cell; 65535 no data (outside every site's reach or DEM "
                       "no-data)",
                   "");
        writeWindowBand(ctx, *writers.back(), 1, res.count.data());
        res.count = Grid<std::uint16_t>();
        if (opt.want_margin) {
            writeWindowBand(ctx,
                            openRaster(st.margin, PixelType::Float32, nan,
                                       "largest over the sites of the " + margin_text, "m"),
                            1, res.best_margin.data());
        }
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
        const double any_fraction =
            cov.evaluated_area_m2 > 0 ? cov.area_seen_by_any_m2 / cov.evaluated_area_m2 : 0.0;
        j["coverage"] = {{"cells_seen_by_any", cov.cells_seen_by_any},
                         {"area_seen_by_any_m2", cov.area_seen_by_any_m2},
                         {"cells_by_count", cov.cells_by_count},
                         {"evaluated_cells", cov.evaluated_cells},
                         {"evaluated_area_m2", cov.evaluated_area_m2},
                         {"fraction_seen_by_any", any_fraction}};
        TextTable c("Coverage");
        c.add("seen by any site", formatArea(cov.area_seen_by_any_m2) + " (" +
                                      formatNumber(static_cast<double>(cov.cells_seen_by_any), 0) +
                                      " cells), " + percent(any_fraction) +
                                      " of the evaluated area");
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
        table = t.render() + "\n" + c.render() + "\n" + k.render();
    }
    for (auto& w : writers)
        ctx.outputs->addRaster(*w);
    if (!table.empty() && table.back() != '\n')
        table += "\n";
    finishSummary(ctx, j, table);
}

}  // namespace

Command addViewshedCommand(CLI::App& root) {
    auto state = std::make_shared<ViewshedState>();
    CLI::App* app = root.add_subcommand(
        "viewshed",
        "which cells a target can be seen from: one observer (--observer) or how many of several "
        "sites (--sites) see each cell, with margins and a summary");
    addCommonOptions(app, state->options, kAllCommon);
    auto* observer = app->add_option("--observer", state->observer,
                                     "observer position X,Y in --crs (the observer stands on the "
                                     "centre of the cell that holds it)")
                         ->group("Observers");
    app->add_option("--name", state->name, "name of the --observer in the summary")
        ->capture_default_str()
        ->group("Observers");
    auto* sites = app->add_option("--sites", state->sites,
                                  "CSV of sites (RFC 4180, UTF-8): name,x,y and optional height "
                                  "(metres above ground; overrides --observer-height); names "
                                  "unique")
                      ->type_name("FILE")
                      ->group("Observers");
    observer->excludes(sites);
    app->get_option("--observer-height")
        ->description("eye above the ground, metres (a site's CSV height overrides it)");
    app->add_option("-o,--output", state->output,
                    "visibility raster (Byte: 1 visible, 0 hidden, 255 no data); with --sites a "
                    "count raster (UInt16: sites that see the cell, 65535 no data)")
        ->type_name("FILE")
        ->required()
        ->group("Output");
    app->add_option("--margin", state->margin,
                    "Float32 raster of margins, metres: DEM + target height minus the limiting "
                    "sightline (>= 0 visible); with --sites the largest over the sites")
        ->type_name("FILE")
        ->group("Output");
    app->add_option("--angle", state->angle,
                    "Float32 raster of the elevation angle from the eye to each target point, "
                    "degrees (single observer)")
        ->type_name("FILE")
        ->group("Output");
    app->footer(
        "\nEngines: 'fast' (the default) follows wedges of sightlines outward from the observer,\n"
        "  with bounds of the terrain they meet, and re-checks exactly the cells the bounds leave\n"
        "  open; 'reference' judges every cell on its own. Both give the same result, cell for\n"
        "  cell; the reference is much slower.\n"
        "Summary: visible cells and their true ground area, the visible fraction of the evaluated\n"
        "  area (cells within reach with data), the farthest visible cell and the visible area by\n"
        "  distance band (0-1, 1-5, 5-10, 10-25, 25-50, >50 km).\n" +
        conventionsText() + cautionText());
    return {app, [state] { runViewshed(*state); }};
}

}  // namespace lookfar::cli
