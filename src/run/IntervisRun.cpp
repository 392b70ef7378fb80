#include "lookfar/run/IntervisRun.hpp"

#include <cmath>
#include <cstdio>
#include <limits>
#include <map>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Units.hpp"
#include "lookfar/io/Crs.hpp"
#include "lookfar/io/OutputSet.hpp"
#include "lookfar/io/SitesCsv.hpp"
#include "lookfar/io/VectorOutput.hpp"
#include "lookfar/link/Intervisibility.hpp"
#include "lookfar/report/GeoJson.hpp"
#include "lookfar/report/TextTable.hpp"

namespace lookfar::run {

namespace {

double round4(double v) {
    return std::round(v * 1e4) / 1e4;
}

/// Distance, azimuths and survey figures of a pair, from the points as given (converted to the
/// DEM's CRS) and the stations' eyes.
struct PairGeometry {
    double distance_m = 0;        ///< PROJ geodesic on the DEM's ellipsoid
    double azimuth_deg = 0;       ///< grid azimuth at the first station towards the second
    double back_azimuth_deg = 0;  ///< grid azimuth at the second station towards the first
    double azimuth_true_deg = 0;  ///< geodesic azimuth at the first station (from true north)
    double zenith_deg = 0;    ///< zenith angle first eye → second eye, curvature and refraction
    double slope_m = 0;       ///< straight line between the eyes (true radius)
    double grid_m = 0;        ///< distance in the map's plane (the geodesic on lat/lon DEMs)
    double scale_factor = 1;  ///< grid ÷ geodesic distance (1 on lat/lon DEMs)
};

/// --heights absolute: the CSV's heights are elevations of the instruments; each becomes a height
/// above the ground of its cell (exit 3 naming the row when it lies below that ground).
void heightsAboveGround(const RunContext& ctx, PlacedSites& placed) {
    for (std::size_t i = 0; i < placed.rows.size(); ++i) {
        if (!placed.rows[i].height_m)
            continue;  // --observer-height above the ground, as documented
        Observer& o = placed.observers[i];
        const double ground = groundAt(ctx, o.col, o.row);
        const double above = *placed.rows[i].height_m - ground;
        if (above < 0) {
            throw InputError(
                placed.what[i] + ": its height " + printfNumber("%.3f", *placed.rows[i].height_m) +
                " m lies below the ground of its cell (" + printfNumber("%.3f", ground) +
                " m); with --heights absolute a height is the instrument's "
                "elevation");
        }
        o.height_m = above;
    }
}

/// Figures of pairs (PROJ geodesic; grid azimuths from the map coordinates, which on a lat/lon
/// grid are the true ones), solved from the lower index to the higher so that both directions of
/// a pair print the same distances.
class PairGeometer {
  public:
    PairGeometer(const RunContext& ctx, const std::vector<MapPoint>& points,
                 const std::vector<Observer>& stations)
        : points_(points),
          stations_(stations),
          earth_(ctx.earth),
          geo_(ctx.dem.crs.ellipsoid),
          geographic_(ctx.grid.geographic()),
          unit_m_(ctx.grid.linearUnitMetres()) {
        const LonLatOf ll(ctx.dem.crs.wkt);
        for (std::size_t i = 0; i < points.size(); ++i) {
            lonlat_.push_back(ll.apply(points[i]));
            eye_.push_back(groundAt(ctx, stations[i].col, stations[i].row) + stations[i].height_m);
        }
    }

