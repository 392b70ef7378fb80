#include "lookfar/run/HorizonRun.hpp"

#include <cctype>
#include <cmath>
#include <cstring>
#include <memory>
#include <string>
#include <vector>

#ifdef _OPENMP
#include <omp.h>
#endif

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/MemorySize.hpp"
#include "lookfar/horizon/AsyncSink.hpp"
#include "lookfar/horizon/HorizonEdge.hpp"
#include "lookfar/horizon/HorizonProfile.hpp"
#include "lookfar/horizon/HorizonScan.hpp"
#include "lookfar/horizon/HorizonTiling.hpp"
#include "lookfar/io/HorizonRasters.hpp"
#include "lookfar/report/Panorama.hpp"
#include "lookfar/report/TextTable.hpp"

namespace lookfar::run {

namespace {

std::string deg(double v, int decimals = 3) {
    return std::isfinite(v) ? formatNumber(v, decimals) + "°" : "-";
}
std::string azimuthText(double az) {
    return printfNumber("%.3f", az) + "° clockwise from grid north";
}

nlohmann::json statsJson(const ExactGridStats& s) {
    return {{"cells_with_data", s.cells()},
            {"mean", finiteOrNull(s.mean())},
            {"min", finiteOrNull(s.min())},
            {"max", finiteOrNull(s.max())}};
}

double centreLatitude(const RunContext& ctx) {
    const auto& g = ctx.grid;
    return latitudeOf(ctx, {g.mapX((g.width() - 1) / 2.0), g.mapY((g.height() - 1) / 2.0)});
}

void describeEngine(RunContext& ctx, const HorizonOptions& o) {
    ctx.run.extra["CURVATURE_LATITUDE_DEG"] = printfNumber("%.6f", o.latitude_deg);
    if (o.method == HorizonMethod::Fast) {
        ctx.run.extra["FAST_EXACT_STEPS"] = std::to_string(o.exact_steps);
        ctx.run.extra["FAST_REFINE_STEPS"] = std::to_string(o.refine_steps);
    }
}

/// The options of every cell checked (exit 2 before any file is touched).
HorizonOptions checkGridOptions(const HorizonRunOptions& st) {
    if (st.output.empty() && st.distance.empty() && st.svf.empty() && st.dip.empty()) {
        throw UsageError(
            "give at least one output: -o FILE (angles), --distance, --svf or --dip; or --at X,Y "
            "for the horizon of one spot");
    }
    if (!st.csv.empty() || !st.plot.empty())
        throw UsageError("--csv and --plot belong to the horizon of one spot: give --at X,Y");
    if (st.step_given)
        throw UsageError("--step belongs to the horizon of one spot (--at); use --directions");
    HorizonOptions opt;
    opt.directions = st.directions;
    if (opt.directions < 1 || opt.directions > kMaxHorizonDirections) {
        throw UsageError("--directions: " + std::to_string(st.directions) +
                         " is outside 1 to 3600");
    }
    opt.want_svf = !st.svf.empty();
    opt.want_dip = !st.dip.empty();
    return opt;
}

/// The rasters of every cell, each written to its temporary file; handed to the run's outputs at
/// the end, so that they are renamed into place together and a failure leaves none behind.
class GridRasters {
  public:
    GridRasters(RunContext& ctx, int directions) : ctx_(ctx), n_(directions) {}

    /// A Float32 raster of `bands` bands at `path`, or null when `path` is empty.
    RasterWriter* open(const std::string& path, int bands, const std::string& what,
                       const std::string& unit) {
        if (path.empty())
            return nullptr;
        RasterSpec spec = outputSpec(ctx_, path, PixelType::Float32, bands, kHorizonNoData);
        spec.unit_type = unit;
        if (bands > 1)
            streamingBandLayout(spec);
        for (int i = 0; i < bands; ++i) {
            spec.band_descriptions.push_back(
                bands == 1 ? what : what + ", azimuth " + azimuthText(horizonAzimuthDeg(i, n_)));
        }
        writers_.push_back(std::make_unique<RasterWriter>(spec));
        return writers_.back().get();
    }
    /// "a.tif, b.tif": the paths, in the order opened.
    std::string paths() const {
        std::string o;
        for (const auto& w : writers_)
            o += (o.empty() ? "" : ", ") + w->spec().path;
        return o;
    }
    void handOver() {
        for (auto& w : writers_)
            ctx_.outputs->addRaster(*w);
    }

