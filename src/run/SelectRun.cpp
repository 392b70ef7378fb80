#include "lookfar/run/SelectRun.hpp"

#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <limits>
#include <map>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Text.hpp"
#include "lookfar/core/Units.hpp"
#include "lookfar/io/Crs.hpp"
#include "lookfar/io/SitesCsv.hpp"
#include "lookfar/report/TextTable.hpp"
#include "lookfar/siting/SiteSelection.hpp"

namespace lookfar::run {

namespace {

/// Reads the weight raster and checks it lies on the DEM's grid (exit 3 naming the file).
/// Only the window of the DEM that was read is read (and checked) of it.
Grid<float> readWeights(const RunContext& ctx, const std::string& path) {
    DemReadOptions read;
    read.z_unit = LinearUnit{"weight", 1.0};  // weights are not lengths: never convert
    const Dem whole = probeDem(path, read);
    const GridGeometry& a = ctx.grid;
    const GridGeometry& b = whole.geometry;
    if (a.width() != b.width() || a.height() != b.height()) {
        throw InputError(path + ": the weight raster has " + std::to_string(b.width()) + " × " +
                         std::to_string(b.height()) + " cells, the DEM " +
                         std::to_string(a.width()) + " × " + std::to_string(a.height()) +
                         "; it must be on the DEM's grid");
    }
    const auto &ga = a.geotransform(), &gb = b.geotransform();
    const double tol = 1e-6 * std::fmin(std::fabs(ga[1]), std::fabs(ga[5]));
    for (int i = 0; i < 6; ++i) {
        if (!(std::fabs(ga[i] - gb[i]) <= tol)) {
            throw InputError(path +
                             ": the weight raster's geotransform differs from the DEM's; it must "
                             "be on the DEM's grid (same origin and cell size)");
        }
    }
    if (!CoordinateTransform(whole.crs.wkt, ctx.dem.crs.wkt).identity()) {
        throw InputError(path + ": the weight raster's CRS (" + whole.crs.name +
                         ") is not the DEM's (" + ctx.dem.crs.name +
                         "); it must be on the DEM's grid");
    }
    read.win_col = ctx.window.col0;
    read.win_row = ctx.window.row0;
    read.win_width = ctx.window.width;
    read.win_height = ctx.window.height;
    Dem w = readDem(path, read);
    for (int r = 0; r < w.z.height(); ++r) {
        for (int c = 0; c < w.z.width(); ++c) {
            const float v = w.z(c, r);
            if (v < 0 || std::isinf(v)) {
                throw InputError(path + ": the weight raster holds " + printfFinite("%g", v) +
                                 " at column " + std::to_string(ctx.window.col0 + c) + ", row " +
                                 std::to_string(ctx.window.row0 + r) +
                                 "; weights must be finite and ≥ 0");
            }
        }
    }
    return std::move(w.z);
}

std::string stopReason(CoverageStop s) {
    switch (s) {
        case CoverageStop::ReachedCount:
            return "count";
        case CoverageStop::ReachedTarget:
            return "coverage";
        case CoverageStop::NothingToAdd:
            return "nothing_to_add";
    }
    return "?";
}

/// The choice asked for, once checked (exit 2 otherwise).
struct Goal {
    bool has_count = false, has_coverage = false;
    int count = 0;
    double coverage = std::numeric_limits<double>::quiet_NaN();
};

Goal checkGoal(const SelectRunOptions& s) {
    Goal g;
    g.has_count = s.count_given;
    g.has_coverage = !trim(s.coverage).empty();
    g.count = s.count;
    if (!g.has_count && !g.has_coverage) {
        throw UsageError("select needs --count K, --coverage P, or both");
    }
    if (g.has_count && s.count < 1) {
        throw UsageError("--count: " + std::to_string(s.count) + " must be at least 1");
    }
    if (g.has_coverage) {
        const std::string t = trim(s.coverage);
        const auto p = parseDecimal(t);
        if (!p || !(*p > 0 && *p <= 100)) {
            throw UsageError("--coverage: '" + echoText(t) + "' is not a percentage in (0, 100]");
        }
        g.coverage = *p;
    }
    return g;
}

/// What the run records of the choice in raster metadata.
void describeChoice(RunContext& ctx, const SelectRunOptions& s, const Goal& g,
                    const std::vector<Observer>& candidates, const SiteSelectionResult& res) {
    std::string chosen;
    for (const SelectedSite& p : res.ranked)
        chosen += (chosen.empty() ? "" : "; ") + candidates[p.candidate].name;
    ctx.run.extra["CANDIDATES"] = s.candidates;
    ctx.run.extra["COUNT"] = g.has_count ? std::to_string(s.count) : "none";
    ctx.run.extra["COVERAGE_PERCENT"] = g.has_coverage ? printfFinite("%.10g", g.coverage) : "none";
    ctx.run.extra["WEIGHT"] = s.weight.empty() ? "ground area" : s.weight;
    ctx.run.extra["SELECTED"] = chosen;
}

std::string rankedCsv(const SiteSelectionResult& res, const std::vector<Site>& sites) {
    // With --weight the weights decide the ranking: they follow the areas (issue 12 item 14).
    std::string csv = "rank,name,x,y,marginal_area_m2,cumulative_area_m2,cumulative_percent";
    csv += res.weighted ? ",marginal_weight,cumulative_weight\n" : "\n";
    for (std::size_t k = 0; k < res.ranked.size(); ++k) {
        const SelectedSite& p = res.ranked[k];
        const Site& site = sites[p.candidate];
        csv += std::to_string(k + 1) + "," + csvField(site.name) + "," +
               printfFinite("%.10g", site.x) + "," + printfFinite("%.10g", site.y) + "," +
               printfFinite("%.1f", p.marginal_area_m2) + "," +
               printfFinite("%.1f", p.cumulative_area_m2) + "," +
               printfFinite("%.4f", p.cumulative_percent);
        if (res.weighted) {
            csv += "," + printfFinite("%.10g", p.marginal_weight) + "," +
                   printfFinite("%.10g", p.cumulative_weight);
        }
        csv += "\n";
    }
    return csv;
}

/// The summary's "selected" list, and each candidate's rank (0: not chosen).
nlohmann::json selectedJson(const SiteSelectionResult& res, const std::vector<Site>& sites,
                            std::vector<int>* rank_of) {
    nlohmann::json ranked = nlohmann::json::array();
    for (std::size_t k = 0; k < res.ranked.size(); ++k) {
        const SelectedSite& p = res.ranked[k];
        (*rank_of)[p.candidate] = static_cast<int>(k + 1);
        nlohmann::json e = {{"rank", k + 1},
                            {"name", sites[p.candidate].name},
                            {"x", sites[p.candidate].x},
                            {"y", sites[p.candidate].y},
                            {"marginal_cells", p.marginal_cells},
                            {"marginal_area_m2", p.marginal_area_m2},
                            {"cumulative_area_m2", p.cumulative_area_m2},
                            {"cumulative_percent", p.cumulative_percent}};
        if (res.weighted) {
            e["marginal_weight"] = p.marginal_weight;
            e["cumulative_weight"] = p.cumulative_weight;
        }
        ranked.push_back(e);
    }
    return ranked;
}

nlohmann::json candidatesJson(const RunContext& ctx, const SiteSelectionResult& res,
                              const PlacedSites& placed, const std::vector<int>& rank_of) {
    nlohmann::json all = nlohmann::json::array();
    for (std::size_t i = 0; i < placed.rows.size(); ++i) {
        const Observer& c = placed.observers[i];
        const float ground = groundAt(ctx, c.col, c.row);
        nlohmann::json e = {{"name", c.name},
                            {"x", placed.rows[i].x},
                            {"y", placed.rows[i].y},
                            {"ground_m", summaryMetres(ground)},
                            {"eye_m", summaryMetres(ground + c.height_m)},
                            {"visible_area_m2", res.alone_area_m2[i]},
                            {"rank", rank_of[i] ? nlohmann::json(rank_of[i]) : nullptr}};
        if (res.weighted)
            e["visible_weight"] = res.alone_weight[i];
        all.push_back(e);
    }
    return all;
}

nlohmann::json coverageJson(const SiteSelectionResult& res) {
    std::vector<std::int64_t> by_count(res.ranked.size() + 1, 0);
    for (std::uint16_t v : res.count.cells()) {
        if (v != kCountNoData && v < by_count.size())
            ++by_count[v];
    }
    return {
        {"cells_seen_by_any", res.evaluated_cells - by_count[0]},
        {"area_seen_by_any_m2", res.ranked.empty() ? 0.0 : res.ranked.back().cumulative_area_m2},
        {"cells_by_count", by_count}};
}

nlohmann::json summaryJson(const RunContext& ctx, const SelectRunOptions& s, const Goal& g,
                           const PlacedSites& placed, const SiteSelectionResult& res) {
    nlohmann::json j = summaryBase(ctx.run);
    j["parameters"]["count"] = g.has_count ? nlohmann::json(s.count) : nlohmann::json(nullptr);
    j["parameters"]["coverage_percent"] = finiteOrNull(g.coverage);
    j["parameters"]["weight"] =
        s.weight.empty() ? nlohmann::json(nullptr) : nlohmann::json(s.weight);
    j["candidates_file"] = s.candidates;
    j["evaluated_cells"] = res.evaluated_cells;
    j["evaluated_area_m2"] = res.evaluated_area_m2;
    j["total_weight"] = res.weighted ? nlohmann::json(res.total_weight) : nlohmann::json(nullptr);
    j["stop_reason"] = stopReason(res.stop);
    j["coverage_reached"] = g.has_coverage ? nlohmann::json(res.coverage_reached) : nullptr;
    j["greedy_guarantee"] =
        "the chosen sites cover at least (1 - 1/e) = 63.2 % of what the best set of as many "
        "candidates would";
    std::vector<int> rank_of(placed.rows.size(), 0);
    j["selected"] = selectedJson(res, placed.rows, &rank_of);
    j["candidates"] = candidatesJson(ctx, res, placed, rank_of);
    j["coverage"] = coverageJson(res);
    return j;
}

std::string summaryTable(const RunContext& ctx, const Goal& g, const std::vector<Site>& sites,
                         const SiteSelectionResult& res) {
    TextTable t("Sites chosen from " + std::to_string(sites.size()) + " candidates on " +
                ctx.dem.path);
    if (res.weighted) {
        // The weights decide the ranking: show them beside the areas.
        t.setHeader({"rank", "site", "adds (weight)", "total (weight)", "% of weight",
                     "adds (area)", "total (area)"});
    } else {
        t.setHeader({"rank", "site", "adds", "total", "% of area"});
    }
    for (std::size_t k = 0; k < res.ranked.size(); ++k) {
        const SelectedSite& p = res.ranked[k];
        std::vector<std::string> row = {std::to_string(k + 1), sites[p.candidate].name};
        if (res.weighted) {
            row.push_back(printfFinite("%.6g", p.marginal_weight));
            row.push_back(printfFinite("%.6g", p.cumulative_weight));
            row.push_back(formatNumber(p.cumulative_percent, 2));
        }
        row.push_back(formatArea(p.marginal_area_m2));
        row.push_back(formatArea(p.cumulative_area_m2));
        if (!res.weighted)
            row.push_back(formatNumber(p.cumulative_percent, 2));
        t.addRow(row);
    }
    TextTable foot("");
    foot.add("evaluated ground", formatArea(res.evaluated_area_m2) + " (" +
                                     formatNumber(static_cast<double>(res.evaluated_cells), 0) +
                                     " cells within reach of a candidate)");
    if (res.stop == CoverageStop::NothingToAdd && g.has_count &&
        static_cast<int>(res.ranked.size()) < g.count) {
        foot.add("note", "the other candidates see nothing new; " +
                             std::to_string(res.ranked.size()) + " sites chosen, not " +
                             std::to_string(g.count));
    }
    if (g.has_coverage) {
        foot.add("coverage goal", printfFinite("%g", g.coverage) +
                                      " %: " + (res.coverage_reached ? "reached" : "not reached"));
    }
    foot.add("guarantee", "greedy choice: at least 63.2 % (1 - 1/e) of the best possible");
    return t.render() + foot.render();
}

/// The ranking engine over the candidates placed in the window read.
SiteSelectionResult choose(const RunContext& ctx, const SelectRunOptions& s, const Goal& g,
                           const std::vector<Observer>& candidates, const Grid<float>& weights) {
    std::vector<Observer> candidates_in_window;
    for (const Observer& c : candidates)
        candidates_in_window.push_back(inWindow(ctx, c));
    SiteSelectionOptions opt;
    opt.max_sites = g.has_count ? s.count : static_cast<int>(candidates.size());
    opt.coverage_percent = g.coverage;
    opt.target_height_m = ctx.target_height_m;
    opt.reach_m = ctx.reach_m;
    opt.method = s.common.method == "reference" ? ViewshedMethod::Reference : ViewshedMethod::Fast;
    opt.weight = s.weight.empty() ? nullptr : &weights;
    return selectSites(ctx.dem.z, ctx.dem.geometry, ctx.earth, candidates_in_window, opt,
                       *ctx.progress);
}

std::string countCheck(const std::string& text) {
    const auto k = parseWholeNumber(trim(text));
    if (!k)
        return "'" + echoText(text) + "' is not a whole number of sites";
    if (*k < 1)
        return "--count must be at least 1 (" + echoText(text) + " given)";
    if (*k > 65534)
        return "--count must be at most 65534, the most a count raster holds";
    return "";
}

}  // namespace

CommandHelp SelectRun::help() const {
    return {"select",
            "choose from candidate sites the few that together see the most ground (lazy greedy "
            "maximum coverage over their viewsheds)",
            "\nGreedy choice: each step takes the candidate whose viewshed adds the most ground "
            "not yet seen. Coverage is submodular, so the greedy sites cover at least 1 - 1/e "
            "(63.2 %) of what the best set of as many sites would, and usually as much. "
            "Percentages are of the ground with data within reach of at least one candidate (or "
            "of its total weight)."};
}

OptionTable SelectRun::declare() {
    SelectRunOptions& s = options;
    OptionTable t = commonOptions(s.common, kAllCommon);
    findOption(t, "--observer-height").help =
        "height of a candidate above the ground when its CSV row gives none, metres";
    t.push_back(OptionDecl("--candidates", &s.candidates,
                           "CSV of candidate sites (RFC 4180, UTF-8): name,x,y and optional "
                           "height (metres above ground); names unique",
                           "Choice")
                    .fileType()
                    .mandatory());
    t.push_back(
        OptionDecl("--count", &s.count, "choose at most K sites (1 ≤ K ≤ candidates)", "Choice")
            .checkedBy(countCheck)
            .noteGiven(&s.count_given));
    t.push_back(OptionDecl("--coverage", &s.coverage,
                           "choose as few sites as see P percent of the evaluated ground (or "
                           "weight), 0 < P ≤ 100",
                           "Choice")
                    .inUnit("%"));
    t.push_back(OptionDecl("--weight", &s.weight,
                           "raster on the DEM's grid of per-cell weights ≥ 0 (e.g. priority or "
                           "population) to maximise instead of ground area; no-data counts 0",
                           "Choice")
                    .fileType());
    t.push_back(OptionDecl("-o,--output", &s.output,
                           "coverage count raster (UInt16: how many chosen sites see each cell; "
                           "65535 outside reach of every candidate or on DEM no-data)",
                           "Output")
                    .fileType()
                    .mandatory());
    t.push_back(
        OptionDecl("--csv", &s.csv,
                   "ranked CSV (rank,name,x,y,marginal_area_m2,cumulative_area_m2,"
                   "cumulative_percent; with --weight also marginal_weight,cumulative_weight)",
                   "Output")
            .fileType());
    t.push_back(OptionDecl("--polygons", &s.polygons,
                           "the chosen sites' coverage as polygons (areas seen by the same number "
                           "of chosen sites, with their true ground areas): .gpkg or .geojson",
                           "Output")
                    .fileType());
    t.push_back(OptionDecl("--points", &s.points,
                           "the chosen sites as points with their rank and areas: .gpkg or "
                           ".geojson",
                           "Output")
                    .fileType());
    return t;
}

namespace {

/// --polygons and --points: the chosen sites' coverage and the sites themselves.
void writeChosenVectors(RunContext& ctx, const SelectRunOptions& s, const PlacedSites& placed,
                        const SiteSelectionResult& res, nlohmann::json& j) {
    std::string names;
    for (const SelectedSite& c : res.ranked)
        names += (names.empty() ? "" : "; ") + placed.rows[c.candidate].name;
    if (!s.polygons.empty()) {
        j["polygons"] = writePolygons(
            ctx, s.polygons,
            areaValues(res.count, [](std::uint16_t v) { return v >= 1 && v != kCountNoData; }),
            "count", "lookfar select: ground seen by the chosen sites", names);
    }
    if (s.points.empty())
        return;
    using K = VectorField::Kind;
    VectorLayerSpec spec{s.points,
                         "chosen_sites",
                         ctx.dem.crs.wkt,
                         {{"rank", K::Integer},
                          {"name", K::Text},
                          {"height_m", K::Real},
                          {"marginal_area_m2", K::Real},
                          {"cumulative_area_m2", K::Real},
                          {"cumulative_percent", K::Real}},
                         "lookfar select: the chosen sites in the order chosen"};
    if (res.weighted) {
        spec.fields.push_back({"marginal_weight", K::Real});
        spec.fields.push_back({"cumulative_weight", K::Real});
    }
    std::vector<VectorFeature> features;
    for (std::size_t r = 0; r < res.ranked.size(); ++r) {
        const SelectedSite& c = res.ranked[r];
        const MapPoint& p = placed.points_dem[c.candidate];
        features.push_back({{{p.x, p.y}},
                            {static_cast<long long>(r + 1), placed.rows[c.candidate].name,
                             placed.observers[c.candidate].height_m, c.marginal_area_m2,
                             c.cumulative_area_m2, c.cumulative_percent}});
        if (res.weighted) {
            features.back().values.push_back(c.marginal_weight);
            features.back().values.push_back(c.cumulative_weight);
        }
    }
    ctx.outputs->adopt(writeVectorFeatures(spec, features), s.points);
}

}  // namespace

RunReport SelectRun::run(const RunEnv& env) {
    const SelectRunOptions& s = options;
    // Validate (exit 2), open: the DEM, every output, the candidates, the weights (exit 3, 4).
    const Goal g = checkGoal(s);
    std::vector<std::string> inputs = {s.candidates};
    if (!s.weight.empty())
        inputs.push_back(s.weight);
    RunContext ctx = prepareRun(env, "select", s.common,
                                {{"-o", s.output, OutputKind::Raster},
                                 {"--csv", s.csv},
                                 {"--polygons", s.polygons, OutputKind::Vector},
                                 {"--points", s.points, OutputKind::Vector}},
                                inputs, DemCells::Later);
    const PlacedSites placed =
        placeSitesCsv(ctx, s.candidates, "candidate", "the ranking needs unique names");
    const std::vector<Observer>& candidates = placed.observers;  // cells of the whole DEM
    const int n = static_cast<int>(placed.rows.size());
    if (g.has_count && s.count > n) {
        throw UsageError("--count: " + std::to_string(s.count) + " is more than the " +
                         std::to_string(n) + " candidates in " + s.candidates);
    }
    readDemWindow(ctx, workWindow(ctx, candidates));  // the cells within reach of a candidate
    requireData(ctx, placed);
    Grid<float> weights;
    if (!s.weight.empty())
        weights = readWeights(ctx, s.weight);
    // Execute.
    const SiteSelectionResult res = choose(ctx, s, g, candidates, weights);
    describeChoice(ctx, s, g, candidates, res);
    // Write: count raster, ranked CSV (temporaries, renamed by finishRun); summary.
    writeGrid(ctx, s.output, PixelType::UInt16, kCountNoData, res.count.data(),
              "number of chosen sites that see the cell (65535: not evaluated)", "",
              std::max(1, static_cast<int>(res.ranked.size())));
    if (!s.csv.empty())
        writeTextFile(ctx, s.csv, rankedCsv(res, placed.rows));
    nlohmann::json j = summaryJson(ctx, s, g, placed, res);
    if (!s.polygons.empty() || !s.points.empty())
        writeChosenVectors(ctx, s, placed, res, j);
    const std::string table = summaryTable(ctx, g, placed.rows, res);
    if (g.has_coverage && !res.coverage_reached) {
        ctx.progress->warn(
            "the coverage goal of " + printfFinite("%g", g.coverage) +
            " % is not reached with all useful candidates (" +
            printfFinite("%.2f", res.ranked.empty() ? 0.0 : res.ranked.back().cumulative_percent) +
            " %)");
    }
    return finishRun(ctx, j, table);
}

}  // namespace lookfar::run