    PairGeometry operator()(int from, int to) const {
        const int i = std::min(from, to), j = std::max(from, to);
        const GeodesicLine line =
            geo_.inverse(lonlat_[i].x, lonlat_[i].y, lonlat_[j].x, lonlat_[j].y);
        PairGeometry ij;
        ij.distance_m = line.distance_m;
        if (geographic_) {
            ij.azimuth_deg = line.azimuth1_deg;
            ij.back_azimuth_deg = wrap360(line.azimuth2_deg + 180.0);
            ij.grid_m = line.distance_m;
        } else {
            ij.azimuth_deg = wrap360(
                std::atan2(points_[j].x - points_[i].x, points_[j].y - points_[i].y) * kRadToDeg);
            ij.back_azimuth_deg = wrap360(ij.azimuth_deg + 180.0);
            ij.grid_m =
                std::hypot(points_[j].x - points_[i].x, points_[j].y - points_[i].y) * unit_m_;
            ij.scale_factor = line.distance_m > 0 ? ij.grid_m / line.distance_m : 1.0;
        }
        const double true_ij = line.azimuth1_deg, true_ji = wrap360(line.azimuth2_deg + 180.0);
        ij.slope_m =
            EarthModel::sphereChordM(eye_[i], eye_[j], line.distance_m,
                                     earth_.radiusAlong(stations_[i].latitude_deg, true_ij));
        if (line.distance_m == 0)
            ij.azimuth_deg = ij.back_azimuth_deg = std::numeric_limits<double>::quiet_NaN();
        // The direction asked for: from `from`'s eye towards `to`'s.
        const double true_az = from == i ? true_ij : true_ji;
        const double r_eff = earth_.effectiveRadius(stations_[from].latitude_deg, true_az);
        ij.azimuth_true_deg =
            line.distance_m == 0 ? std::numeric_limits<double>::quiet_NaN() : true_az;
        ij.zenith_deg = 90.0 - EarthModel::sphereElevationAngleDeg(eye_[from], eye_[to],
                                                                   line.distance_m, r_eff);
        if (from != i)
            std::swap(ij.azimuth_deg, ij.back_azimuth_deg);
        return ij;
    }

