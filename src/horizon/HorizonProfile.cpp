// The 360° horizon of one spot and its summary (see HorizonProfile.hpp for the notation).
#include "lookfar/horizon/HorizonProfile.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <limits>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/ParallelFor.hpp"
#include "lookfar/core/Units.hpp"
#include "lookfar/horizon/HorizonEdge.hpp"

namespace lookfar {

HorizonProfile horizonProfile(const Grid<float>& dem, const GridGeometry& geometry,
                              const EarthModel& earth, int col, int row, double step_deg,
                              const HorizonOptions& options, Progress& progress) {
    if (!(step_deg >= kMinHorizonStepDeg && step_deg <= kMaxHorizonStepDeg)) {
        char buf[160];
        std::snprintf(buf, sizeof buf, "%g° is outside 0.05° to 90°", step_deg);
        throw InvalidOption("step_deg", buf);
    }
    if (!dem.contains(col, row))
        throw InputError("the spot is outside the DEM");
    if (std::isnan(dem(col, row)))
        throw InputError("the spot lies on a no-data cell");
    HorizonOptions o = options;
    o.directions = 1;  // only the geometry options matter here
    const HorizonScan scan(dem, geometry, earth, o);
    const DemEdge edge(geometry);

    const double nan = std::numeric_limits<double>::quiet_NaN();
    HorizonProfile p;
    p.col = col, p.row = row;
    p.ground_m = dem(col, row);
    p.eye_m = p.ground_m + options.observer_height_m;
    p.step_deg = step_deg;
    const int n = static_cast<int>(std::ceil(360.0 / step_deg - 1e-9));
    p.directions.resize(n);
    ParallelForOptions loop;
    loop.chunk = 16;
    progress.begin("horizon round the spot", n);
    parallelFor(
        n, progress,
        [&](std::int64_t i) {
            p.directions[i].azimuth_deg = static_cast<double>(i) * step_deg;
            p.directions[i].sample = scan.referenceAt(col, row, static_cast<double>(i) * step_deg);
            const double d_edge = edge.distanceM(col, row, static_cast<double>(i) * step_deg);
            if (d_edge <= options.reach_m)
                p.directions[i].edge_distance_m = d_edge;
        },
        loop);
    progress.end();

    p.lowest_angle_deg = p.lowest_azimuth_deg = p.lowest_distance_m = nan;
    p.highest_angle_deg = p.highest_azimuth_deg = p.highest_distance_m = nan;
    p.mean_angle_deg = p.sky_view_factor = p.dip_deg = nan;
    auto weight = [&](int i) { return std::fmin(step_deg, 360.0 - i * step_deg); };
    double w_sum = 0, angle_sum = 0, sin_sum = 0;
    for (int i = 0; i < n; ++i) {
        const double d_edge = p.directions[i].edge_distance_m;
        if (std::isfinite(d_edge)) {
            ++p.directions_cut_by_edge;
            if (!(d_edge >= p.nearest_edge_m)) {
                p.nearest_edge_m = d_edge;
                p.nearest_edge_azimuth_deg = p.directions[i].azimuth_deg;
            }
        }
        const HorizonSample& s = p.directions[i].sample;
        if (!s.found)
            continue;
        ++p.directions_with_data;
        const double w = weight(i);
        w_sum += w;
        angle_sum += w * s.angle_deg;
        sin_sum += w * std::sin(std::fmax(s.angle_deg, 0.0) * kDegToRad);
        if (!(s.angle_deg >= p.lowest_angle_deg)) {
            p.lowest_angle_deg = s.angle_deg;
            p.lowest_azimuth_deg = p.directions[i].azimuth_deg;
            p.lowest_distance_m = s.distance_m;
        }
        if (!(s.angle_deg <= p.highest_angle_deg)) {
            p.highest_angle_deg = s.angle_deg;
            p.highest_azimuth_deg = p.directions[i].azimuth_deg;
            p.highest_distance_m = s.distance_m;
        }
    }
    if (w_sum > 0) {
        p.mean_angle_deg = angle_sum / w_sum;
        p.sky_view_factor = 1.0 - sin_sum / w_sum;
        p.dip_deg = -p.lowest_angle_deg;
    }

    // Open sectors: runs of directions below the horizontal, joined across north.
    auto open = [&](int i) {
        const HorizonSample& s = p.directions[((i % n) + n) % n].sample;
        return s.found && s.angle_deg < 0;
    };
    int start = -1;
    for (int i = 0; i < n; ++i) {
        if (!open(i - 1)) {
            start = i;
            break;
        }
    }
    if (start < 0) {
        p.open_sectors.push_back({0.0, p.directions.back().azimuth_deg, 360.0});
    } else {
        for (int k = 0; k < n;) {
            const int i = start + k;
            if (!open(i)) {
                ++k;
                continue;
            }
            HorizonSector sec;
            sec.from_deg = p.directions[i % n].azimuth_deg;
            int j = i;
            while (j < start + n && open(j)) {
                sec.width_deg += weight(j % n);
                sec.to_deg = p.directions[j % n].azimuth_deg;
                ++j;
            }
            p.open_sectors.push_back(sec);
            k = j - start;
        }
    }

    // The sea horizon for this eye height (reference line of the panorama).
    const double lat = options.latitude_deg;
    const double r_eff = earth.nominalRadius(lat) / (1.0 - earth.refraction());
    if (p.eye_m > 0 && std::isfinite(r_eff)) {
        p.sea_horizon_dip_deg = EarthModel::sphereDipDeg(p.eye_m, r_eff);
        p.sea_horizon_distance_m = EarthModel::sphereHorizonArcM(p.eye_m, r_eff);
    } else if (!std::isfinite(r_eff)) {
        p.sea_horizon_distance_m = std::numeric_limits<double>::infinity();
    }
    return p;
}

std::vector<AzimuthSpan> edgeCutSpans(const HorizonProfile& p) {
    std::vector<AzimuthSpan> pieces;
    const double half = p.step_deg / 2;
    for (const HorizonDirection& d : p.directions) {
        if (!std::isfinite(d.edge_distance_m))
            continue;
        const double from = d.azimuth_deg - half, to = std::fmin(d.azimuth_deg + half, 360.0);
        if (from < 0) {  // the sector of north: its western half at the right end
            pieces.push_back({360.0 + from, 360.0});
            pieces.push_back({0.0, to});
        } else {
            pieces.push_back({from, to});
        }
    }
    std::sort(pieces.begin(), pieces.end(),
              [](const AzimuthSpan& a, const AzimuthSpan& b) { return a.from_deg < b.from_deg; });
    std::vector<AzimuthSpan> spans;
    for (const AzimuthSpan& s : pieces) {
        if (!spans.empty() && s.from_deg <= spans.back().to_deg + 1e-9)
            spans.back().to_deg = std::fmax(spans.back().to_deg, s.to_deg);
        else
            spans.push_back(s);
    }
    return spans;
}

}  // namespace lookfar
