// lookfar select: choose the candidate sites that together see the most ground (or weight).
// The choice is lookfar/siting/SiteSelection (lazy greedy maximum coverage); this file reads
// the candidates and the weight raster and writes the count raster, the ranked CSV and the
// summary.
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <iostream>
#include <map>

#include "Commands.hpp"
#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Text.hpp"
#include "lookfar/core/Units.hpp"
#include "lookfar/io/Crs.hpp"
#include "lookfar/io/SitesCsv.hpp"
#include "lookfar/report/TextTable.hpp"
#include "lookfar/siting/SiteSelection.hpp"

namespace lookfar::cli {

namespace {

struct SelectState {
    CommonOptions options;
    std::string candidates;
    int count = 0;
    CLI::Option* count_opt = nullptr;  ///< given or not (0 is refused, not "no count")
    std::string coverage;              ///< empty = no coverage goal
    std::string output;
    std::string csv;
    std::string weight;
};

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

void runSelect(const SelectState& s) {
    const CommonOptions& o = s.options;
    const bool has_count = s.count_opt->count() > 0;
    const bool has_coverage = !trim(s.coverage).empty();
    if (!has_count && !has_coverage) {
        throw UsageError("select needs --count K, --coverage P, or both");
    }
    if (has_count && s.count < 1) {
        throw UsageError("--count: " + std::to_string(s.count) + " must be at least 1");
    }
    double coverage = std::numeric_limits<double>::quiet_NaN();
    if (has_coverage) {
        const std::string t = trim(s.coverage);
        const auto p = parseDecimal(t);
        if (!p || !(*p > 0 && *p <= 100)) {
            throw UsageError("--coverage: '" + echoText(t) + "' is not a percentage in (0, 100]");
        }
        coverage = *p;
    }
    std::vector<std::string> inputs = {s.candidates};
    if (!s.weight.empty())
        inputs.push_back(s.weight);
    RunContext ctx =
        prepareRun("select", o, {{"-o", s.output}, {"--csv", s.csv}}, inputs, DemCells::Later);
    const PlacedSites placed =
        placeSitesCsv(ctx, s.candidates, "candidate", "the ranking needs unique names");
    const std::vector<Site>& sites = placed.rows;
    const std::vector<Observer>& candidates = placed.observers;  // cells of the whole DEM
    const int n = static_cast<int>(sites.size());
    if (has_count && s.count > n) {
        throw UsageError("--count: " + std::to_string(s.count) + " is more than the " +
                         std::to_string(n) + " candidates in " + s.candidates);
    }
    readDemWindow(ctx, workWindow(ctx, candidates));  // the cells within reach of a candidate
    requireData(ctx, placed);
    Grid<float> weights;
    if (!s.weight.empty())
        weights = readWeights(ctx, s.weight);
    std::vector<Observer> candidates_in_window;
    for (const Observer& c : candidates)
        candidates_in_window.push_back(inWindow(ctx, c));

    SiteSelectionOptions opt;
    opt.max_sites = has_count ? s.count : n;
    opt.coverage_percent = coverage;
    opt.target_height_m = ctx.target_height_m;
    opt.reach_m = ctx.reach_m;
    opt.method = o.method == "reference" ? ViewshedMethod::Reference : ViewshedMethod::Fast;
    opt.weight = s.weight.empty() ? nullptr : &weights;
    const SiteSelectionResult res = selectSites(ctx.dem.z, ctx.dem.geometry, ctx.earth,
                                                candidates_in_window, opt, *ctx.progress);

    std::string chosen;
    for (const SelectedSite& p : res.ranked)
        chosen += (chosen.empty() ? "" : "; ") + candidates[p.candidate].name;
    ctx.run.extra["CANDIDATES"] = s.candidates;
    ctx.run.extra["COUNT"] = has_count ? std::to_string(s.count) : "none";
    ctx.run.extra["COVERAGE_PERCENT"] = has_coverage ? printfFinite("%.10g", coverage) : "none";
    ctx.run.extra["WEIGHT"] = s.weight.empty() ? "ground area" : s.weight;
    ctx.run.extra["SELECTED"] = chosen;

    // Count raster, ranked CSV, summary.
    writeGrid(ctx, s.output, PixelType::UInt16, kCountNoData, res.count.data(),
              "number of chosen sites that see the cell (65535: not evaluated)");
    std::string csv = "rank,name,x,y,marginal_area_m2,cumulative_area_m2,cumulative_percent\n";
    for (std::size_t k = 0; k < res.ranked.size(); ++k) {
        const SelectedSite& p = res.ranked[k];
        const Site& site = sites[p.candidate];
        csv += std::to_string(k + 1) + "," + csvField(site.name) + "," +
               printfFinite("%.10g", site.x) + "," + printfFinite("%.10g", site.y) + "," +
               printfFinite("%.1f", p.marginal_area_m2) + "," +
               printfFinite("%.1f", p.cumulative_area_m2) + "," +
               printfFinite("%.4f", p.cumulative_percent) + "\n";
    }
    if (!s.csv.empty())
        writeTextFile(ctx, s.csv, csv);

    nlohmann::json j = summaryBase(ctx.run);
    j["parameters"]["count"] = has_count ? nlohmann::json(s.count) : nlohmann::json(nullptr);
    j["parameters"]["coverage_percent"] = finiteOrNull(coverage);
    j["parameters"]["weight"] =
        s.weight.empty() ? nlohmann::json(nullptr) : nlohmann::json(s.weight);
    j["candidates_file"] = s.candidates;
    j["evaluated_cells"] = res.evaluated_cells;
    j["evaluated_area_m2"] = res.evaluated_area_m2;
    j["total_weight"] = res.weighted ? nlohmann::json(res.total_weight) : nlohmann::json(nullptr);
    j["stop_reason"] = stopReason(res.stop);
    j["coverage_reached"] = has_coverage ? nlohmann::json(res.coverage_reached) : nullptr;
    j["greedy_guarantee"] =
        "the chosen sites cover at least (1 - 1/e) = 63.2 % of what the best set of as many "
        "candidates would";
    nlohmann::json ranked = nlohmann::json::array();
    std::vector<int> rank_of(n, 0);
    for (std::size_t k = 0; k < res.ranked.size(); ++k) {
        const SelectedSite& p = res.ranked[k];
        rank_of[p.candidate] = static_cast<int>(k + 1);
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
    j["selected"] = ranked;
    nlohmann::json all = nlohmann::json::array();
    for (int i = 0; i < n; ++i) {
        const Observer& c = candidates[i];
        const float ground = groundAt(ctx, c.col, c.row);
        nlohmann::json e = {{"name", c.name},
                            {"x", sites[i].x},
                            {"y", sites[i].y},
                            {"ground_m", ground},
                            {"eye_m", ground + c.height_m},
                            {"visible_area_m2", res.alone_area_m2[i]},
                            {"rank", rank_of[i] ? nlohmann::json(rank_of[i]) : nullptr}};
        if (res.weighted)
            e["visible_weight"] = res.alone_weight[i];
        all.push_back(e);
    }
    j["candidates"] = all;
    std::vector<std::int64_t> by_count(res.ranked.size() + 1, 0);
    for (std::uint16_t v : res.count.cells()) {
        if (v != kCountNoData && v < by_count.size())
            ++by_count[v];
    }
    j["coverage"] = {
        {"cells_seen_by_any", res.evaluated_cells - by_count[0]},
        {"area_seen_by_any_m2", res.ranked.empty() ? 0.0 : res.ranked.back().cumulative_area_m2},
        {"cells_by_count", by_count}};

    TextTable t("Sites chosen from " + std::to_string(n) + " candidates on " + ctx.dem.path);
    t.setHeader({"rank", "site", "adds", "total", res.weighted ? "% of weight" : "% of area"});
    for (std::size_t k = 0; k < res.ranked.size(); ++k) {
        const SelectedSite& p = res.ranked[k];
        t.addRow({std::to_string(k + 1), sites[p.candidate].name, formatArea(p.marginal_area_m2),
                  formatArea(p.cumulative_area_m2), formatNumber(p.cumulative_percent, 2)});
    }
    std::string table = t.render();
    TextTable foot("");
    foot.add("evaluated ground", formatArea(res.evaluated_area_m2) + " (" +
                                     formatNumber(static_cast<double>(res.evaluated_cells), 0) +
                                     " cells within reach of a candidate)");
    if (res.stop == CoverageStop::NothingToAdd && has_count &&
        static_cast<int>(res.ranked.size()) < s.count) {
        foot.add("note", "the other candidates see nothing new; " +
                             std::to_string(res.ranked.size()) + " sites chosen, not " +
                             std::to_string(s.count));
    }
    if (has_coverage) {
        foot.add("coverage goal", printfFinite("%g", coverage) +
                                      " %: " + (res.coverage_reached ? "reached" : "not reached"));
    }
    foot.add("guarantee", "greedy choice: at least 63.2 % (1 - 1/e) of the best possible");
    if (has_coverage && !res.coverage_reached) {
        std::cerr << "lookfar: the coverage goal of " << printfFinite("%g", coverage)
                  << " % is not reached with all useful candidates ("
                  << printfFinite("%.2f",
                                  res.ranked.empty() ? 0.0 : res.ranked.back().cumulative_percent)
                  << " %)\n";
    }
    finishSummary(ctx, j, table + foot.render());
}

}  // namespace

Command addSelectCommand(CLI::App& root) {
    auto state = std::make_shared<SelectState>();
    CLI::App* app = root.add_subcommand(
        "select",
        "choose from candidate sites the few that together see the most ground (lazy greedy "
        "maximum coverage over their viewsheds)");
    addCommonOptions(app, state->options, kAllCommon);
    app->get_option("--observer-height")
        ->description(
            "height of a candidate above the ground when its CSV row gives none, "
            "metres");
    app->add_option("--candidates", state->candidates,
                    "CSV of candidate sites (RFC 4180, UTF-8): name,x,y and optional height "
                    "(metres above ground); names unique")
        ->type_name("FILE")
        ->required()
        ->group("Choice");
    state->count_opt =
        app->add_option("--count", state->count, "choose at most K sites (1 ≤ K ≤ candidates)")
            ->check(CLI::Validator(
                [](const std::string& text) -> std::string {
                    const auto k = parseWholeNumber(trim(text));
                    if (!k)
                        return "'" + echoText(text) + "' is not a whole number of sites";
                    if (*k < 1)
                        return "--count must be at least 1 (" + echoText(text) + " given)";
                    if (*k > 65534)
                        return "--count must be at most 65534, the most a count raster holds";
                    return "";
                },
                ""))
            ->group("Choice");
    app->add_option("--coverage", state->coverage,
                    "choose as few sites as see P percent of the evaluated ground (or weight), "
                    "0 < P ≤ 100")
        ->group("Choice");
    app->add_option("--weight", state->weight,
                    "raster on the DEM's grid of per-cell weights ≥ 0 (e.g. priority or "
                    "population) to maximise instead of ground area; no-data counts 0")
        ->type_name("FILE")
        ->group("Choice");
    app->add_option("-o,--output", state->output,
                    "coverage count raster (UInt16: how many chosen sites see each cell; 65535 "
                    "outside reach of every candidate or on DEM no-data)")
        ->type_name("FILE")
        ->required()
        ->group("Output");
    app->add_option("--csv", state->csv,
                    "ranked CSV (rank,name,x,y,marginal_area_m2,cumulative_area_m2,"
                    "cumulative_percent)")
        ->type_name("FILE")
        ->group("Output");
    app->footer(
        "\nGreedy choice: each step takes the candidate whose viewshed adds the most ground not "
        "yet seen. Coverage is submodular, so the greedy sites cover at least 1 - 1/e (63.2 %) "
        "of what the best set of as many sites would, and usually as much. Percentages are of "
        "the ground with data within reach of at least one candidate (or of its total weight)." +
        conventionsText() + cautionText());
    return {app, [state] { runSelect(*state); }};
}

}  // namespace lookfar::cli
