#include "lookfar/run/LinkRun.hpp"

#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <iterator>
#include <limits>
#include <optional>
#include <string>
#include <tuple>
#include <vector>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Text.hpp"
#include "lookfar/core/Units.hpp"
#include "lookfar/io/Crs.hpp"
#include "lookfar/io/SitesCsv.hpp"
#include "lookfar/link/PathProfile.hpp"
#include "lookfar/radio/Propagation.hpp"
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

/// What places the samples of a path on the DEM: its grid, its lon/lat (a PROJ transform, made
/// once per run: making one costs milliseconds) and the geodesic on its ellipsoid.
struct PathPlacer {
    const GridGeometry& g;
    LonLatOf ll;
    Geodesic geo;
    explicit PathPlacer(const RunContext& ctx)
        : g(ctx.grid), ll(ctx.dem.crs.wkt), geo(ctx.dem.crs.ellipsoid) {}
};

PlacedPath placePath(const PathPlacer& placer, const MapPoint& a, const MapPoint& b) {
    const GridGeometry& g = placer.g;
    const LonLatOf& ll = placer.ll;
    const Geodesic& geo = placer.geo;
    PlacedPath p;
    p.a_ll = ll.apply(a);
    p.b_ll = ll.apply(b);
    p.line = geo.inverse(p.a_ll.x, p.a_ll.y, p.b_ll.x, p.b_ll.y);
    p.length_m = p.line.distance_m;  // 0 for the same point twice: the caller refuses it
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

/// The same path under another refraction coefficient, drawn over the first one's terrain.
struct RefractionVariant {
    double k = 0;
    PathProfileResult r;
};

/// Colours of the other refraction coefficients' sightlines (at most three).
const char* const kVariantColours[] = {"#6a3d9a", "#d9730d", "#1b7837"};

/// The profile drawn on the curved Earth: the datum surface is the arc b(d) above the chord
/// between its two ends, terrain and sightline are raised by b(d). Each variant's sightline is
/// drawn at its own height above the datum plus the first profile's b(d), so its clearance over
/// the terrain drawn is its own (it bends, as a ray would under that k), with its F1 either side.
std::string profileSvg(const PathProfileResult& r, bool fresnel, double frequency_mhz, double k = 0,
                       const std::vector<RefractionVariant>& variants = {}) {
    const auto& pts = r.points;
    std::vector<double> xs, base, terrain, sight, f_hi, f_lo, f_60;
    std::vector<std::vector<double>> v_sight(variants.size()), v_hi(variants.size()),
        v_lo(variants.size());
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
    for (std::size_t k_i = 0; k_i < variants.size(); ++k_i) {
        for (std::size_t i = 0; i < pts.size(); ++i) {
            const ProfilePoint& q = variants[k_i].r.points[i];
            v_sight[k_i].push_back(q.sightline_m + pts[i].earth_bulge_m);
            extend(v_sight[k_i].back());
            if (fresnel) {
                v_hi[k_i].push_back(v_sight[k_i].back() + q.fresnel_radius_m);
                v_lo[k_i].push_back(v_sight[k_i].back() - q.fresnel_radius_m);
                extend(v_hi[k_i].back());
                extend(v_lo[k_i].back());
            }
        }
    }
    extend(0.0);
    // 960 × 520 px with 430 px of plot height: the top 110 px are kept free for the legend, and
    // 16 px more for each variant's entry.
    const double span = std::fmax(y_max - y_min, 1.0);
    const double pad = 0.05 * span;
    const double legend_px = 110.0 + 16.0 * static_cast<double>(variants.size());
    const double headroom = (span + pad) * legend_px / (430.0 - legend_px);
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
    for (std::size_t k_i = 0; k_i < variants.size(); ++k_i) {
        const char* colour = kVariantColours[k_i % std::size(kVariantColours)];
        if (fresnel) {
            plot.polyline(xs, v_hi[k_i], {colour, "none", 0.8, "2 3", 1.0});
            plot.polyline(xs, v_lo[k_i], {colour, "none", 0.8, "2 3", 1.0});
        }
        plot.polyline(xs, v_sight[k_i], {colour, "none", 1.4, "", 1.0});
    }
    plot.polyline(xs, sight, {"#b0432b", "none", 1.8, "", 1.0});

    plot.legend("terrain", {"#6b5a2e", "#cdbb8b", 6, "", 1.0});
    plot.legend("datum surface (curved)", {"#3f6e9a", "none", 1.5, "", 1.0});
    plot.legend(variants.empty() ? "sightline" : "sightline, k = " + printfNumber("%g", k),
                {"#b0432b", "none", 1.8, "", 1.0});
    if (fresnel) {
        char label[64];
        std::snprintf(label, sizeof label, "first Fresnel zone, %.0f MHz", frequency_mhz);
        plot.legend(label, {"#3d8ea3", "none", 1.0, "", 1.0});
        plot.legend("60 % of the first zone", {"#3d8ea3", "none", 1.0, "5 3", 1.0});
    }
    for (std::size_t k_i = 0; k_i < variants.size(); ++k_i) {
        plot.legend("sightline" + std::string(fresnel ? " and F1" : "") +
                        ", k = " + printfNumber("%g", variants[k_i].k),
                    {kVariantColours[k_i % std::size(kVariantColours)], "none", 1.4, "", 1.0});
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

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
/// The largest --required-clearance: a fraction of the first Fresnel zone radius.
constexpr double kMaxRequiredFraction = 2.0;

/// The link's option values once checked (exit 2 on a bad one).
struct LinkValues {
    double from_h = 0, to_h = 0;      ///< one link: --from-height, --to-height
    double frequency_mhz = kNaN;      ///< --frequency-mhz, NaN = none
    double required_fraction = kNaN;  ///< --required-clearance, NaN = not asked
    MapPoint from_in, to_in;          ///< one link: as given, in --crs
    std::vector<double> refractions;  ///< --refraction: the link's k, then the plot's others
    RadioParams ground;               ///< --ground-permittivity, --ground-conductivity, …
};

/// The common options with --refraction set to the link's own k (the first of the list).
CommonOptions withRefraction(CommonOptions common, const LinkValues& v) {
    common.refraction = v.refractions.front();
    return common;
}

/// Most values --refraction takes: the link's own and three more for the plot.
constexpr std::size_t kMaxRefractions = 4;

/// The values of a --refraction list, each checked as the common --refraction is; an empty
/// list or more than kMaxRefractions values is refused. `why` receives the sentence.
std::vector<double> refractionList(const std::string& text, std::string* why) {
    std::vector<double> ks;
    std::size_t start = 0;
    for (;;) {
        const std::size_t comma = text.find(',', start);
        const std::string piece = trim(
            text.substr(start, comma == std::string::npos ? std::string::npos : comma - start));
        const std::string problem = refractionCheck()(piece);
        if (!problem.empty()) {
            *why = problem;
            return {};
        }
        ks.push_back(*parseDecimal(piece));
        if (comma == std::string::npos)
            break;
        start = comma + 1;
    }
    if (ks.size() > kMaxRefractions) {
        *why = "'" + echoText(text) + "' has " + std::to_string(ks.size()) +
               " values; at most 4 (the link's k and three more for the plot)";
        return {};
    }
    return ks;
}

LinkValues checkLinkOptions(const LinkRunOptions& s) {
    const bool pairs = !s.pairs.empty();
    if (pairs && (!s.from.empty() || !s.to.empty())) {
        throw UsageError(
            "--pairs cannot be given with --from or --to: a run checks either the links of a "
            "pairs file or the one link from --from to --to");
    }
    if (!pairs && (s.from.empty() || s.to.empty()))
        throw UsageError("give --from X,Y and --to X,Y (one link), or --pairs FILE (several)");
    if (pairs && (s.from_height_given || s.to_height_given)) {
        throw UsageError(
            "--from-height and --to-height are for one link: with --pairs, every row gives its "
            "from_height and to_height");
    }
    if (pairs && !s.plot.empty())
        throw UsageError("--plot draws the profile of one link: give --from and --to, not --pairs");
    LinkValues v;
    std::string why;
    v.refractions = s.refraction.empty() ? std::vector<double>{s.common.refraction}
                                         : refractionList(s.refraction, &why);
    if (v.refractions.empty())
        throw UsageError("--refraction: " + why);
    if (v.refractions.size() > 1 && pairs) {
        throw UsageError(
            "--refraction: a list of values is for the profile plot of one link; with --pairs "
            "give one k");
    }
    if (!trim(s.frequency_mhz).empty()) {
        const std::string t = trim(s.frequency_mhz);
        const auto f = parseDecimal(t);
        if (!f || !(*f > 0)) {
            throw UsageError("--frequency-mhz: '" + echoText(t) +
                             "' is not a positive decimal frequency in MHz");
        }
        v.frequency_mhz = *f;
    }
    if (!trim(s.required_clearance).empty()) {
        const std::string t = trim(s.required_clearance);
        const auto f = parseDecimal(t);
        if (!f || !(*f >= 0 && *f <= kMaxRequiredFraction)) {
            throw UsageError("--required-clearance: '" + echoText(t) +
                             "' is not a fraction of the first Fresnel zone radius from 0 to " +
                             fmtg(kMaxRequiredFraction));
        }
        if (!pairs && !(v.frequency_mhz > 0)) {
            throw UsageError(
                "--required-clearance needs --frequency-mhz: the first Fresnel zone depends on "
                "the frequency");
        }
        v.required_fraction = *f;
    }
    // The CLI checks the ranges while parsing; a library caller gets the same sentences here.
    for (const auto& [flag, value, lo] :
         {std::tuple<const char*, double, double>{"--ground-permittivity", s.ground_permittivity,
                                                  1.0},
          std::tuple<const char*, double, double>{"--ground-conductivity", s.ground_conductivity,
                                                  0.0}}) {
        const std::string problem = decimalCheck(lo, 100, "")(printfNumber("%.17g", value));
        if (!problem.empty())
            throw UsageError(std::string(flag) + ": " + problem);
    }
    v.ground.ground_permittivity = s.ground_permittivity;
    v.ground.ground_conductivity_s_m = s.ground_conductivity;
    v.ground.polarization = parsePolarization(s.polarization);
    if (!pairs) {
        v.from_h = parseHeightOption(s.from_height, "--from-height");
        v.to_h = parseHeightOption(s.to_height, "--to-height");
        v.from_in = parsePoint(s.from, "--from");
        v.to_in = parsePoint(s.to, "--to");
    }
    return v;
}

/// What one link is asked: the antennas, the frequency and the clearance wanted.
struct LinkEnds {
    double from_h = 0, to_h = 0;
    double frequency_mhz = kNaN;      ///< NaN: no Fresnel zone, no loss
    double required_fraction = kNaN;  ///< NaN: no required heights
    RadioParams ground;               ///< the ground's constants and polarization (not frequency)
};

/// The samples of `path` in the cells of the window read, with what the link asks.
void preparePath(const RunContext& ctx, const LinkEnds& e, PlacedPath& path) {
    for (PathSample& sample : path.input.samples) {
        // Exact: both are multiples of the sample's last bit, and the difference is smaller.
        sample.col -= ctx.window.col0;
        sample.row -= ctx.window.row0;
    }
    path.input.from_height_m = e.from_h;
    path.input.to_height_m = e.to_h;
    path.input.frequency_mhz = e.frequency_mhz;
}

/// Both ends placed (exit 3 outside the DEM or on no-data, with the point as typed), the path
/// sampled, and the DEM cells along it read.
PlacedPath openPath(RunContext& ctx, const LinkValues& v, const LinkEnds& e, MapPoint* a,
                    MapPoint* b) {
    ctx.run.observer_height_m = v.from_h;
    ctx.run.target_height_m = v.to_h;
    ctx.run.method = "exact";
    ctx.run.reach_m = std::numeric_limits<double>::infinity();
    const Observer from_cell =
        placeObserver(ctx, "--from", v.from_in.x, v.from_in.y, v.from_h, "from");
    const Observer to_cell = placeObserver(ctx, "--to", v.to_in.x, v.to_in.y, v.to_h, "to");
    *a = toDemCrs(ctx, v.from_in);
    *b = toDemCrs(ctx, v.to_in);
    PlacedPath path = placePath(PathPlacer(ctx), *a, *b);
    if (!(path.length_m > 0))
        throw UsageError("--from and --to are the same point; a link needs two different ends");
    readDemWindow(ctx, pathWindow(ctx.grid, path.input));  // only the cells along the path
    requireData(ctx, "--from", v.from_in, from_cell);
    requireData(ctx, "--to", v.to_in, to_cell);
    preparePath(ctx, e, path);
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

/// Basic transmission loss over the profile by the delta-Bullington method (Propagation.hpp),
/// over the ground of `e`, when the frequency lies where the method applies and both antennas
/// stand above the ground; otherwise nothing, and `why` says so.
std::optional<PathLoss> linkLoss(const PathProfileResult& r, const LinkEnds& e, std::string* why) {
    if (!(e.frequency_mhz >= kMinFrequencyMhz && e.frequency_mhz <= kMaxFrequencyMhz)) {
        *why = fmtg(e.frequency_mhz) +
               " MHz is outside 30 MHz to 50 GHz, where the propagation method applies";
        return std::nullopt;
    }
    if (!(e.from_h > 0 && e.to_h > 0)) {
        *why = "the propagation method needs both antennas above the ground (more than 0 m)";
        return std::nullopt;
    }
    // The profile's samples with terrain (the ends always have it), as the signal engine's.
    TerrainProfile profile;
    for (const ProfilePoint& p : r.points) {
        if (std::isnan(p.terrain_m))
            continue;
        profile.distance_m.push_back(p.distance_m);
        profile.height_m.push_back(p.terrain_m);
    }
    RadioParams params = e.ground;
    params.frequency_mhz = e.frequency_mhz;
    return deltaBullingtonLoss(profile, e.from_h, e.to_h, r.effective_radius_m, params);
}

/// Everything a link's summary, table and CSV row show.
struct LinkFigures {
    PathProfileResult r;
    LinkEnds ends;
    MapPoint a, b;        ///< the ends in the DEM's CRS
    MapPoint a_ll, b_ll;  ///< and in lon/lat
    EndAzimuths az;
    std::optional<PathLoss> loss;  ///< with a frequency where the method applies
    std::string no_loss;           ///< why there is no loss, with a frequency
    RequiredHeights required;      ///< with a required clearance
};

/// Measures the link along `path` (samples in the cells of the window read).
LinkFigures measureLink(const RunContext& ctx, const PlacedPath& path, const MapPoint& a,
                        const MapPoint& b, const LinkEnds& e) {
    LinkFigures f;
    f.r = computePathProfile(ctx.dem.z, ctx.earth, path.input);
    f.ends = e;
    f.a = a;
    f.b = b;
    f.a_ll = path.a_ll;
    f.b_ll = path.b_ll;
    f.az = endAzimuths(path, a, b, ctx.grid.geographic());
    if (e.frequency_mhz > 0)
        f.loss = linkLoss(f.r, e, &f.no_loss);
    if (e.required_fraction >= 0)
        f.required = requiredEndHeights(f.r, e.required_fraction);
    return f;
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

nlohmann::json lossOrNull(const std::optional<PathLoss>& loss, double PathLoss::*part) {
    return loss ? nlohmann::json((*loss).*part) : nlohmann::json();
}

/// The figures of one link, as the single link's summary and every entry of --pairs give them.
nlohmann::json figuresJson(const LinkFigures& f) {
    const PathProfileResult& r = f.r;
    const bool fresnel = f.ends.frequency_mhz > 0;
    nlohmann::json j;
    j["path_length_m"] = r.path_length_m;
    j["line_of_sight"] = r.line_of_sight ? "clear" : "blocked";
    j["blocked_at_m"] = finiteOrNull(r.blocked_at_m);
    j["blocked_samples"] = r.blocked_samples;
    j["min_clearance_m"] = finiteOrNull(r.min_clearance_m);
    j["min_clearance_at_m"] = finiteOrNull(r.min_clearance_at_m);
    j["min_fresnel_fraction"] = fresnel ? finiteOrNull(r.min_fresnel_fraction) : nullptr;
    j["min_fresnel_at_m"] = fresnel ? finiteOrNull(r.min_fresnel_at_m) : nullptr;
    j["fresnel_60_clear"] = fresnel ? nlohmann::json(r.fresnel_60_clear) : nullptr;
    j["basic_loss_db"] = lossOrNull(f.loss, &PathLoss::basic_db);
    j["free_space_loss_db"] = lossOrNull(f.loss, &PathLoss::free_space_db);
    j["diffraction_loss_db"] = lossOrNull(f.loss, &PathLoss::diffraction_db);
    if (f.ends.required_fraction >= 0) {
        j["required_clearance"] = {{"fraction", f.ends.required_fraction},
                                   {"from_height_m", finiteOrNull(f.required.from_m)},
                                   {"to_height_m", finiteOrNull(f.required.to_m)}};
    }
    j["effective_radius_m"] = finiteOrNull(r.effective_radius_m);
    j["samples"] = r.points.size();
    j["sample_spacing_m"] = r.path_length_m / static_cast<double>(r.points.size() - 1);
    j["from"] = endJson(f.a, f.a_ll, r.from_ground_m, r.from_antenna_m, f.ends.from_h,
                        f.az.grid_from, f.az.true_from, r.from_elevation_deg);
    j["to"] = endJson(f.b, f.b_ll, r.to_ground_m, r.to_antenna_m, f.ends.to_h, f.az.grid_to,
                      f.az.true_to, r.to_elevation_deg);
    return j;
}

/// The ground of the loss, in the summary's parameters.
void addGroundParameters(nlohmann::json& j, const RadioParams& ground) {
    j["parameters"]["ground_permittivity"] = ground.ground_permittivity;
    j["parameters"]["ground_conductivity_s_m"] = ground.ground_conductivity_s_m;
    j["parameters"]["polarization"] = toString(ground.polarization);
}

nlohmann::json linkJson(const RunContext& ctx, const LinkFigures& f) {
    nlohmann::json j = summaryBase(ctx.run);
    j["parameters"]["frequency_mhz"] = finiteOrNull(f.ends.frequency_mhz);
    j["parameters"]["from_height_m"] = f.ends.from_h;
    j["parameters"]["to_height_m"] = f.ends.to_h;
    if (f.ends.frequency_mhz > 0)
        addGroundParameters(j, f.ends.ground);
    j.update(figuresJson(f));
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

/// A required height for tables: metres, or why there is none.
std::string requiredText(double h) {
    return std::isfinite(h) ? formatNumber(h, 2) + " m" : "out of reach";
}

std::string linkTable(const RunContext& ctx, const LinkFigures& f, double spacing_m) {
    const PathProfileResult& r = f.r;
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
    if (f.ends.frequency_mhz > 0) {
        if (std::isfinite(r.min_fresnel_fraction)) {
            t.add("worst Fresnel clearance", formatNumber(r.min_fresnel_fraction, 3) +
                                                 " of F1 at " + formatDistance(r.min_fresnel_at_m));
        }
        t.add("60 % of F1 clear", r.fresnel_60_clear ? "yes" : "no");
        if (f.loss) {
            t.add("basic transmission loss",
                  formatNumber(f.loss->basic_db, 1) + " dB (free space " +
                      formatNumber(f.loss->free_space_db, 1) + " dB + diffraction " +
                      formatNumber(f.loss->diffraction_db, 1) + " dB; median)");
        } else {
            t.add("basic transmission loss", "not computed: " + f.no_loss);
        }
    }
    if (f.ends.required_fraction >= 0) {
        const std::string wanted = fmtg(f.ends.required_fraction) + " of F1";
        t.add("from height for " + wanted, requiredText(f.required.from_m) + " (to fixed at " +
                                               formatNumber(f.ends.to_h, 2) + " m)");
        t.add("to height for " + wanted, requiredText(f.required.to_m) + " (from fixed at " +
                                             formatNumber(f.ends.from_h, 2) + " m)");
    }
    addEndRows(t, "from", r.from_ground_m, r.from_antenna_m, f.az.grid_from, f.az.true_from,
               r.from_elevation_deg);
    addEndRows(t, "to", r.to_ground_m, r.to_antenna_m, f.az.grid_to, f.az.true_to,
               r.to_elevation_deg);
    t.add("effective Earth radius", std::isfinite(r.effective_radius_m)
                                        ? formatNumber(r.effective_radius_m, 0) + " m (k " +
                                              printfFinite("%g", ctx.earth.refraction()) + ")"
                                        : "flat Earth");
    t.add("samples",
          std::to_string(r.points.size()) + ", every " + formatNumber(spacing_m, 2) + " m");
    return t.render();
}

/// What the profile under one k of a --refraction list says, for the summary.
nlohmann::json refractionJson(double k, const PathProfileResult& r, const LinkEnds& e) {
    const bool fresnel = e.frequency_mhz > 0;
    return {{"refraction", k},
            {"effective_radius_m", finiteOrNull(r.effective_radius_m)},
            {"line_of_sight", r.line_of_sight ? "clear" : "blocked"},
            {"blocked_at_m", finiteOrNull(r.blocked_at_m)},
            {"min_clearance_m", finiteOrNull(r.min_clearance_m)},
            {"min_clearance_at_m", finiteOrNull(r.min_clearance_at_m)},
            {"min_fresnel_fraction", fresnel ? finiteOrNull(r.min_fresnel_fraction) : nullptr},
            {"min_fresnel_at_m", fresnel ? finiteOrNull(r.min_fresnel_at_m) : nullptr}};
}

/// The same for the table: one line.
std::string refractionText(const PathProfileResult& r, const LinkEnds& e) {
    std::string text =
        r.line_of_sight ? "clear" : "blocked, first at " + formatDistance(r.blocked_at_m);
    if (std::isfinite(r.min_clearance_m))
        text += "; least clearance " + formatNumber(r.min_clearance_m, 2) + " m";
    if (e.frequency_mhz > 0 && std::isfinite(r.min_fresnel_fraction))
        text += "; worst " + formatNumber(r.min_fresnel_fraction, 3) + " of F1";
    return text;
}

/// The header of the --pairs CSV (one row per link).
std::string pairsCsvHeader(bool required) {
    std::string h =
        "from_name,to_name,path_length_m,line_of_sight,blocked_at_m,min_clearance_m,"
        "min_clearance_at_m,min_fresnel_fraction,min_fresnel_at_m,frequency_mhz,basic_loss_db,"
        "from_height_m,from_azimuth_grid_deg,from_azimuth_true_deg,from_elevation_deg,"
        "to_height_m,to_azimuth_grid_deg,to_azimuth_true_deg,to_elevation_deg";
    if (required)
        h += ",from_required_height_m,to_required_height_m";
    return h + "\n";
}

std::string pairsCsvRow(const LinkPair& p, const LinkFigures& f, bool required) {
    const PathProfileResult& r = f.r;
    const bool fresnel = f.ends.frequency_mhz > 0;
    std::string row =
        csvField(p.from_name) + "," + csvField(p.to_name) + "," +
        printfFinite("%.3f", r.path_length_m) + "," + (r.line_of_sight ? "clear" : "blocked") +
        "," + printfFinite("%.3f", r.blocked_at_m) + "," + printfFinite("%.3f", r.min_clearance_m) +
        "," + printfFinite("%.3f", r.min_clearance_at_m) + "," +
        (fresnel ? printfFinite("%.4f", r.min_fresnel_fraction) : "") + "," +
        (fresnel ? printfFinite("%.3f", r.min_fresnel_at_m) : "") + "," +
        (fresnel ? fmtg(f.ends.frequency_mhz) : "") + "," +
        (f.loss ? printfFinite("%.2f", f.loss->basic_db) : "") + "," +
        printfFinite("%.3f", f.ends.from_h) + "," + printfFinite("%.4f", f.az.grid_from) + "," +
        printfFinite("%.4f", f.az.true_from) + "," + printfFinite("%.4f", r.from_elevation_deg) +
        "," + printfFinite("%.3f", f.ends.to_h) + "," + printfFinite("%.4f", f.az.grid_to) + "," +
        printfFinite("%.4f", f.az.true_to) + "," + printfFinite("%.4f", r.to_elevation_deg);
    if (required) {
        row += "," + printfFinite("%.3f", f.required.from_m) + "," +
               printfFinite("%.3f", f.required.to_m);
    }
    return row + "\n";
}

/// The union of two windows of cells.
CellWindow unionWindow(const CellWindow& a, const CellWindow& b) {
    const int c0 = std::min(a.col0, b.col0), r0 = std::min(a.row0, b.row0);
    const int c1 = std::max(a.col0 + a.width, b.col0 + b.width);
    const int r1 = std::max(a.row0 + a.height, b.row0 + b.height);
    return {c0, r0, c1 - c0, r1 - r0};
}

/// `lookfar link --pairs`: every row of the pairs CSV measured as `link --from --to` would.
RunReport runPairs(const RunEnv& env, const LinkRunOptions& s, const LinkValues& v) {
    RunContext ctx = prepareRun(env, "link", withRefraction(s.common, v), {{"--csv", s.csv}},
                                {s.pairs}, DemCells::Later);
    ctx.run.observer_height_m = kNaN;  // each link has its own
    ctx.run.target_height_m = kNaN;
    ctx.run.method = "exact";
    ctx.run.reach_m = std::numeric_limits<double>::infinity();
    const std::vector<LinkPair> pairs = readPairsCsv(s.pairs);
    const bool required = v.required_fraction >= 0;

    // What every link asks, and both ends of every link placed with one transform (exit 3).
    std::vector<LinkEnds> ends;
    std::vector<std::string> what, names;
    std::vector<MapPoint> given;
    std::vector<double> heights;
    for (const LinkPair& p : pairs) {
        const std::string where = s.pairs + ", line " + std::to_string(p.line);
        LinkEnds e;
        e.from_h = p.from_height_m;
        e.to_h = p.to_height_m;
        e.frequency_mhz = p.frequency_mhz.value_or(v.frequency_mhz);
        e.required_fraction = v.required_fraction;
        e.ground = v.ground;
        if (required && !(e.frequency_mhz > 0)) {
            throw InputError(where + ": the link from '" + echoText(p.from_name) + "' to '" +
                             echoText(p.to_name) +
                             "' has no frequency_mhz and no --frequency-mhz is given: "
                             "--required-clearance needs the first Fresnel zone");
        }
        ends.push_back(e);
        what.push_back(where + ": from '" + echoText(p.from_name) + "' at");
        what.push_back(where + ": to '" + echoText(p.to_name) + "' at");
        names.push_back(p.from_name);
        names.push_back(p.to_name);
        given.push_back({p.from_x, p.from_y});
        given.push_back({p.to_x, p.to_y});
        heights.push_back(p.from_height_m);
        heights.push_back(p.to_height_m);
    }
    std::vector<MapPoint> dem_points;
    const std::vector<Observer> cells =
        placeObservers(ctx, what, given, heights, names, &dem_points);
    // The cells the paths sample: one window holding every path's, read once. The samples are
    // placed again link by link below rather than all kept.
    const PathPlacer placer(ctx);
    CellWindow window{};
    for (std::size_t k = 0; k < pairs.size(); ++k) {
        const PlacedPath path = placePath(placer, dem_points[2 * k], dem_points[2 * k + 1]);
        if (!(path.length_m > 0)) {
            throw InputError(s.pairs + ", line " + std::to_string(pairs[k].line) +
                             ": from and to are the same point; a link needs two different ends");
        }
        const CellWindow w = pathWindow(ctx.grid, path.input);
        window = k == 0 ? w : unionWindow(window, w);
    }
    readDemWindow(ctx, window);
    for (std::size_t i = 0; i < cells.size(); ++i)
        requireData(ctx, what[i], given[i], cells[i]);

    // Measure, link by link.
    std::string csv = pairsCsvHeader(required);
    nlohmann::json links = nlohmann::json::array();
    std::int64_t clear = 0, blocked = 0;
    TextTable list("Links");
    std::vector<std::string> header = {"from", "to", "length", "line of sight", "worst F1", "loss"};
    if (required) {
        const std::string wanted = " for " + fmtg(v.required_fraction) + " F1";
        header.push_back("from height" + wanted);
        header.push_back("to height" + wanted);
    }
    list.setHeader(header);
    ctx.progress->begin("links", static_cast<std::int64_t>(pairs.size()));
    for (std::size_t k = 0; k < pairs.size(); ++k) {
        throwIfCancelled(*ctx.progress);
        const LinkPair& p = pairs[k];
        const MapPoint a = dem_points[2 * k], b = dem_points[2 * k + 1];
        PlacedPath path = placePath(placer, a, b);
        preparePath(ctx, ends[k], path);
        const LinkFigures f = measureLink(ctx, path, a, b, ends[k]);
        (f.r.line_of_sight ? clear : blocked) += 1;
        if (!s.csv.empty())
            csv += pairsCsvRow(p, f, required);
        nlohmann::json e = {{"index", k},
                            {"line", p.line},
                            {"from_name", p.from_name},
                            {"to_name", p.to_name},
                            {"frequency_mhz", finiteOrNull(f.ends.frequency_mhz)}};
        e.update(figuresJson(f));
        links.push_back(std::move(e));
        std::vector<std::string> cells_row = {
            p.from_name,
            p.to_name,
            formatDistance(f.r.path_length_m),
            f.r.line_of_sight ? "clear" : "blocked at " + formatDistance(f.r.blocked_at_m),
            std::isfinite(f.r.min_fresnel_fraction) && f.ends.frequency_mhz > 0
                ? formatNumber(f.r.min_fresnel_fraction, 3)
                : "-",
            f.loss ? formatNumber(f.loss->basic_db, 1) + " dB" : "-"};
        if (required) {
            cells_row.push_back(requiredText(f.required.from_m));
            cells_row.push_back(requiredText(f.required.to_m));
        }
        list.addRow(cells_row);
        ctx.progress->advance(static_cast<std::int64_t>(k + 1));
    }
    ctx.progress->end();
    if (!s.csv.empty())
        writeTextFile(ctx, s.csv, csv);

    nlohmann::json j = summaryBase(ctx.run);
    j["parameters"]["frequency_mhz"] = finiteOrNull(v.frequency_mhz);
    if (required)
        j["parameters"]["required_clearance"] = v.required_fraction;
    addGroundParameters(j, v.ground);
    j["pairs"] = s.pairs;
    j["link_count"] = pairs.size();
    j["clear"] = clear;
    j["blocked"] = blocked;
    j["links"] = std::move(links);
    TextTable t("Links of " + s.pairs + " on " + ctx.dem.path);
    t.add("links", std::to_string(pairs.size()) + ": " + std::to_string(clear) + " clear, " +
                       std::to_string(blocked) + " blocked");
    t.add("effective Earth radius",
          ctx.earth.shape() == EarthShape::Flat
              ? "flat Earth"
              : "R/(1 - k) along each path, k " + printfFinite("%g", ctx.earth.refraction()));
    return finishRun(ctx, j, t.render() + "\n" + list.render());
}

}  // namespace

CommandHelp LinkRun::help() const {
    return {"link",
            "path profile between two points: sightline clearance over the curved, refracting "
            "Earth, first Fresnel zone, azimuths and elevation angles at both ends",
            "\nThe terrain is sampled at most half a cell apart along the geodesic (geographic "
            "DEMs) or the straight map line (projected DEMs), with bilinear heights; curvature is "
            "the exact sphere of radius R/(1-k) along the path. Clearance is the sightline's "
            "height above the terrain; F1 = sqrt(lambda d1 d2 / d). With a frequency from 30 to "
            "50000 MHz the basic transmission loss is ITU-R P.525 free space plus the "
            "delta-Bullington diffraction of ITU-R P.526-15 4.5 (ground: land unless given). "
            "--pairs FILE "
            "checks many links in one run, each exactly as --from/--to would.\nCaution: the "
            "losses are median predictions for planning, not licensed coverage; the DEM has no "
            "buildings or trees; the local regulator's methods and licensed engineering "
            "prevail."};
}

OptionTable LinkRun::declare() {
    LinkRunOptions& s = options;
    OptionTable t = commonOptions(s.common, kGeometryOptions);
    removeOption(t, "--reach");
    // link's --refraction takes a list: the link's k, then up to three more for --plot.
    OptionDecl& k = findOption(t, "--refraction");
    k.field = &s.refraction;
    k.help += " (default " + printfNumber("%g", s.common.refraction) +
              "); a list k1,k2,... (at most 4) draws the sightline of each in --plot and adds a "
              "line for each to the summary (the figures are those of k1)";
    k.show_default = false;  // the text's default is empty: the common value then
    k.check = [](const std::string& text) {
        std::string why;
        return refractionList(text, &why).empty() ? why : std::string();
    };
    t.push_back(OptionDecl("--from", &s.from,
                           "start of the path X,Y (in --crs; the exact point); one link needs "
                           "--from and --to, several --pairs",
                           "Path"));
    t.push_back(
        OptionDecl("--to", &s.to, "end of the path X,Y (in --crs; the exact point)", "Path"));
    t.push_back(OptionDecl("--from-height", &s.from_height,
                           "antenna or eye above the ground at --from, metres", "Path")
                    .inUnit("m")
                    .showDefault()
                    .noteGiven(&s.from_height_given));
    t.push_back(OptionDecl("--to-height", &s.to_height,
                           "antenna or eye above the ground at --to, metres", "Path")
                    .inUnit("m")
                    .showDefault()
                    .noteGiven(&s.to_height_given));
    t.push_back(OptionDecl("--pairs", &s.pairs,
                           "check many links: a CSV with the columns from_name,from_x,from_y,"
                           "from_height,to_name,to_x,to_y,to_height and optionally frequency_mhz "
                           "(x, y in --crs; instead of --from/--to)",
                           "Path")
                    .fileType()
                    .excluding("--from"));
    t.push_back(OptionDecl("--frequency-mhz", &s.frequency_mhz,
                           "radio frequency, MHz (> 0): adds the first Fresnel zone, its "
                           "clearance and, from 30 to 50000 MHz, the basic transmission loss "
                           "(delta-Bullington, median; a pairs row's frequency_mhz wins)",
                           "Path")
                    .inUnit("MHz"));
    t.push_back(OptionDecl("--required-clearance", &s.required_clearance,
                           "a fraction of the first Fresnel zone radius (0 to 2, e.g. 0.6): "
                           "report the antenna height each end needs, the other fixed, for that "
                           "clearance along the whole path (needs a frequency)",
                           "Path"));
    addGroundOptions(t, &s.ground_permittivity, &s.ground_conductivity, &s.polarization);
    t.push_back(OptionDecl("--csv", &s.csv,
                           "write the profile as CSV (distance_m,x,y,terrain_m,earth_bulge_m,"
                           "sightline_m,clearance_m,fresnel_radius_m,fresnel_fraction); with "
                           "--pairs, one row per link",
                           "Output")
                    .fileType());
    t.push_back(
        OptionDecl("--plot", &s.plot, "write the profile as an SVG plot (one link)", "Output")
            .fileType());
    return t;
}

RunReport LinkRun::run(const RunEnv& env) {
    const LinkRunOptions& s = options;
    // Validate (exit 2), open: the DEM, both ends, every output (exit 3, 4).
    const LinkValues v = checkLinkOptions(s);
    if (!s.pairs.empty())
        return runPairs(env, s, v);
    LinkEnds e;
    e.from_h = v.from_h;
    e.to_h = v.to_h;
    e.frequency_mhz = v.frequency_mhz;
    e.required_fraction = v.required_fraction;
    e.ground = v.ground;
    RunContext ctx = prepareRun(env, "link", withRefraction(s.common, v),
                                {{"--csv", s.csv}, {"--plot", s.plot}}, {}, DemCells::Later);
    MapPoint a, b;
    const PlacedPath path = openPath(ctx, v, e, &a, &b);
    // Execute.
    const LinkFigures f = measureLink(ctx, path, a, b, e);
    std::vector<RefractionVariant> variants;  // the other k of a --refraction list
    for (std::size_t i = 1; i < v.refractions.size(); ++i) {
        const EarthModel earth(ctx.earth.shape(), ctx.earth.ellipsoid(), ctx.earth.sphereRadiusM(),
                               v.refractions[i]);
        variants.push_back({v.refractions[i], computePathProfile(ctx.dem.z, earth, path.input)});
    }
    const bool geographic = ctx.dem.geometry.geographic();
    // Write (to temporaries, renamed by finishRun).
    if (!s.csv.empty())
        writeTextFile(ctx, s.csv, profileCsv(f.r, path, geographic));
    if (!s.plot.empty()) {
        writeTextFile(
            ctx, s.plot,
            profileSvg(f.r, v.frequency_mhz > 0, v.frequency_mhz, v.refractions.front(), variants));
    }
    // Summary.
    nlohmann::json j = linkJson(ctx, f);
    std::string table = linkTable(ctx, f, j["sample_spacing_m"].get<double>());
    if (!variants.empty()) {
        j["refractions"] = nlohmann::json::array();
        j["refractions"].push_back(refractionJson(v.refractions.front(), f.r, e));
        TextTable t("Under other refraction coefficients");
        for (const RefractionVariant& variant : variants) {
            j["refractions"].push_back(refractionJson(variant.k, variant.r, e));
            t.add("k = " + printfNumber("%g", variant.k), refractionText(variant.r, e));
        }
        table += "\n" + t.render();
    }
    return finishRun(ctx, j, table);
}

}  // namespace lookfar::run