  private:
    const std::vector<MapPoint>& points_;
    const std::vector<Observer>& stations_;
    const EarthModel& earth_;
    std::vector<MapPoint> lonlat_;
    std::vector<double> eye_;
    Geodesic geo_;
    bool geographic_;
    double unit_m_;
};

/// The matrix, streamed row by row into its temporary file: one row per ordered pair within
/// reach (with --all-pairs, every ordered pair).
void writeMatrix(RunContext& ctx, const IntervisRunOptions& s,
                 const std::vector<Observer>& stations, const IntervisResult& res,
                 const PairGeometer& pairGeometry) {
    const int n = static_cast<int>(stations.size());
    TextStream& matrix = ctx.outputs->openText(s.matrix);
    matrix.write(
        "from,to,visible,margin_m,distance_m,azimuth_deg,back_azimuth_deg,reason,"
        "azimuth_true_deg,zenith_deg,slope_distance_m,grid_distance_m,scale_factor\n");
    for (int i = 0; i < n; ++i) {
        throwIfCancelled(*ctx.progress);
        std::string rows;
        auto addRow = [&](int j, const PairVerdict& v) {
            const PairGeometry p = pairGeometry(i, j);
            rows += csvField(stations[i].name) + "," + csvField(stations[j].name) + "," +
                    (v.visible ? "yes" : "no") + "," + printfFinite("%.3f", v.margin_m) + "," +
                    printfFinite("%.3f", p.distance_m) + "," + printfFinite("%.4f", p.azimuth_deg) +
                    "," + printfFinite("%.4f", p.back_azimuth_deg) + "," +
                    (!v.judged   ? "beyond reach"
                     : v.visible ? "clear"
                                 : "blocked") +
                    "," + printfFinite("%.4f", p.azimuth_true_deg) + "," +
                    printfFinite("%.5f", p.zenith_deg) + "," + printfFinite("%.3f", p.slope_m) +
                    "," + printfFinite("%.3f", p.grid_m) + "," +
                    printfFinite("%.8f", p.scale_factor) + "\n";
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
}

/// Pairs and stations counted.
struct PairTally {
    std::int64_t pairs = 0, judged = 0, both = 0, one_way = 0;
    std::vector<int> sees, seen_by;
    std::vector<std::pair<int, int>> visible_pairs;
    std::vector<std::string> seen_by_none;
};

PairTally tallyPairs(const IntervisResult& res, const std::vector<Observer>& stations) {
    const int n = static_cast<int>(stations.size());
    PairTally t;
    t.sees.assign(n, 0);
    t.seen_by.assign(n, 0);
    t.pairs = static_cast<std::int64_t>(n) * (n - 1) / 2;
    for (int i = 0; i < n; ++i) {
        for (const PairVerdict& a : res.judged[static_cast<std::size_t>(i)]) {
            const int j = a.to;
            if (a.visible) {
                ++t.sees[i];
                ++t.seen_by[j];
            }
            if (j < i) {
                // Judged only this way round (the reach measured from either end differs by a
                // rounding): a one-way pair when this way sees.
                if (a.visible && !res.at(j, i).judged)
                    ++t.one_way;
                continue;
            }
            const PairVerdict b = res.at(j, i);
            ++t.judged;
            if (a.visible && b.visible) {
                ++t.both;
                t.visible_pairs.emplace_back(i, j);
            } else if (a.visible != b.visible) {
                ++t.one_way;
            }
        }
    }
    for (int j = 0; j < n; ++j) {
        if (t.seen_by[j] == 0)
            t.seen_by_none.push_back(stations[j].name);
    }
    return t;
}

/// GeoJSON (RFC 7946): WGS 84 lon/lat, no "crs" member; one feature per line: readable, and
/// diff-friendly.
std::string linesGeoJson(const RunContext& ctx, const std::vector<MapPoint>& points,
                         const std::vector<Observer>& stations, const IntervisResult& res,
                         const PairTally& tally, const PairGeometer& pairGeometry) {
    CoordinateTransform to_wgs84(ctx.dem.crs.wkt, "EPSG:4326");
    std::vector<MapPoint> wgs;
    for (const MapPoint& p : points)
        wgs.push_back(to_wgs84.apply(p));
    auto milli = [](double v) { return std::round(v * 1000.0) / 1000.0; };
    std::string text = "{\"type\": \"FeatureCollection\", \"features\": [\n";
    for (std::size_t k = 0; k < tally.visible_pairs.size(); ++k) {
        const auto [i, j] = tally.visible_pairs[k];
        const PairGeometry p = pairGeometry(i, j);
        // Longitudes within ±180°, split at the antimeridian (RFC 7946 §3.1.9).
        nlohmann::json line = geoJsonSegment(wgs[i].x, wgs[i].y, wgs[j].x, wgs[j].y);
        nlohmann::json props = {{"from", stations[i].name},
                                {"to", stations[j].name},
                                {"distance_m", milli(p.distance_m)},
                                {"margin_at_to_m", milli(res.at(i, j).margin_m)},
                                {"margin_at_from_m", milli(res.at(j, i).margin_m)},
                                {"azimuth_deg", finiteOrNull(round4(p.azimuth_deg))},
                                {"back_azimuth_deg", finiteOrNull(round4(p.back_azimuth_deg))}};
        const nlohmann::json feature = {
            {"type", "Feature"}, {"geometry", line}, {"properties", props}};
        text += feature.dump() + (k + 1 < tally.visible_pairs.size() ? ",\n" : "\n");
    }
    return text + "]}\n";
}

/// The stations as points in the DEM's CRS with their figures (--points).
void writeStationPoints(RunContext& ctx, const std::string& path, const PlacedSites& placed,
                        const PairTally& t) {
    using K = VectorField::Kind;
    VectorLayerSpec spec{path,
                         "stations",
                         ctx.dem.crs.wkt,
                         {{"name", K::Text},
                          {"ground_m", K::Real},
                          {"height_m", K::Real},
                          {"eye_m", K::Real},
                          {"sees", K::Integer},
                          {"seen_by", K::Integer}},
                         "lookfar intervis: stations and how many others each sees and is seen by"};
    std::vector<VectorFeature> features;
    for (std::size_t i = 0; i < placed.observers.size(); ++i) {
        const Observer& st = placed.observers[i];
        const double ground = groundAt(ctx, st.col, st.row);
        features.push_back(
            {{{placed.points_dem[i].x, placed.points_dem[i].y}},
             {st.name, ground, st.height_m, ground + st.height_m, static_cast<long long>(t.sees[i]),
              static_cast<long long>(t.seen_by[i])}});
    }
    ctx.outputs->adopt(writeVectorFeatures(spec, features), path);
}

nlohmann::json summaryJson(const RunContext& ctx, const IntervisRunOptions& s,
                           const PlacedSites& placed, const PairTally& t) {
    const std::vector<Observer>& stations = placed.observers;
    nlohmann::json j = summaryBase(ctx.run);
    j["parameters"]["target_height_m"] = nullptr;  // each target is the other station's height
    j["stations_file"] = s.stations;
    j["station_count"] = stations.size();
    j["pairs"] = t.pairs;
    j["pairs_within_reach"] = t.judged;
    j["pairs_visible"] = t.both;
    j["pairs_visible_one_way"] = t.one_way;
    j["stations_seen_by_none"] = t.seen_by_none;
    nlohmann::json list = nlohmann::json::array();
    for (std::size_t i = 0; i < stations.size(); ++i) {
        const float ground = groundAt(ctx, stations[i].col, stations[i].row);
        list.push_back({{"name", stations[i].name},
                        {"x", placed.points_dem[i].x},
                        {"y", placed.points_dem[i].y},
                        {"ground_m", summaryMetres(ground)},
                        {"height_m", stations[i].height_m},
                        {"eye_m", summaryMetres(ground + stations[i].height_m)},
                        {"sees", t.sees[i]},
                        {"seen_by", t.seen_by[i]}});
    }
    j["stations"] = list;
    return j;
}

std::string summaryTable(const RunContext& ctx, const std::vector<Observer>& stations,
                         const nlohmann::json& list, const PairTally& t) {
    const int n = static_cast<int>(stations.size());
    TextTable table("Intervisibility of " + std::to_string(n) + " stations on " + ctx.dem.path);
    table.setHeader({"station", "ground m", "height m", "sees", "seen by"});
    for (int i = 0; i < n; ++i) {
        table.addRow({stations[i].name, formatNumber(list[i]["ground_m"].get<double>(), 1),
                      formatNumber(stations[i].height_m, 1), std::to_string(t.sees[i]),
                      std::to_string(t.seen_by[i])});
    }
    TextTable sum("");
    sum.add(
        "pairs",
        std::to_string(t.pairs) +
            (std::isfinite(ctx.reach_m) ? " (" + std::to_string(t.judged) + " within reach)" : ""));
    sum.add("pairs visible",
            std::to_string(t.both) + (t.one_way ? " (and " + std::to_string(t.one_way) +
                                                      " seen one way only, margin near zero)"
                                                : ""));
    // A name holding a comma or a quote is quoted as in a CSV, so that the list reads one way:
    // "CP 7, roof", TRIG 102.
    std::string none;
    for (const auto& name : t.seen_by_none)
        none += (none.empty() ? "" : ", ") + csvField(name);
    sum.add("seen by no other station", none.empty() ? "none" : none);
    return table.render() + sum.render();
}

}  // namespace

CommandHelp IntervisRun::help() const {
    return {"intervis",
            "intervisibility of a network of stations: for every pair, visible or not, margin, "
            "distance and azimuths both ways",
            "\nEach station stands at the centre of its DEM cell; the pair i,j is judged by the "
            "sightline rule from i's eye (ground + height) to j's antenna (ground + j's height). "
            "Pairs beyond --reach are not judged and not listed (with --all-pairs: listed with "
            "visible 'no' and the margin empty). Distances are PROJ "
            "geodesics between the given points; azimuths are grid azimuths (true on lat/lon "
            "DEMs)."};
}

OptionTable IntervisRun::declare() {
    IntervisRunOptions& s = options;
    OptionTable t = commonOptions(s.common, kGeometryOptions | kHeightOptions);
    removeOption(t, "--target-height");
    findOption(t, "--observer-height").help =
        "height of a station above the ground when its CSV row gives none, metres";
    t.push_back(OptionDecl("--stations", &s.stations,
                           "CSV of stations (RFC 4180, UTF-8): name,x,y and optional height "
                           "(metres above ground); names unique",
                           "Stations")
                    .fileType()
                    .mandatory());
    t.push_back(OptionDecl("--heights", &s.heights,
                           "how the CSV's height column is read: above-ground (metres above the "
                           "ground of the station's cell) or absolute (the instrument's elevation "
                           "in the DEM's vertical datum, as recorded in the field); a row without "
                           "a height stands --observer-height above the ground either way",
                           "Stations")
                    .showDefault()
                    .typeName("above-ground|absolute")
                    .checkedBy(oneOfCheck({"above-ground", "absolute"})));
    t.push_back(OptionDecl("-o,--output", &s.matrix,
                           "matrix CSV, one row per ordered pair "
                           "(from,to,visible,margin_m,distance_m,azimuth_deg,back_azimuth_deg)",
                           "Output")
                    .fileType()
                    .mandatory());
    t.push_back(OptionDecl("--all-pairs", &s.all_pairs,
                           "also list the pairs beyond --reach in the matrix (visible 'no', "
                           "margin empty); without it the matrix holds the pairs within reach "
                           "only",
                           "Output"));
    t.push_back(OptionDecl("--lines", &s.lines,
                           "GeoJSON (RFC 7946, WGS 84 lon/lat) with a line for every pair that "
                           "sees each other",
                           "Output")
                    .fileType());
    t.push_back(OptionDecl("--points", &s.points,
                           "the stations as points with their figures (name, ground_m, height_m, "
                           "eye_m, sees, seen_by): .gpkg (GeoPackage, the DEM's CRS) or .geojson "
                           "(WGS 84 lon/lat)",
                           "Output")
                    .fileType());
    return t;
}

RunReport IntervisRun::run(const RunEnv& env) {
    const IntervisRunOptions& s = options;
    RunContext ctx = prepareRun(
        env, "intervis", s.common,
        {{"-o", s.matrix}, {"--lines", s.lines}, {"--points", s.points, OutputKind::Vector}},
        {s.stations}, DemCells::Later);
    ctx.run.method = "reference";
    ctx.run.extra["STATIONS"] = s.stations;
    // Stations: names unique, inside the DEM and on data (exit 3 naming the file and line).
    PlacedSites placed = placeSitesCsv(ctx, s.stations, "station", "the matrix needs unique names");
    const std::vector<Observer>& stations = placed.observers;
    if (stations.size() < 2)
        throw InputError(s.stations + ": intervisibility needs at least two stations");
    readDemWindow(ctx, workWindow(ctx, stations));  // the cells within reach of a station
    requireData(ctx, placed);
    ctx.run.extra["HEIGHTS"] = s.heights;
    if (s.heights == "absolute")
        heightsAboveGround(ctx, placed);
    // Execute.
    IntervisOptions opt;
    opt.reach_m = ctx.reach_m;
    std::vector<Observer> stations_in_window;
    for (const Observer& st : stations)
        stations_in_window.push_back(inWindow(ctx, st));
    const IntervisResult res = computeIntervisibility(ctx.dem.z, ctx.dem.geometry, ctx.earth,
                                                      stations_in_window, opt, *ctx.progress);
    // Write (to temporaries, renamed by finishRun).
    const PairGeometer pairGeometry(ctx, placed.points_dem, stations);
    writeMatrix(ctx, s, stations, res, pairGeometry);
    const PairTally tally = tallyPairs(res, stations);
    if (!s.lines.empty()) {
        writeTextFile(ctx, s.lines,
                      linesGeoJson(ctx, placed.points_dem, stations, res, tally, pairGeometry));
    }
    if (!s.points.empty())
        writeStationPoints(ctx, s.points, placed, tally);
    // Summary.
    const nlohmann::json j = summaryJson(ctx, s, placed, tally);
    return finishRun(ctx, j, summaryTable(ctx, stations, j["stations"], tally));
}

}  // namespace lookfar::run
