// HorizonScan: options, the shared pieces of the two engines, and the public entry points.
//
// Notation (see HorizonScan.hpp and HorizonInternal.hpp)
//   t      tangent of an elevation angle
//   M, N   meridian and prime-vertical radii of curvature, metres
//   φ      latitude of a row, degrees
#include "lookfar/horizon/HorizonScan.hpp"

#include <cmath>
#include <cstdio>
#include <limits>

#include "HorizonInternal.hpp"
#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Units.hpp"

namespace lookfar {

namespace horizon_detail {

void sinCosDeg(double azimuth_deg, double& s, double& c) {
    double a = std::fmod(azimuth_deg, 360.0);
    if (a < 0)
        a += 360.0;
    if (a == 0.0) {
        s = 0, c = 1;
    } else if (a == 90.0) {
        s = 1, c = 0;
    } else if (a == 180.0) {
        s = 0, c = -1;
    } else if (a == 270.0) {
        s = -1, c = 0;
    } else {
        s = std::sin(a * kDegToRad);
        c = std::cos(a * kDegToRad);
    }
}

GridMetric::GridMetric(const GridGeometry& g)
    : geographic_(g.geographic()), col_off_(g.colOffset()), row_off_(g.rowOffset()) {
    const auto& gt = g.geotransform();
    if (!geographic_) {
        east_scale_ = gt[1] * g.linearUnitMetres();
        north_scale_ = gt[5] * g.linearUnitMetres();
        return;
    }
    east_scale_ = gt[1] * kDegToRad;
    north_scale_ = gt[5] * kDegToRad;
    row_first_ = -1.0;
    const int entries = 2 * (g.height() + 1) + 1;  // rows −1 … H every half row
    table_.resize(2 * static_cast<std::size_t>(entries));
    for (int i = 0; i < entries; ++i) {
        double lat = g.latitudeOfRow(row_first_ + 0.5 * i);
        table_[2 * i] = g.ellipsoid().primeVerticalRadius(lat) * std::cos(lat * kDegToRad);
        table_[2 * i + 1] = g.ellipsoid().meridianRadius(lat);
    }
}

RayResult marchRay(const Grid<float>& dem, const GridMetric& metric, const Curvature& curvature,
                   int c0_grid, int r0_grid, double z_eye, double sin_a, double cos_a,
                   double reach_m) {
    RayResult best;
    // Positions are computed in cells of the whole DEM (the grid may be a window of it, at
    // (off_c, off_r)); the grid is indexed at position − offset.
    const int off_c = metric.colOffset(), off_r = metric.rowOffset();
    const int c0 = c0_grid + off_c, r0 = r0_grid + off_r;
    const int w = dem.width(), h = dem.height();
    const double c_lo = off_c, c_hi = off_c + w - 1, r_lo = off_r, r_hi = off_r + h - 1;
    // Cells per metre along the ray, from the aspect of the eye's row.
    const double dc = sin_a / metric.eastPerCol(r0);
    const double dr = cos_a / metric.northPerRow(r0);
    auto consider = [&](double c, double r, double z) {
        double e, n;
        metric.offsets(c0, r0, c, r, e, n);
        double d = std::hypot(e, n);
        if (d > reach_m)
            return false;
        if (std::isnan(z))
            return true;  // no-data never blocks
        double t = (z - curvature.drop(e, n) - z_eye) / d;
        if (t > best.t || (t == best.t && d < best.distance_m)) {
            best.found = true;
            best.t = t;
            best.distance_m = d;
            best.col = c - off_c;  // exact: an integer less than a positive c
            best.row = r - off_r;
            best.z = z;
        }
        return true;
    };
    if (dc != 0.0) {
        const int step = dc > 0 ? 1 : -1;
        const double inv = 1.0 / std::fabs(dc);
        for (int k = 1;; ++k) {
            int c = c0 + step * k;
            if (c < c_lo || c > c_hi)
                break;
            double r = r0 + dr * (k * inv);
            if (!(r >= r_lo && r <= r_hi))
                break;
            int ra = static_cast<int>(std::floor(r));
            double fy = r - ra;
            const int gc = c - off_c, gr = ra - off_r;
            double z = fy == 0.0 ? dem(gc, gr) : (1.0 - fy) * dem(gc, gr) + fy * dem(gc, gr + 1);
            if (!consider(c, r, z))
                break;
        }
    }
    if (dr != 0.0) {
        const int step = dr > 0 ? 1 : -1;
        const double inv = 1.0 / std::fabs(dr);
        for (int k = 1;; ++k) {
            int r = r0 + step * k;
            if (r < r_lo || r > r_hi)
                break;
            double c = c0 + dc * (k * inv);
            if (!(c >= c_lo && c <= c_hi))
                break;
            int ca = static_cast<int>(std::floor(c));
            double fx = c - ca;
            const int gc = ca - off_c, gr = r - off_r;
            double z = fx == 0.0 ? dem(gc, gr) : (1.0 - fx) * dem(gc, gr) + fx * dem(gc + 1, gr);
            if (!consider(c, r, z))
                break;
        }
    }
    return best;
}

SummaryAccumulator::SummaryAccumulator(int width, int height, int directions, bool want_svf,
                                       bool want_dip)
    : width_(width), height_(height), want_svf_(want_svf), want_dip_(want_dip) {
    if (want_svf_) {
        svf_sum_ = Grid<float>(width, height, 0.0f);
        const std::size_t n = static_cast<std::size_t>(width) * height;
        if (directions <= 255)
            count8_.assign(n, 0);
        else
            count16_.assign(n, 0);
    }
    if (want_dip_)
        min_angle_ = Grid<float>(width, height, std::numeric_limits<float>::quiet_NaN());
}

HorizonSummary SummaryAccumulator::finish() {
    HorizonSummary out;
    const float nan = std::numeric_limits<float>::quiet_NaN();
    if (want_svf_) {
        float* v = svf_sum_.data();
        for (std::size_t i = 0; i < svf_sum_.size(); ++i) {
            const int count = count8_.empty() ? count16_[i] : count8_[i];
            v[i] = count ? 1.0f - v[i] / count : nan;
        }
        std::vector<std::uint8_t>().swap(count8_);
        std::vector<std::uint16_t>().swap(count16_);
        out.svf = std::move(svf_sum_);
    }
    if (want_dip_) {
        float* v = min_angle_.data();
        for (std::size_t i = 0; i < min_angle_.size(); ++i)
            v[i] = -v[i];
        out.dip = std::move(min_angle_);
    }
    return out;
}

}  // namespace horizon_detail

double horizonAzimuthDeg(int index, int directions) {
    return 360.0 * index / directions;
}

void validateHorizonOptions(const HorizonOptions& o) {
    if (o.directions < 1 || o.directions > kMaxHorizonDirections) {
        throw InvalidOption("directions", std::to_string(o.directions) + " is outside 1 to 3600");
    }
    if (!(o.observer_height_m >= 0) || !std::isfinite(o.observer_height_m)) {
        throw InvalidOption("observer_height_m",
                            "the eye height must be a finite number ≥ 0 metres");
    }
    if (!(o.reach_m > 0)) {
        throw InvalidOption("reach_m", "the reach must be a positive distance");
    }
    if (!(o.latitude_deg >= -90 && o.latitude_deg <= 90)) {
        throw UsageError("the latitude of the curvature must lie in [−90°, 90°]");
    }
    if (o.exact_steps < 0 || o.exact_steps > 64) {
        throw UsageError("the fast engine's exact steps must lie in 0 to 64");
    }
    if (o.refine_steps < 0 || o.refine_steps > 8) {
        throw UsageError("the fast engine's refine steps must lie in 0 to 8");
    }
}

HorizonScan::HorizonScan(const Grid<float>& dem, const GridGeometry& geometry,
                         const EarthModel& earth, const HorizonOptions& options)
    : dem_(dem), geometry_(geometry), earth_(earth), options_(options) {
    validateHorizonOptions(options_);
    if (dem.width() != geometry.width() || dem.height() != geometry.height() || dem.empty()) {
        throw InputError("the elevation grid and its geometry differ in size");
    }
    metric_ = std::make_shared<const horizon_detail::GridMetric>(geometry_);
    const bool window = geometry_.colOffset() != 0 || geometry_.rowOffset() != 0 ||
                        geometry_.wholeWidth() != geometry_.width() ||
                        geometry_.wholeHeight() != geometry_.height();
    whole_metric_ =
        window ? std::make_shared<const horizon_detail::GridMetric>(geometry_.whole()) : metric_;
    curvature_ = earth_.curvatureAt(options_.latitude_deg);
}

HorizonSummary HorizonScan::run(HorizonSink& sink, Progress& progress) const {
    using namespace horizon_detail;
    EngineInput in{dem_, geometry_, *metric_, *whole_metric_, curvature_, options_};
    SummaryAccumulator acc(dem_.width(), dem_.height(), options_.directions, options_.want_svf,
                           options_.want_dip);
    if (options_.method == HorizonMethod::Reference) {
        referenceScan(in, sink, acc, progress);
    } else {
        fastScan(in, sink, acc, progress);
    }
    return acc.finish();
}

namespace {
class MemorySink final : public HorizonSink {
  public:
    MemorySink(int w, int h, int n) {
        const float nan = std::numeric_limits<float>::quiet_NaN();
        grids.angle_deg.assign(n, Grid<float>(w, h, nan));
        grids.distance_m.assign(n, Grid<float>(w, h, nan));
    }
    void rectangle(int index, int col0, int row0, int width, int height, int stride,
                   const float* angle, const float* distance) override {
        for (int r = 0; r < height; ++r) {
            for (int c = 0; c < width; ++c) {
                grids.angle_deg[index](col0 + c, row0 + r) = angle[r * stride + c];
                grids.distance_m[index](col0 + c, row0 + r) = distance[r * stride + c];
            }
        }
    }
    HorizonGrids grids;
};
}  // namespace

HorizonGrids HorizonScan::runInMemory(Progress& progress) const {
    MemorySink sink(dem_.width(), dem_.height(), options_.directions);
    HorizonSummary summary = run(sink, progress);
    sink.grids.summary = std::move(summary);
    return std::move(sink.grids);
}

HorizonSample HorizonScan::referenceAt(int col, int row, double azimuth_deg) const {
    using namespace horizon_detail;
    HorizonSample out;
    if (!dem_.contains(col, row) || std::isnan(dem_(col, row)))
        return out;
    double s, c;
    sinCosDeg(azimuth_deg, s, c);
    RayResult ray = marchRay(dem_, *metric_, curvature_, col, row,
                             dem_(col, row) + options_.observer_height_m, s, c, options_.reach_m);
    if (!ray.found)
        return out;
    out.found = true;
    out.angle_deg = std::atan(ray.t) * kRadToDeg;
    out.distance_m = ray.distance_m;
    out.col = ray.col;
    out.row = ray.row;
    out.elevation_m = ray.z;
    return out;
}

}  // namespace lookfar
