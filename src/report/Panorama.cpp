// The panorama of a spot's horizon as an SVG plot (see Panorama.hpp).
#include "lookfar/report/Panorama.hpp"

#include <cctype>
#include <cmath>
#include <vector>

#include "lookfar/report/SvgPlot.hpp"
#include "lookfar/report/TextTable.hpp"

namespace lookfar {

std::string panoramaSvg(const HorizonProfile& p, const std::string& title,
                        const std::string& no_terrain) {
    // Vertical range: the terrain, the horizontal and the sea-horizon dip, with a margin.
    double lo = -p.sea_horizon_dip_deg, hi = 0;
    for (const auto& d : p.directions) {
        if (!d.sample.found)
            continue;
        lo = std::fmin(lo, d.sample.angle_deg);
        hi = std::fmax(hi, d.sample.angle_deg);
    }
    const double pad = std::fmax(0.15 * (hi - lo), 0.1);
    const double y0 = lo - pad, y1 = hi + pad;
    SvgPlot plot(1100, 440, 0, 360, y0, y1);
    if (p.directions_cut_by_edge > 0)
        plot.legendRowBelow();
    plot.title(title + " — terrain horizon filled");
    plot.axes("azimuth, degrees clockwise from grid north",
              "horizon angle, degrees above the eye's horizontal", 45, 0);
    // Directions where the DEM ends within the reach, shaded behind the terrain.
    SvgStyle cut;
    cut.stroke = "none";
    cut.fill = "#e6def0";
    for (const AzimuthSpan& span : edgeCutSpans(p))
        plot.xSpan(span.from_deg, span.to_deg, cut);
    if (p.directions_cut_by_edge > 0)
        plot.legendBox("shaded: the DEM ends within the reach, so the horizon may lie beyond it",
                       cut);
    // Sky above, terrain below: each run of directions with data is one filled band down to the
    // bottom of the plot; the last direction wraps to 360°.
    SvgStyle ground;
    ground.stroke = "#3d4f2f";
    ground.fill = "#9aa77a";
    ground.width = 1.2;
    const int n = static_cast<int>(p.directions.size());
    std::vector<double> xs, ys, base;
    auto flushRun = [&] {
        if (!xs.empty())
            plot.band(xs, ys, base, ground);
        xs.clear(), ys.clear(), base.clear();
    };
    for (int i = 0; i <= n; ++i) {
        const auto& d = p.directions[i % n];
        if (!d.sample.found) {
            flushRun();
            continue;
        }
        xs.push_back(i == n ? 360.0 : d.azimuth_deg);
        ys.push_back(d.sample.angle_deg);
        base.push_back(y0);
    }
    flushRun();
    SvgStyle horizontal;
    horizontal.stroke = "#202020";
    horizontal.width = 1.0;
    plot.hline(0.0, "eye's horizontal", horizontal);
    if (p.sea_horizon_dip_deg > 0) {
        SvgStyle sea;
        sea.stroke = "#1f5fa8";
        sea.width = 1.2;
        sea.dash = "7 4";
        plot.hline(
            -p.sea_horizon_dip_deg,
            "sea horizon for this eye: dip " + printfNumber("%.3f", p.sea_horizon_dip_deg) + "°",
            sea);
    }
    // Compass points along the top of the sky (the lines are labelled where they end).
    static const char* const kPoints[] = {"N", "NE", "E", "SE", "S", "SW", "W", "NW", "N"};
    for (int k = 0; k <= 8; ++k) {
        const char* anchor = k == 0 ? "start" : (k == 8 ? "end" : "middle");
        plot.text(45.0 * k, y1, kPoints[k], "#555555", anchor, k == 0 ? 4 : (k == 8 ? -4 : 0), 14);
    }
    if (!no_terrain.empty()) {
        std::string sentence = no_terrain;
        sentence[0] = static_cast<char>(std::toupper(static_cast<unsigned char>(sentence[0])));
        plot.text(180.0, (y0 + y1) / 2, sentence, "#8c2d04", "middle");
    }
    if (std::isfinite(p.highest_angle_deg)) {
        const bool right = p.highest_azimuth_deg > 270;
        plot.marker(p.highest_azimuth_deg, p.highest_angle_deg, "", "#8c2d04");
        plot.text(p.highest_azimuth_deg, p.highest_angle_deg,
                  "highest " + printfNumber("%.2f", p.highest_angle_deg) + "° at " +
                      formatDistance(p.highest_distance_m),
                  "#8c2d04", right ? "end" : "start", right ? -8 : 8, -8);
    }
    return plot.render();
}

}  // namespace lookfar
