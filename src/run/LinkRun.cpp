#include "lookfar/run/LinkRun.hpp"

#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <limits>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Text.hpp"
#include "lookfar/core/Units.hpp"
#include "lookfar/io/Crs.hpp"
#include "lookfar/link/PathProfile.hpp"
#include "lookfar/report/SvgPlot.hpp"
#include "lookfar/report/TextTable.hpp"

namespace lookfar::run {

namespace {

/// The map position of every sample, in the DEM's CRS, next to what the engine gets.
struct PlacedPath {
    std::vector<MapPoint> map;
    PathProfileInput input;
    double length_m = 0;  ///< PROJ geodesic on the DEM's ellipsoid
    GeodesicLine line;
    MapPoint a_ll, b_ll;  ///< lon/lat of the ends
};

PlacedPath placePath(const RunContext& ctx, const MapPoint& a, const MapPoint& b) {
    const GridGeometry& g = ctx.grid;
    PlacedPath p;
    const LonLatOf ll(ctx.dem.crs.wkt);
    const Geodesic geo(ctx.dem.crs.ellipsoid);
    p.a_ll = ll.apply(a);
    p.b_ll = ll.apply(b);
    p.line = geo.inverse(p.a_ll.x, p.a_ll.y, p.b_ll.x, p.b_ll.y);
    p.length_m = p.line.distance_m;
    if (!(p.length_m > 0)) {
        throw UsageError("--from and --to are the same point; a link needs two different ends");
    }
    // Half the smaller cell side along the path, metres.
    double cell_m = std::numeric_limits<double>::infinity();
    for (double y : {a.y, 0.5 * (a.y + b.y), b.y}) {
        int row = static_cast<int>(std::floor(g.rowOf(y) + 0.5));
        row = std::max(0, std::min(g.height() - 1, row));
        cell_m = std::fmin(cell_m, std::fmin(g.cellWidthM(row), g.cellHeightM(row)));
    }
    double map_len_m =
        g.geographic() ? 0.0 : std::hypot(b.x - a.x, b.y - a.y) * g.linearUnitMetres();
    const double longest = std::fmax(p.length_m, map_len_m);
    const int n = std::max(2, static_cast<int>(std::ceil(longest / (0.5 * cell_m))));
    p.map.resize(n + 1);
    p.input.samples.resize(n + 1);
    for (int i = 0; i <= n; ++i) {
        const double f = static_cast<double>(i) / n;
        MapPoint m;
        if (i == 0) {
            m = a;
        } else if (i == n) {
            m = b;
        } else if (g.geographic()) {
            m = geo.direct(p.a_ll.x, p.a_ll.y, p.line.azimuth1_deg, f * p.length_m);
            m.x += 360.0 * std::round((a.x - m.x) / 360.0);  // same longitude branch as --from
        } else {
            m = {a.x + f * (b.x - a.x), a.y + f * (b.y - a.y)};
        }
        p.map[i] = m;
        p.input.samples[i] = {g.colOf(m.x), g.rowOf(m.y), f * p.length_m};
    }
    // Radius of curvature at the middle of the path, along its azimuth there.
    const MapPoint mid = geo.direct(p.a_ll.x, p.a_ll.y, p.line.azimuth1_deg, 0.5 * p.length_m);
    p.input.latitude_deg = mid.y;
    p.input.azimuth_deg = geo.inverse(mid.x, mid.y, p.b_ll.x, p.b_ll.y).azimuth1_deg;
    return p;
}

/// The DEM cells the profile samples: those around every sample, with two cells of margin so
/// that interpolation on the window meets the same neighbours as on the whole DEM.
CellWindow pathWindow(const GridGeometry& g, const PathProfileInput& in) {
    double c_lo = in.samples.front().col, c_hi = c_lo;
    double r_lo = in.samples.front().row, r_hi = r_lo;
    for (const PathSample& p : in.samples) {
        c_lo = std::fmin(c_lo, p.col);
        c_hi = std::fmax(c_hi, p.col);
        r_lo = std::fmin(r_lo, p.row);
        r_hi = std::fmax(r_hi, p.row);
    }
    const auto clamp = [](double v, int n) {
        return static_cast<int>(std::fmin(std::fmax(v, 0.0), n - 1.0));
    };
    const int c0 = clamp(std::floor(c_lo) - 2, g.width()),
              c1 = clamp(std::ceil(c_hi) + 2, g.width());
    const int r0 = clamp(std::floor(r_lo) - 2, g.height()),
              r1 = clamp(std::ceil(r_hi) + 2, g.height());
    return {c0, r0, c1 - c0 + 1, r1 - r0 + 1};
}

std::string profileCsv(const PathProfileResult& r, const PlacedPath& path, bool geographic) {
    const char* xy = geographic ? "%.9f" : "%.3f";
    std::string out =
        "distance_m,x,y,terrain_m,earth_bulge_m,sightline_m,clearance_m,fresnel_radius_m,"
        "fresnel_fraction\n";
    for (std::size_t i = 0; i < r.points.size(); ++i) {
        const ProfilePoint& p = r.points[i];
        out += printfFinite("%.3f", p.distance_m) + "," + printfFinite(xy, path.map[i].x) + "," +
               printfFinite(xy, path.map[i].y) + "," + printfFinite("%.3f", p.terrain_m) + "," +
               printfFinite("%.4f", p.earth_bulge_m) + "," + printfFinite("%.3f", p.sightline_m) +
               "," + printfFinite("%.3f", p.clearance_m) + "," +
               printfFinite("%.3f", p.fresnel_radius_m) + "," +
               printfFinite("%.4f", p.fresnel_fraction) + "\n";
    }
    return out;
}

/// The profile drawn on the curved Earth: the datum surface is the arc b(d) above the chord
/// between its two ends, terrain and sightline are raised by b(d).
std::string profileSvg(const PathProfileResult& r, bool fresnel, double frequency_mhz) {
    const auto& pts = r.points;
    std::vector<double> xs, base, terrain, sight, f_hi, f_lo, f_60;
    double y_min = 0, y_max = 0;
    bool first = true;
    auto extend = [&](double y) {
        if (!std::isfinite(y))
            return;
        if (first) {
            y_min = y_max = y;
            first = false;
        }
        y_min = std::fmin(y_min, y);
        y_max = std::fmax(y_max, y);
    };
    for (const ProfilePoint& p : pts) {
        xs.push_back(p.distance_m / 1000.0);
        base.push_back(p.earth_bulge_m);
        terrain.push_back(p.terrain_m + p.earth_bulge_m);
        sight.push_back(p.sightline_m + p.earth_bulge_m);
        extend(p.earth_bulge_m);
        extend(terrain.back());
        extend(sight.back());
        if (fresnel) {
            f_hi.push_back(sight.back() + p.fresnel_radius_m);
            f_lo.push_back(sight.back() - p.fresnel_radius_m);
            f_60.push_back(sight.back() - 0.6 * p.fresnel_radius_m);
            extend(f_hi.back());
            extend(f_lo.back());
        }
    }
    extend(0.0);
    // 960 × 520 px with 430 px of plot height: the top 110 px are kept free for the legend.
    const double span = std::fmax(y_max - y_min, 1.0);
    const double pad = 0.05 * span;
    const double headroom = (span + pad) * 110.0 / 320.0;
    const double x1 = r.path_length_m / 1000.0;
    SvgPlot plot(960, 520, 0.0, x1, y_min - pad, y_max + headroom);
    char title[200];
    if (r.line_of_sight) {
        std::snprintf(title, sizeof title, "Path profile over %.2f km: line of sight clear",
                      r.path_length_m / 1000.0);
    } else {
        std::snprintf(title, sizeof title,
                      "Path profile over %.2f km: line of sight blocked at %.2f km",
                      r.path_length_m / 1000.0, r.blocked_at_m / 1000.0);
    }
    plot.title(title);
    plot.axes("distance from the start (--from), km",
              "height above the datum, m (Earth bulge added)");

    // The Earth below the datum arc, lightly shaded, then terrain in runs of data.
    const double floor_y = y_min - pad;
    std::vector<double> floor_line(xs.size(), floor_y);
    plot.band(xs, base, floor_line, {"none", "#dfe7ee", 0, "", 1.0});
    SvgStyle ground{"#6b5a2e", "#cdbb8b", 1.0, "", 1.0};
    for (std::size_t i = 0; i < xs.size();) {
        if (std::isnan(terrain[i])) {
            ++i;
            continue;
        }
        std::size_t j = i;
        while (j < xs.size() && !std::isnan(terrain[j]))
            ++j;
        std::vector<double> rx(xs.begin() + i, xs.begin() + j);
        std::vector<double> ry(terrain.begin() + i, terrain.begin() + j);
        std::vector<double> rb(base.begin() + i, base.begin() + j);
        plot.band(rx, ry, rb, ground);
        i = j;
    }
    plot.polyline(xs, base, {"#3f6e9a", "none", 1.0, "", 1.0});
    if (fresnel) {
        plot.band(xs, f_hi, f_lo, {"none", "#7fb9c9", 0, "", 0.28});
        plot.polyline(xs, f_hi, {"#3d8ea3", "none", 0.8, "", 1.0});
        plot.polyline(xs, f_lo, {"#3d8ea3", "none", 0.8, "", 1.0});
        plot.polyline(xs, f_60, {"#3d8ea3", "none", 1.0, "5 3", 1.0});
    }
    // Masts at both ends.
    plot.polyline({0.0, 0.0}, {terrain.front(), sight.front()}, {"#333333", "none", 2.5, "", 1.0});
    plot.polyline({x1, x1}, {terrain.back(), sight.back()}, {"#333333", "none", 2.5, "", 1.0});
    plot.polyline(xs, sight, {"#b0432b", "none", 1.8, "", 1.0});

    plot.legend("terrain", {"#6b5a2e", "#cdbb8b", 6, "", 1.0});
    plot.legend("datum surface (curved)", {"#3f6e9a", "none", 1.5, "", 1.0});
    plot.legend("sightline", {"#b0432b", "none", 1.8, "", 1.0});
    if (fresnel) {
        char label[64];
        std::snprintf(label, sizeof label, "first Fresnel zone, %.0f MHz", frequency_mhz);
        plot.legend(label, {"#3d8ea3", "none", 1.0, "", 1.0});
        plot.legend("60 % of the first zone", {"#3d8ea3", "none", 1.0, "5 3", 1.0});
    }

    // The worst point, and the first block.
    auto index_of = [&](double d) {
        std::size_t best = 0;
        for (std::size_t i = 0; i < pts.size(); ++i)
            if (std::fabs(pts[i].distance_m - d) < std::fabs(pts[best].distance_m - d))
                best = i;
        return best;
    };
    // Labels beside their markers, on the side with room (the plot clips at its frame).
    auto mark = [&](std::size_t i, double y, const std::string& text, const char* colour,
                    double dy_px) {
        plot.marker(xs[i], y, "", colour);
        const bool right_half = xs[i] > 0.55 * x1;
        plot.text(xs[i], y, text, colour, right_half ? "end" : "start", right_half ? -8 : 8, dy_px);
    };
    char label[128];
    if (fresnel && std::isfinite(r.min_fresnel_at_m)) {
        std::size_t i = index_of(r.min_fresnel_at_m);
        std::snprintf(label, sizeof label, "worst: clearance %.2f of F1 (%.1f m)",
                      r.min_fresnel_fraction, pts[i].clearance_m);
        mark(i, terrain[i], label, "#7a1f5c", 28);
    } else if (std::isfinite(r.min_clearance_at_m)) {
        std::size_t i = index_of(r.min_clearance_at_m);
        std::snprintf(label, sizeof label, "least clearance %.1f m", r.min_clearance_m);
        mark(i, terrain[i], label, "#7a1f5c", 28);
    }
    if (!r.line_of_sight) {
        std::size_t i = index_of(r.blocked_at_m);
        mark(i, sight[i], "first block", "#b0432b", -8);
    }
    return plot.render();
}

/// The link's option values once checked (exit 2 on a bad one).
struct LinkValues {
    double from_h = 0, to_h = 0;
    double frequency_mhz = std::numeric_limits<double>::quiet_NaN();
    MapPoint from_in, to_in;  ///< as given, in --crs
};

LinkValues checkLinkOptions(const LinkRunOptions& s) {
    LinkValues v;
    v.from_h = parseHeightOption(s.from_height, "--from-height");
    v.to_h = parseHeightOption(s.to_height, "--to-height");
    if (!trim(s.frequency_mhz).empty()) {
        const std::string t = trim(s.frequency_mhz);
        const auto f = parseDecimal(t);
        if (!f || !(*f > 0)) {
            throw UsageError("--frequency-mhz: '" + echoText(t) +
                             "' is not a positive decimal frequency in MHz");
        }
        v.frequency_mhz = *f;
    }
    v.from_in = parsePoint(s.from, "--from");
    v.to_in = parsePoint(s.to, "--to");
    return v;
}

/// Both ends placed (exit 3 outside the DEM or on no-data, with the point as typed), the path
/// sampled, and the DEM cells along it read.
PlacedPath openPath(RunContext& ctx, const LinkValues& v, MapPoint* a, MapPoint* b) {
    ctx.run.observer_height_m = v.from_h;
    ctx.run.target_height_m = v.to_h;
    ctx.run.method = "exact";
    ctx.run.reach_m = std::numeric_limits<double>::infinity();
    const Observer from_cell =
        placeObserver(ctx, "--from", v.from_in.x, v.from_in.y, v.from_h, "from");
    const Observer to_cell = placeObserver(ctx, "--to", v.to_in.x, v.to_in.y, v.to_h, "to");
    *a = toDemCrs(ctx, v.from_in);
    *b = toDemCrs(ctx, v.to_in);
    PlacedPath path = placePath(ctx, *a, *b);
    readDemWindow(ctx, pathWindow(ctx.grid, path.input));  // only the cells along the path
    requireData(ctx, "--from", v.from_in, from_cell);
    requireData(ctx, "--to", v.to_in, to_cell);
    for (PathSample& sample : path.input.samples) {
        // Exact: both are multiples of the sample's last bit, and the difference is smaller.
        sample.col -= ctx.window.col0;
        sample.row -= ctx.window.row0;
    }
    path.input.from_height_m = v.from_h;
    path.input.to_height_m = v.to_h;
    path.input.frequency_mhz = v.frequency_mhz;
    return path;
}

/// Azimuths at both ends: true from the geodesic; grid from the map coordinates (= true on a
/// lat/lon grid).
struct EndAzimuths {
    double true_from = 0, true_to = 0, grid_from = 0, grid_to = 0;
};

EndAzimuths endAzimuths(const PlacedPath& path, const MapPoint& a, const MapPoint& b,
                        bool geographic) {
    EndAzimuths az;
    az.true_from = path.line.azimuth1_deg;
    az.true_to = wrap360(path.line.azimuth2_deg + 180.0);
    az.grid_from = az.true_from;
    az.grid_to = az.true_to;
    if (!geographic) {
        az.grid_from = wrap360(std::atan2(b.x - a.x, b.y - a.y) * kRadToDeg);
        az.grid_to = wrap360(az.grid_from + 180.0);
    }
    return az;
}

nlohmann::json endJson(const MapPoint& p, const MapPoint& ll, double ground, double antenna,
                       double h, double az_grid, double az_true, double elev) {
    return nlohmann::json{{"x", p.x},
                          {"y", p.y},
                          {"lon", ll.x},
                          {"lat", ll.y},
                          {"ground_m", summaryMetres(ground)},
                          {"height_m", h},
                          {"antenna_m", summaryMetres(antenna)},
                          {"azimuth_grid_deg", az_grid},
                          {"azimuth_true_deg", az_true},
                          {"elevation_angle_deg", elev}};
}

/// What the summary and its table show of a link.
struct LinkOutcome {
    const PathProfileResult& r;
    const PlacedPath& path;
    const LinkValues& v;
    MapPoint a, b;  ///< the ends in the DEM's CRS
    EndAzimuths az;
};

nlohmann::json linkJson(const RunContext& ctx, const LinkOutcome& o) {
    const PathProfileResult& r = o.r;
    const bool fresnel = o.v.frequency_mhz > 0;
    nlohmann::json j = summaryBase(ctx.run);
    j["parameters"]["frequency_mhz"] = finiteOrNull(o.v.frequency_mhz);
    j["parameters"]["from_height_m"] = o.v.from_h;
    j["parameters"]["to_height_m"] = o.v.to_h;
    j["path_length_m"] = r.path_length_m;
    j["line_of_sight"] = r.line_of_sight ? "clear" : "blocked";
    j["blocked_at_m"] = finiteOrNull(r.blocked_at_m);
    j["blocked_samples"] = r.blocked_samples;
    j["min_clearance_m"] = finiteOrNull(r.min_clearance_m);
    j["min_clearance_at_m"] = finiteOrNull(r.min_clearance_at_m);
    j["min_fresnel_fraction"] = fresnel ? finiteOrNull(r.min_fresnel_fraction) : nullptr;
    j["min_fresnel_at_m"] = fresnel ? finiteOrNull(r.min_fresnel_at_m) : nullptr;
    j["fresnel_60_clear"] = fresnel ? nlohmann::json(r.fresnel_60_clear) : nullptr;
    j["effective_radius_m"] = finiteOrNull(r.effective_radius_m);
    j["samples"] = r.points.size();
    j["sample_spacing_m"] = r.path_length_m / static_cast<double>(r.points.size() - 1);
    j["from"] = endJson(o.a, o.path.a_ll, r.from_ground_m, r.from_antenna_m, o.v.from_h,
                        o.az.grid_from, o.az.true_from, r.from_elevation_deg);
    j["to"] = endJson(o.b, o.path.b_ll, r.to_ground_m, r.to_antenna_m, o.v.to_h, o.az.grid_to,
                      o.az.true_to, r.to_elevation_deg);
    return j;
}

void addEndRows(TextTable& t, const char* name, double ground, double antenna, double az_grid,
                double az_true, double elev) {
    t.add(std::string(name) + " ground / antenna",
          formatNumber(ground, 2) + " m / " + formatNumber(antenna, 2) + " m");
    t.add(std::string(name) + " azimuth",
          formatNumber(az_grid, 3) + "° grid, " + formatNumber(az_true, 3) + "° true");
    t.add(std::string(name) + " elevation angle", printfFinite("%+.4f", elev) + "°");
}

std::string linkTable(const RunContext& ctx, const LinkOutcome& o, double spacing_m) {
    const PathProfileResult& r = o.r;
    TextTable t("Link on " + ctx.dem.path);
    t.add("path length", formatDistance(r.path_length_m) + " (geodesic on the DEM's ellipsoid)");
    if (r.line_of_sight) {
        t.add("line of sight", "clear");
    } else {
        t.add("line of sight", "blocked, first at " + formatDistance(r.blocked_at_m) + " (" +
                                   std::to_string(r.blocked_samples) +
                                   (r.blocked_samples == 1 ? " sample" : " samples") +
                                   " below the sightline)");
    }
    if (std::isfinite(r.min_clearance_m)) {
        t.add("least clearance",
              formatNumber(r.min_clearance_m, 2) + " m at " + formatDistance(r.min_clearance_at_m));
    }
    if (o.v.frequency_mhz > 0) {
        if (std::isfinite(r.min_fresnel_fraction)) {
            t.add("worst Fresnel clearance", formatNumber(r.min_fresnel_fraction, 3) +
                                                 " of F1 at " + formatDistance(r.min_fresnel_at_m));
        }
        t.add("60 % of F1 clear", r.fresnel_60_clear ? "yes" : "no");
    }
    addEndRows(t, "from", r.from_ground_m, r.from_antenna_m, o.az.grid_from, o.az.true_from,
               r.from_elevation_deg);
    addEndRows(t, "to", r.to_ground_m, r.to_antenna_m, o.az.grid_to, o.az.true_to,
               r.to_elevation_deg);
    t.add("effective Earth radius", std::isfinite(r.effective_radius_m)
                                        ? formatNumber(r.effective_radius_m, 0) + " m (k " +
                                              printfFinite("%g", ctx.earth.refraction()) + ")"
                                        : "flat Earth");
    t.add("samples",
          std::to_string(r.points.size()) + ", every " + formatNumber(spacing_m, 2) + " m");
    return t.render();
}

}  // namespace

CommandHelp LinkRun::help() const {
    return {"link",
            "path profile between two points: sightline clearance over the curved, refracting "
            "Earth, first Fresnel zone, azimuths and elevation angles at both ends",
            "\nThe terrain is sampled at most half a cell apart along the geodesic (geographic "
            "DEMs) or the straight map line (projected DEMs), with bilinear heights; curvature is "
            "the exact sphere of radius R/(1-k) along the path. Clearance is the sightline's "
            "height above the terrain; F1 = sqrt(lambda d1 d2 / d)."};
}

OptionTable LinkRun::declare() {
    LinkRunOptions& s = options;
    OptionTable t = commonOptions(s.common, kGeometryOptions);
    removeOption(t, "--reach");
    t.push_back(
        OptionDecl("--from", &s.from, "start of the path X,Y (in --crs; the exact point)", "Path")
            .mandatory());
    t.push_back(OptionDecl("--to", &s.to, "end of the path X,Y (in --crs; the exact point)", "Path")
                    .mandatory());
    t.push_back(OptionDecl("--from-height", &s.from_height,
                           "antenna or eye above the ground at --from, metres", "Path")
                    .inUnit("m")
                    .showDefault());
    t.push_back(OptionDecl("--to-height", &s.to_height,
                           "antenna or eye above the ground at --to, metres", "Path")
                    .inUnit("m")
                    .showDefault());
    t.push_back(OptionDecl("--frequency-mhz", &s.frequency_mhz,
                           "radio frequency, MHz (> 0): adds the first Fresnel zone and its "
                           "clearance",
                           "Path")
                    .inUnit("MHz"));
    t.push_back(OptionDecl("--csv", &s.csv,
                           "write the profile as CSV (distance_m,x,y,terrain_m,earth_bulge_m,"
                           "sightline_m,clearance_m,fresnel_radius_m,fresnel_fraction)",
                           "Output")
                    .fileType());
    t.push_back(
        OptionDecl("--plot", &s.plot, "write the profile as an SVG plot", "Output").fileType());
    return t;
}

RunReport LinkRun::run(const RunEnv& env) {
    const LinkRunOptions& s = options;
    // Validate (exit 2), open: the DEM, both ends, every output (exit 3, 4).
    const LinkValues v = checkLinkOptions(s);
    RunContext ctx = prepareRun(env, "link", s.common, {{"--csv", s.csv}, {"--plot", s.plot}}, {},
                                DemCells::Later);
    MapPoint a, b;
    PlacedPath path = openPath(ctx, v, &a, &b);
    // Execute.
    const PathProfileResult r = computePathProfile(ctx.dem.z, ctx.earth, path.input);
    const bool geographic = ctx.dem.geometry.geographic();
    // Write (to temporaries, renamed by finishRun).
    if (!s.csv.empty())
        writeTextFile(ctx, s.csv, profileCsv(r, path, geographic));
    if (!s.plot.empty())
        writeTextFile(ctx, s.plot, profileSvg(r, v.frequency_mhz > 0, v.frequency_mhz));
    // Summary.
    const LinkOutcome outcome{r, path, v, a, b, endAzimuths(path, a, b, geographic)};
    const nlohmann::json j = linkJson(ctx, outcome);
    return finishRun(ctx, j, linkTable(ctx, outcome, j["sample_spacing_m"].get<double>()));
}

}  // namespace lookfar::run
