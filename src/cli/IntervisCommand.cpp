// lookfar intervis: which stations of a network see each other. The matrix comes from
// lookfar/link/Intervisibility; this file places the stations, adds the PROJ distances and
// azimuths and writes the matrix CSV, the GeoJSON lines and the summary.
#include <cmath>
#include <cstdio>
#include <map>

#include "Commands.hpp"
#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Units.hpp"
#include "lookfar/io/Crs.hpp"
#include "lookfar/io/SitesCsv.hpp"
#include "lookfar/link/Intervisibility.hpp"
#include "lookfar/report/TextTable.hpp"

namespace lookfar::cli {

namespace {

struct IntervisState {
    CommonOptions options;
    std::string stations;
    std::string matrix;
    std::string lines;
    bool all_pairs = false;
};

double round4(double v) {
    return std::round(v * 1e4) / 1e4;
}

double round7(double v) {
    return std::round(v * 1e7) / 1e7;
}

/// Distance and azimuths of a pair, from the points as given (converted to the DEM's CRS).
struct PairGeometry {
    double distance_m = 0;        ///< PROJ geodesic on the DEM's ellipsoid
    double azimuth_deg = 0;       ///< grid azimuth at the first station towards the second
    double back_azimuth_deg = 0;  ///< grid azimuth at the second station towards the first
};

void runIntervis(const IntervisState& s) {
    const CommonOptions& o = s.options;
    RunContext ctx = prepareRun("intervis", o, {{"-o", s.matrix}, {"--lines", s.lines}},
                                {s.stations}, DemCells::Later);
    ctx.run.method = "reference";
    ctx.run.extra["STATIONS"] = s.stations;
    const GridGeometry& g = ctx.grid;

    // Stations: names unique, inside the DEM and on data (exit 3 naming the file and line).
    const PlacedSites placed =
        placeSitesCsv(ctx, s.stations, "station", "the matrix needs unique names");
    const std::vector<Observer>& stations = placed.observers;
    const std::vector<MapPoint>& points = placed.points_dem;
    if (stations.size() < 2)
        throw InputError(s.stations + ": intervisibility needs at least two stations");
    const int n = static_cast<int>(stations.size());
    readDemWindow(ctx, workWindow(ctx, stations));  // the cells within reach of a station
    requireData(ctx, placed);

    IntervisOptions opt;
    opt.reach_m = ctx.reach_m;
    std::vector<Observer> stations_in_window;
    for (const Observer& st : stations)
        stations_in_window.push_back(inWindow(ctx, st));
    const IntervisResult res = computeIntervisibility(ctx.dem.z, ctx.dem.geometry, ctx.earth,
                                                      stations_in_window, opt, *ctx.progress);

    // Distances and azimuths of a pair (PROJ geodesic; grid azimuths from the map coordinates,
    // which on a lat/lon grid are the true ones), solved from the lower index to the higher so
    // that both directions of a pair print the same figures.
    const LonLatOf ll(ctx.dem.crs.wkt);
    const Geodesic geo(ctx.dem.crs.ellipsoid);
    std::vector<MapPoint> lonlat(n);
    for (int i = 0; i < n; ++i)
        lonlat[i] = ll.apply(points[i]);
    auto pairGeometry = [&](int from, int to) {
        const int i = std::min(from, to), j = std::max(from, to);
        const GeodesicLine line = geo.inverse(lonlat[i].x, lonlat[i].y, lonlat[j].x, lonlat[j].y);
        PairGeometry ij;
        ij.distance_m = line.distance_m;
        if (g.geographic()) {
            ij.azimuth_deg = line.azimuth1_deg;
            ij.back_azimuth_deg = wrap360(line.azimuth2_deg + 180.0);
        } else {
            ij.azimuth_deg = wrap360(
                std::atan2(points[j].x - points[i].x, points[j].y - points[i].y) * kRadToDeg);
            ij.back_azimuth_deg = wrap360(ij.azimuth_deg + 180.0);
        }
        if (line.distance_m == 0)
            ij.azimuth_deg = ij.back_azimuth_deg = std::numeric_limits<double>::quiet_NaN();
        if (from != i)
            std::swap(ij.azimuth_deg, ij.back_azimuth_deg);
        return ij;
    };

    // The matrix, streamed row by row into its temporary file: one row per ordered pair within
    // reach (with --all-pairs, every ordered pair).
    TextStream& matrix = ctx.outputs->openText(s.matrix);
    matrix.write("from,to,visible,margin_m,distance_m,azimuth_deg,back_azimuth_deg\n");
    for (int i = 0; i < n; ++i) {
        throwIfCancelled(*ctx.progress);
        std::string rows;
        auto addRow = [&](int j, const PairVerdict& v) {
            const PairGeometry p = pairGeometry(i, j);
            rows += csvField(stations[i].name) + "," + csvField(stations[j].name) + "," +
                    (v.visible ? "yes" : "no") + "," + printfFinite("%.3f", v.margin_m) + "," +
                    printfFinite("%.3f", p.distance_m) + "," + printfFinite("%.4f", p.azimuth_deg) +
                    "," + printfFinite("%.4f", p.back_azimuth_deg) + "\n";
        };
        if (s.all_pairs) {
            for (int j = 0; j < n; ++j)
                if (j != i)
                    addRow(j, res.at(i, j));
        } else {
            for (const PairVerdict& v : res.judged[static_cast<std::size_t>(i)])
                addRow(v.to, v);
        }
        matrix.write(rows);
    }

    // Pairs and stations.
    std::int64_t pairs = 0, judged = 0, both = 0, one_way = 0;
    std::vector<int> sees(n, 0), seen_by(n, 0);
    std::vector<std::pair<int, int>> visible_pairs;
    pairs = static_cast<std::int64_t>(n) * (n - 1) / 2;
    for (int i = 0; i < n; ++i) {
        for (const PairVerdict& a : res.judged[static_cast<std::size_t>(i)]) {
            const int j = a.to;
            if (a.visible) {
                ++sees[i];
                ++seen_by[j];
            }
            if (j < i) {
                // Judged only this way round (the reach measured from either end differs by a
                // rounding): a one-way pair when this way sees.
                if (a.visible && !res.at(j, i).judged)
                    ++one_way;
                continue;
            }
            const PairVerdict b = res.at(j, i);
            ++judged;
            if (a.visible && b.visible) {
                ++both;
                visible_pairs.emplace_back(i, j);
            } else if (a.visible != b.visible) {
                ++one_way;
            }
        }
    }
    std::vector<std::string> seen_by_none;
    for (int j = 0; j < n; ++j) {
        if (seen_by[j] == 0)
            seen_by_none.push_back(stations[j].name);
    }

    // GeoJSON (RFC 7946): WGS 84 lon/lat, no "crs" member.
    if (!s.lines.empty()) {
        CoordinateTransform to_wgs84(ctx.dem.crs.wkt, "EPSG:4326");
        std::vector<MapPoint> wgs(n);
        for (int i = 0; i < n; ++i)
            wgs[i] = to_wgs84.apply(points[i]);
        nlohmann::json features = nlohmann::json::array();
        auto milli = [](double v) { return std::round(v * 1000.0) / 1000.0; };
        for (const auto& [i, j] : visible_pairs) {
            const PairGeometry p = pairGeometry(i, j);
            nlohmann::json line = {
                {"type", "LineString"},
                {"coordinates",
                 {{round7(wgs[i].x), round7(wgs[i].y)}, {round7(wgs[j].x), round7(wgs[j].y)}}}};
            nlohmann::json props = {{"from", stations[i].name},
                                    {"to", stations[j].name},
                                    {"distance_m", milli(p.distance_m)},
                                    {"margin_at_to_m", milli(res.at(i, j).margin_m)},
                                    {"margin_at_from_m", milli(res.at(j, i).margin_m)},
                                    {"azimuth_deg", finiteOrNull(round4(p.azimuth_deg))},
                                    {"back_azimuth_deg", finiteOrNull(round4(p.back_azimuth_deg))}};
            features.push_back({{"type", "Feature"}, {"geometry", line}, {"properties", props}});
        }
        // One feature per line: readable, and diff-friendly.
        std::string text = "{\"type\": \"FeatureCollection\", \"features\": [\n";
        for (std::size_t k = 0; k < features.size(); ++k)
            text += features[k].dump() + (k + 1 < features.size() ? ",\n" : "\n");
        writeTextFile(ctx, s.lines, text + "]}\n");
    }

    nlohmann::json j = summaryBase(ctx.run);
    j["parameters"]["target_height_m"] = nullptr;  // each target is the other station's height
    j["stations_file"] = s.stations;
    j["station_count"] = n;
    j["pairs"] = pairs;
    j["pairs_within_reach"] = judged;
    j["pairs_visible"] = both;
    j["pairs_visible_one_way"] = one_way;
    j["stations_seen_by_none"] = seen_by_none;
    nlohmann::json list = nlohmann::json::array();
    for (int i = 0; i < n; ++i) {
        const float ground = groundAt(ctx, stations[i].col, stations[i].row);
        list.push_back({{"name", stations[i].name},
                        {"x", points[i].x},
                        {"y", points[i].y},
                        {"ground_m", ground},
                        {"height_m", stations[i].height_m},
                        {"eye_m", ground + stations[i].height_m},
                        {"sees", sees[i]},
                        {"seen_by", seen_by[i]}});
    }
    j["stations"] = list;

    TextTable t("Intervisibility of " + std::to_string(n) + " stations on " + ctx.dem.path);
    t.setHeader({"station", "ground m", "height m", "sees", "seen by"});
    for (int i = 0; i < n; ++i) {
        t.addRow({stations[i].name, formatNumber(list[i]["ground_m"].get<double>(), 1),
                  formatNumber(stations[i].height_m, 1), std::to_string(sees[i]),
                  std::to_string(seen_by[i])});
    }
    std::string table = t.render();
    TextTable sum("");
    sum.add("pairs", std::to_string(pairs) + (std::isfinite(ctx.reach_m)
                                                  ? " (" + std::to_string(judged) + " within reach)"
                                                  : ""));
    sum.add("pairs visible",
            std::to_string(both) + (one_way ? " (and " + std::to_string(one_way) +
                                                  " seen one way only, margin near zero)"
                                            : ""));
    std::string none;
    for (const auto& name : seen_by_none)
        none += (none.empty() ? "" : ", ") + name;
    sum.add("seen by no other station", none.empty() ? "none" : none);
    finishSummary(ctx, j, table + sum.render());
}

}  // namespace

Command addIntervisCommand(CLI::App& root) {
    auto state = std::make_shared<IntervisState>();
    CLI::App* app = root.add_subcommand(
        "intervis",
        "intervisibility of a network of stations: for every pair, visible or not, margin, "
        "distance and azimuths both ways");
    addCommonOptions(app, state->options, kGeometryOptions | kHeightOptions);
    app->remove_option(app->get_option("--target-height"));
    app->get_option("--observer-height")
        ->description("height of a station above the ground when its CSV row gives none, metres");
    app->add_option("--stations", state->stations,
                    "CSV of stations (RFC 4180, UTF-8): name,x,y and optional height (metres "
                    "above ground); names unique")
        ->type_name("FILE")
        ->required()
        ->group("Stations");
    app->add_option("-o,--output", state->matrix,
                    "matrix CSV, one row per ordered pair "
                    "(from,to,visible,margin_m,distance_m,azimuth_deg,back_azimuth_deg)")
        ->type_name("FILE")
        ->required()
        ->group("Output");
    app->add_flag("--all-pairs", state->all_pairs,
                  "also list the pairs beyond --reach in the matrix (visible 'no', margin empty); "
                  "without it the matrix holds the pairs within reach only")
        ->group("Output");
    app->add_option("--lines", state->lines,
                    "GeoJSON (RFC 7946, WGS 84 lon/lat) with a line for every pair that sees "
                    "each other")
        ->type_name("FILE")
        ->group("Output");
    app->footer(
        "\nEach station stands at the centre of its DEM cell; the pair i,j is judged by the "
        "sightline rule from i's eye (ground + height) to j's antenna (ground + j's height). "
        "Pairs beyond --reach are not judged and not listed (with --all-pairs: listed with visible "
        "'no' and the margin empty). Distances are PROJ "
        "geodesics between the given points; azimuths are grid azimuths (true on lat/lon DEMs)." +
        conventionsText() + cautionText());
    return {app, [state] { runIntervis(*state); }};
}

}  // namespace lookfar::cli