  private:
    RunContext& ctx_;
    int n_;
    std::vector<std::unique_ptr<RasterWriter>> writers_;
};

/// What the rasters' metadata records of a run over every cell.
void describeGrid(RunContext& ctx, const HorizonOptions& opt) {
    const int n = opt.directions;
    ctx.run.extra["DIRECTIONS"] = std::to_string(n);
    ctx.run.extra["AZIMUTHS"] = "band i (1-based) is azimuth (i - 1) * 360 / " + std::to_string(n) +
                                " degrees clockwise from grid north, measured on the ground";
    ctx.run.extra["NODATA"] = "-9999: no terrain sample with data in that direction within reach";
    ctx.run.extra["COORDINATE_CRS"] = coordinateCrs(ctx);
    describeEngine(ctx, opt);
}

/// The table of a run over every cell, without the statistics and outputs.
TextTable gridTable(const RunContext& ctx, int n) {
    TextTable t("Horizon of every cell of " + ctx.run.dem_path);
    t.add("directions", std::to_string(n) + ", every " + printfNumber("%.4g", 360.0 / n) +
                            "° clockwise from grid north");
    t.add("eye", formatNumber(ctx.observer_height_m, 2) + " m above the ground of each cell");
    t.add("reach", reachText(ctx.reach_m));
    t.add("earth", ctx.run.earth_model + ", refraction k = " + fmtg(ctx.run.refraction) +
                       (ctx.earth.shape() == EarthShape::Flat
                            ? ""
                            : ", effective radius " + formatDistance(ctx.run.earth_radius_m /
                                                                     (1.0 - ctx.run.refraction))));
    t.add("method", ctx.options.method);
    return t;
}

std::string statsText(const ExactGridStats& s, bool degrees) {
    auto f = [&](double v) { return degrees ? deg(v) : formatNumber(v, 4); };
    return "mean " + f(s.mean()) + ", " + f(s.min()) + " to " + f(s.max());
}

/// The summary and table of a run over every cell.
RunReport finishGrid(RunContext& ctx, const HorizonRunOptions& st, const HorizonOptions& opt,
                     const HorizonTilePlan& plan, const HorizonTileWriter& outputs,
                     GridRasters& rasters) {
    const int n = opt.directions;
    nlohmann::json j = summaryBase(ctx.run);
    j["horizon"] = {{"directions", n},
                    {"azimuth_step_deg", 360.0 / n},
                    {"curvature_latitude_deg", opt.latitude_deg}};
    j["outputs"] = nlohmann::json::object();
    if (!st.output.empty())
        j["outputs"]["angle"] = st.output;
    if (!st.distance.empty())
        j["outputs"]["distance"] = st.distance;
    TextTable t = gridTable(ctx, n);
    if (!st.svf.empty()) {
        j["outputs"]["svf"] = st.svf;
        j["svf"] = statsJson(outputs.svf_stats);
        t.add("sky-view factor", statsText(outputs.svf_stats, false));
    }
    if (!st.dip.empty()) {
        j["outputs"]["dip"] = st.dip;
        j["dip_deg"] = statsJson(outputs.dip_stats);
        t.add("dip", statsText(outputs.dip_stats, true));
    }
    if (plan.tiled()) {
        j["horizon"]["tiles"] = {
            {"count", plan.tiles()}, {"core_cells", plan.core}, {"halo_cells", plan.halo}};
        t.add("tiles", std::to_string(plan.tiles()) + " of " + std::to_string(plan.core) + " × " +
                           std::to_string(plan.core) + " cells, halo " + std::to_string(plan.halo) +
                           " cells (--memory " + formatMemorySize(ctx.memory.budget) + ")");
    }
    const std::int64_t cut = cellsWithinReachOfEdge(ctx.grid, ctx.reach_m);
    const std::int64_t cells = static_cast<std::int64_t>(ctx.grid.width()) * ctx.grid.height();
    const double fraction = static_cast<double>(cut) / static_cast<double>(cells);
    j["edge"] = {{"cells_cut", cut}, {"cells", cells}, {"fraction_cut", fraction}};
    t.add("DEM's edge", formatNumber(static_cast<double>(cut), 0) + " cells (" +
                            formatNumber(100.0 * fraction, 2) +
                            " %) lie within the reach of the DEM's edge: their horizon may lie "
                            "beyond the DEM");
    t.add("outputs", rasters.paths());
    rasters.handOver();
    return finishRun(ctx, j, t.render());
}

bool hasData(const Grid<float>& z) {
    for (std::size_t i = 0; i < z.size(); ++i) {
        if (!std::isnan(z.data()[i]))
            return true;
    }
    return false;
}

/// Says on stderr why every cell of the rasters is no data (issue 12 item 11): a DEM with no
/// data at all, or no cell with terrain around it within the DEM (a DEM of one cell).
void warnWithoutHorizon(const RunContext& ctx, bool any_data, bool any_horizon) {
    if (!any_data) {
        ctx.progress->warn(ctx.run.dem_path +
                           ": every cell is no data, so no cell has a horizon: the rasters hold "
                           "only no data (-9999)");
    } else if (!any_horizon) {
        ctx.progress->warn(std::string("no cell has terrain with data around it within the DEM") +
                           (std::isfinite(ctx.reach_m) ? " and --reach" : "") +
                           " in any direction: the rasters hold only no data (-9999)");
    }
}

RunReport runGrid(const RunEnv& env, const HorizonRunOptions& st) {
    HorizonOptions opt = checkGridOptions(st);
    RunContext ctx = prepareRun(env, "horizon", st.common,
                                {{"-o", st.output, OutputKind::Raster},
                                 {"--distance", st.distance, OutputKind::Raster},
                                 {"--svf", st.svf, OutputKind::Raster},
                                 {"--dip", st.dip, OutputKind::Raster}},
                                {}, DemCells::Later);
    describeWindow(ctx, {0, 0, ctx.grid.width(), ctx.grid.height()});  // rasters of every cell
    const int n = opt.directions;
    opt.observer_height_m = ctx.observer_height_m;
    opt.reach_m = ctx.reach_m;
    opt.latitude_deg = centreLatitude(ctx);
    opt.method = st.common.method == "reference" ? HorizonMethod::Reference : HorizonMethod::Fast;
    describeGrid(ctx, opt);

    // The DEM in tiles when it does not fit --memory (a reach is then needed), each read with
    // a halo of the reach: the same bits as one run over the whole DEM (docs/horizon.md).
    int threads = 1;
#ifdef _OPENMP
    threads = omp_get_max_threads();
#endif
    const HorizonTilePlan plan =
        planHorizonTiles(ctx.grid, opt, threads, ctx.memory.budget, ctx.run.dem_path,
                         ctx.memory.budget - ctx.memory.work);

    GridRasters rasters(ctx, n);
    RasterWriter* angle_w = rasters.open(
        st.output, n, "horizon angle, degrees above the eye's local horizontal", "deg");
    RasterWriter* dist_w = rasters.open(
        st.distance, n, "ground distance to the horizon-defining terrain, metres", "m");
    RasterWriter* svf_w = rasters.open(
        st.svf, 1, "sky-view factor, 1 - mean over the directions of sin(max(horizon angle, 0))",
        "");
    RasterWriter* dip_w =
        rasters.open(st.dip, 1,
                     "dip: largest depression of the horizon below the eye's local horizontal, "
                     "degrees (negative where the horizon is above it all round)",
                     "deg");

    HorizonRasterSink sink(angle_w, dist_w);
    HorizonTileWriter outputs(svf_w, dip_w);
    bool any_data = false;  // a cell of the DEM read holds data
    {
        // The rasters are compressed and written on a thread of their own while the engine
        // computes the next cells; with --threads 1 on the engine's thread, so that one core
        // is all the command uses.
        std::unique_ptr<AsyncHorizonSink> async;
        if (ctx.options.threads != 1)
            async = std::make_unique<AsyncHorizonSink>(sink);
        outputs.rasters = async ? static_cast<HorizonSink*>(async.get()) : &sink;
        runHorizonTiles(
            ctx.grid, ctx.earth, opt, plan,
            [&](int c0, int r0, int w, int h) {
                Grid<float> z = readDem(ctx.options.dem, demReadOptions(ctx, {c0, r0, w, h})).z;
                any_data = any_data || hasData(z);
                return z;
            },
            outputs, *ctx.progress);
        if (async)
            async->finish();
    }
    warnWithoutHorizon(
        ctx, any_data,
        sink.any_horizon || outputs.svf_stats.cells() > 0 || outputs.dip_stats.cells() > 0);
    return finishGrid(ctx, st, opt, plan, outputs, rasters);
}

// ---------------------------------------------------------------------------------------------

/// The options of one spot checked (exit 2 before any file is touched); returns --at.
MapPoint checkSpotOptions(const HorizonRunOptions& st) {
    if (!st.output.empty() || !st.distance.empty() || !st.svf.empty() || !st.dip.empty()) {
        throw UsageError(
            "--at gives the horizon of one spot (--csv, --plot, the summary); the rasters -o, "
            "--distance, --svf and --dip are for every cell and cannot be combined with it");
    }
    if (st.directions_given)
        throw UsageError("--directions is for every cell; with --at give the step with --step");
    if (!(st.step >= kMinHorizonStepDeg && st.step <= kMaxHorizonStepDeg)) {
        throw UsageError("--step: " + printfNumber("%g", st.step) + "° is outside 0.05° to 90°");
    }
    return parsePoint(st.at, "--at");
}

/// What a spot with no terrain in any direction is told (issue 12 item 11: a DEM of one cell, or
/// only no data around the spot): "" when some direction has terrain.
std::string noTerrainText(const RunContext& ctx, const HorizonProfile& p) {
    if (p.directions_with_data > 0)
        return "";
    return std::string("there is no terrain within the DEM") +
           (std::isfinite(ctx.reach_m) ? " and --reach" : "") +
           " in any direction: no cell with data around the spot";
}

/// The open sectors of `p` as the summary's array and the table's text ("" for none).
std::string openSectors(const HorizonProfile& p, nlohmann::json& sectors) {
    sectors = nlohmann::json::array();
    std::string text;
    for (const auto& s : p.open_sectors) {
        sectors.push_back(
            {{"from_deg", s.from_deg}, {"to_deg", s.to_deg}, {"width_deg", s.width_deg}});
        text += (text.empty() ? "" : "; ") + printfNumber("%.1f", s.from_deg) + "° to " +
                printfNumber("%.1f", s.to_deg) + "° clockwise, " +
                printfNumber("%.4g", s.width_deg) + "° wide";
    }
    if (p.open_sectors.size() == 1 && p.open_sectors[0].width_deg >= 360.0)
        text = "all round (360°)";
    return text;
}

/// A spot's horizon, where it stands, and how to show its points in the coordinates of --at.
struct Spot {
    MapPoint given;   ///< --at as given
    Observer cell;    ///< placed on the whole DEM
    MapPoint centre;  ///< the cell's centre in the coordinates of --at
    HorizonProfile p;
};

nlohmann::json spotJson(const HorizonRunOptions& st, const Spot& s, const nlohmann::json& sectors) {
    const HorizonProfile& p = s.p;
    return {{"step_deg", st.step},
            {"directions", p.directions.size()},
            {"directions_with_data", p.directions_with_data},
            {"lowest",
             {{"angle_deg", finiteOrNull(p.lowest_angle_deg)},
              {"azimuth_deg", finiteOrNull(p.lowest_azimuth_deg)},
              {"distance_m", finiteOrNull(p.lowest_distance_m)}}},
            {"highest",
             {{"angle_deg", finiteOrNull(p.highest_angle_deg)},
              {"azimuth_deg", finiteOrNull(p.highest_azimuth_deg)},
              {"distance_m", finiteOrNull(p.highest_distance_m)}}},
            {"mean_angle_deg", finiteOrNull(p.mean_angle_deg)},
            {"sky_view_factor", finiteOrNull(p.sky_view_factor)},
            {"dip_deg", finiteOrNull(p.dip_deg)},
            {"open_sectors", sectors},
            {"sea_horizon_dip_deg", p.sea_horizon_dip_deg},
            {"sea_horizon_distance_m", finiteOrNull(p.sea_horizon_distance_m)},
            {"edge",
             {{"directions_cut", p.directions_cut_by_edge},
              {"nearest_m", finiteOrNull(p.nearest_edge_m)},
              {"nearest_azimuth_deg", finiteOrNull(p.nearest_edge_azimuth_deg)}}}};
}

std::string spotTable(const RunContext& ctx, const HorizonRunOptions& st, const Spot& s,
                      const std::string& sector_text) {
    const HorizonProfile& p = s.p;
    TextTable t("Horizon at " + fmtg(s.given.x) + ", " + fmtg(s.given.y) + " on " +
                ctx.run.dem_path);
    t.add("cell", std::to_string(s.cell.col) + ", " + std::to_string(s.cell.row) + " (centre " +
                      fmtg(s.centre.x) + ", " + fmtg(s.centre.y) + ")");
    t.add("ground", formatNumber(p.ground_m, 2) + " m");
    t.add("eye", formatNumber(p.eye_m, 2) + " m (" + formatNumber(ctx.observer_height_m, 2) +
                     " m above the ground)");
    t.add("directions", std::to_string(p.directions.size()) + " every " + fmtg(st.step) + "°, " +
                            std::to_string(p.directions_with_data) + " with terrain");
    t.add("reach", reachText(ctx.reach_m));
    auto at = [](double angle, double azimuth, double distance) {
        return deg(angle) + " at azimuth " + deg(azimuth, 1) + ", " +
               (std::isfinite(distance) ? formatDistance(distance) : "-");
    };
    t.add("lowest horizon", at(p.lowest_angle_deg, p.lowest_azimuth_deg, p.lowest_distance_m));
    t.add("highest horizon", at(p.highest_angle_deg, p.highest_azimuth_deg, p.highest_distance_m));
    t.add("mean horizon angle", deg(p.mean_angle_deg));
    const std::string no_terrain = noTerrainText(ctx, p);
    if (!no_terrain.empty())
        t.add("open sectors", "- (" + no_terrain + ")");
    else if (sector_text.empty())
        t.add("open sectors",
              "none (the horizon is at or above the eye's horizontal in every direction)");
    else
        t.add("open sectors", sector_text + " (horizon below the eye's horizontal)");
    t.add("sky-view factor",
          std::isfinite(p.sky_view_factor) ? formatNumber(p.sky_view_factor, 4) : "-");
    t.add("dip", deg(p.dip_deg) + " (largest depression of the terrain horizon)");
    t.add("sea-horizon dip",
          deg(p.sea_horizon_dip_deg) + " for an eye " + formatNumber(p.eye_m, 1) +
              " m above the datum" +
              (p.sea_horizon_dip_deg > 0
                   ? ", sea horizon at " + formatDistance(p.sea_horizon_distance_m)
                   : ""));
    t.add("DEM's edge", p.directions_cut_by_edge == 0
                            ? "beyond the reach in every direction"
                            : "within the reach in " + std::to_string(p.directions_cut_by_edge) +
                                  " of " + std::to_string(p.directions.size()) +
                                  " directions, nearest " + formatDistance(p.nearest_edge_m) +
                                  " at azimuth " + deg(p.nearest_edge_azimuth_deg, 1) +
                                  " (the horizon there may lie beyond the DEM)");
    t.add("earth", ctx.run.earth_model + ", refraction k = " + fmtg(ctx.run.refraction));
    return t.render();
}

/// The CSV of a spot's horizon: one row per direction, the horizon point in --crs.
template <typename ToUser>
std::string spotCsv(const HorizonProfile& p, const ToUser& toUser) {
    std::string csv = "azimuth_deg,angle_deg,distance_m,x,y,elevation_m,edge_distance_m\n";
    for (const auto& d : p.directions) {
        csv += printfNumber("%.4f", d.azimuth_deg);
        if (d.sample.found) {
            const MapPoint m = toUser(d.sample.col, d.sample.row);
            csv += "," + printfNumber("%.6f", d.sample.angle_deg) + "," +
                   printfNumber("%.3f", d.sample.distance_m) + "," + fmtg(m.x) + "," + fmtg(m.y) +
                   "," + printfNumber("%.3f", d.sample.elevation_m);
        } else {
            csv += ",,,,,";
        }
        csv += ",";
        if (std::isfinite(d.edge_distance_m))
            csv += printfNumber("%.3f", d.edge_distance_m);
        csv += "\n";
    }
    return csv;
}

RunReport runPoint(const RunEnv& env, const HorizonRunOptions& st) {
    Spot s;
    s.given = checkSpotOptions(st);
    RunContext ctx = prepareRun(env, "horizon", st.common, {{"--csv", st.csv}, {"--plot", st.plot}},
                                {}, DemCells::Later);
    s.cell = placeObserver(ctx, "--at", s.given.x, s.given.y, ctx.observer_height_m, "spot");
    readDemWindow(ctx, workWindow(ctx, {s.cell}));  // the cells within reach of the spot
    requireData(ctx, "--at", s.given, s.cell);
    const GridGeometry& g = ctx.dem.geometry;  // of the window read: horizon points are in it
    const Observer spot_w = inWindow(ctx, s.cell);
    HorizonOptions opt;
    opt.observer_height_m = ctx.observer_height_m;
    opt.reach_m = ctx.reach_m;
    opt.latitude_deg = s.cell.latitude_deg;
    opt.method = HorizonMethod::Reference;
    ctx.run.method = "reference";
    ctx.run.extra["AT"] = fmtg(s.given.x) + "," + fmtg(s.given.y);
    ctx.run.extra["STEP_DEG"] = fmtg(st.step);
    s.p = horizonProfile(ctx.dem.z, g, ctx.earth, spot_w.col, spot_w.row, st.step, opt,
                         *ctx.progress);

    // Horizon points back in the coordinates of --at.
    std::unique_ptr<CoordinateTransform> back;
    if (!st.common.crs.empty())
        back = std::make_unique<CoordinateTransform>(ctx.dem.crs.wkt, st.common.crs);
    auto toUser = [&](double col, double row) {
        MapPoint m{g.mapX(col), g.mapY(row)};
        return back ? back->apply(m) : m;
    };
    s.centre = toUser(spot_w.col, spot_w.row);

    nlohmann::json j = summaryBase(ctx.run);
    nlohmann::json sectors;
    const std::string sector_text = openSectors(s.p, sectors);
    j["spot"] = {{"x", s.given.x},
                 {"y", s.given.y},
                 {"col", s.cell.col},
                 {"row", s.cell.row},
                 {"cell_x", s.centre.x},
                 {"cell_y", s.centre.y},
                 {"ground_m", summaryMetres(s.p.ground_m)},
                 {"eye_m", summaryMetres(s.p.eye_m)}};
    j["horizon"] = spotJson(st, s, sectors);
    const std::string no_terrain = noTerrainText(ctx, s.p);
    if (!no_terrain.empty())
        j["horizon"]["no_terrain"] = no_terrain;
    if (!st.csv.empty())
        j["outputs"]["csv"] = st.csv;
    if (!st.plot.empty())
        j["outputs"]["plot"] = st.plot;
    const std::string table = spotTable(ctx, st, s, sector_text);
    if (!st.csv.empty())
        writeTextFile(ctx, st.csv, spotCsv(s.p, toUser));
    if (!st.plot.empty()) {
        writeTextFile(ctx, st.plot,
                      panoramaSvg(s.p,
                                  "Horizon from " + fmtg(s.given.x) + ", " + fmtg(s.given.y) +
                                      " (eye " + formatNumber(s.p.eye_m, 1) + " m)",
                                  no_terrain));
    }
    return finishRun(ctx, j, table);
}

}  // namespace

CommandHelp HorizonRun::help() const {
    return {
        "horizon",
        "the horizon of every cell in N directions (angles, distances, sky-view factor, dip), "
        "or the 360° horizon of one spot (--at) with a CSV, an SVG panorama and a summary",
        "\nEvery cell: the eye stands at the cell's centre, --observer-height above its "
        "ground.\n"
        "  A direction with no terrain sample with data inside the DEM within reach is -9999 "
        "in\n"
        "  that band and is left out of the sky-view factor and the dip. Output is streamed\n"
        "  direction by direction: memory does not grow with N. A DEM whose run does not fit\n"
        "  --memory is worked tile by tile, each tile read with a halo of --reach (the same\n"
        "  results); without --reach it is refused.\n"
        "One spot (--at): the horizon every --step degrees, the lowest and highest horizon, "
        "the\n"
        "  sectors where the horizon is below the horizontal, the mean angle, the sky-view "
        "factor\n"
        "  and the dip of the sea horizon for the eye's height.\n"
        "The DEM's edge: where the DEM ends within the reach, terrain beyond it may raise the "
        "true\n"
        "  horizon; --at gives the distance to the edge per direction and shades those "
        "directions,\n"
        "  and the summary of every cell counts the cells less than the reach from the edge.\n"};
}

OptionTable HorizonRun::declare() {
    HorizonRunOptions& st = options;
    OptionTable t = commonOptions(st.common, kAllCommon);
    removeOption(t, "--target-height");  // a horizon has no target: the option would do nothing
    findOption(t, "--method").help =
        "engine for the rasters: fast (default: scan lines find the horizon, the cell's own ray "
        "is sampled exactly there), or reference (every ray marched cell by cell; slow). --at "
        "always uses the reference";
    const std::string cells = "Every cell", spot = "One spot";
    t.push_back(OptionDecl("-o,--output", &st.output,
                           "Float32 raster of N bands: band i + 1 is the horizon angle at azimuth "
                           "i*360/N, degrees above the eye's horizontal; -9999 no data",
                           cells)
                    .fileType());
    t.push_back(OptionDecl("--directions", &st.directions,
                           "N, the number of azimuths i*360/N clockwise from grid north, 1 to 3600",
                           cells)
                    .showDefault()
                    .checkedBy(wholeNumberCheck(1, kMaxHorizonDirections))
                    .noteGiven(&st.directions_given));
    t.push_back(OptionDecl("--distance", &st.distance,
                           "Float32 raster of N bands: ground distance to the horizon, metres",
                           cells)
                    .fileType());
    t.push_back(OptionDecl("--svf", &st.svf,
                           "Float32 raster: sky-view factor, 1 - mean over the directions of "
                           "sin(max(angle, 0))",
                           cells)
                    .fileType());
    t.push_back(OptionDecl("--dip", &st.dip,
                           "Float32 raster: largest depression of the horizon below the eye's "
                           "horizontal over the directions, degrees (negative: above it all round)",
                           cells)
                    .fileType());
    t.push_back(OptionDecl(
        "--at", &st.at, "X,Y in --crs: the 360° horizon of the cell that holds this point", spot));
    t.push_back(OptionDecl("--step", &st.step, "azimuth step of --at, degrees, 0.05 to 90", spot)
                    .showDefault()
                    .checkedBy(decimalCheck(0.05, 90, "degrees"))
                    .noteGiven(&st.step_given));
    t.push_back(OptionDecl("--csv", &st.csv,
                           "CSV of the horizon of --at: azimuth_deg,angle_deg,distance_m,x,y,"
                           "elevation_m,edge_distance_m (x, y of the horizon point in --crs; "
                           "edge_distance_m: metres to where the DEM ends, empty beyond the reach)",
                           spot)
                    .fileType());
    t.push_back(OptionDecl("--plot", &st.plot,
                           "SVG panorama of the horizon of --at with the eye's horizontal and the "
                           "sea-horizon dip; directions where the DEM ends within the reach shaded",
                           spot)
                    .fileType());
    return t;
}

RunReport HorizonRun::run(const RunEnv& env) {
    return options.at.empty() ? runGrid(env, options) : runPoint(env, options);
}

}  // namespace lookfar::run
