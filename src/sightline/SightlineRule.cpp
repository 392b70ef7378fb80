#include "lookfar/sightline/SightlineRule.hpp"

#include <cmath>
#include <cstdlib>
#include <limits>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Units.hpp"
#include "lookfar/sightline/SightlineSamples.hpp"

namespace lookfar {

SightlineRule::SightlineRule(const Grid<float>& dem, const GridGeometry& geometry,
                             const EarthModel& earth, const Observer& observer)
    : dem_(dem), geometry_(geometry), observer_(observer) {
    if (!dem.contains(observer.col, observer.row)) {
        throw InputError("the observer '" + observer.name + "' is outside the DEM");
    }
    float ground = dem(observer.col, observer.row);
    if (std::isnan(ground)) {
        throw InputError("the observer '" + observer.name + "' stands on a no-data cell");
    }
    eye_m_ = ground + observer.height_m;
    frame_ = geometry.localFrame(observer.col, observer.row);
    curvature_ = earth.curvatureAt(observer.latitude_deg);
}

SightlineSamples SightlineRule::samples(int col, int row, double drop_m) const {
    SightlineSamples s;
    s.dem = dem_.data();
    s.width = dem_.width();
    s.c0 = observer_.col;
    s.r0 = observer_.row;
    s.col_off = geometry_.colOffset();
    s.row_off = geometry_.rowOffset();
    s.dc = col - observer_.col;
    s.dr = row - observer_.row;
    s.drop_m = drop_m;
    s.eye_m = eye_m_;
    return s;
}

SightlineVerdict SightlineRule::judge(int col, int row, double target_height_m) const {
    SightlineVerdict v;
    const int c0 = observer_.col, r0 = observer_.row;
    const float ground = dem_(col, row);
    const double east = frame_.east(col, row);
    const double north = frame_.north(row);
    v.distance_m = std::hypot(east, north);
    if (std::isnan(ground)) {
        v.nodata = true;
        return v;
    }
    const double drop = curvature_.drop(east, north);
    const double rise = ground + target_height_m - drop - eye_m_;  // z_t − Δ − z_e
    v.angle_deg = (v.distance_m > 0) ? std::atan2(rise, v.distance_m) * kRadToDeg : 0.0;
    if (col == c0 && row == r0) {
        v.visible = true;
        v.margin_m = target_height_m;
        v.angle_deg = target_height_m >= observer_.height_m ? 90.0 : -90.0;
        if (target_height_m == observer_.height_m)
            v.angle_deg = 0.0;
        return v;
    }

    const SightlineSamples samples = this->samples(col, row, drop);
    double max_gain = -std::numeric_limits<double>::infinity();
    // Column lines, then row lines, strictly between O and C. A NaN gain (no-data) never
    // compares greater, so no-data never blocks.
    if (samples.dc != 0) {
        const int step = samples.dc > 0 ? 1 : -1;
        for (int i = c0 + step; i != col; i += step) {
            const double gain = samples.columnGain(i);
            if (gain > max_gain)
                max_gain = gain;
        }
    }
    if (samples.dr != 0) {
        const int step = samples.dr > 0 ? 1 : -1;
        for (int j = r0 + step; j != row; j += step) {
            const double gain = samples.rowGain(j);
            if (gain > max_gain)
                max_gain = gain;
        }
    }
    if (max_gain == -std::numeric_limits<double>::infinity()) {
        v.visible = true;
        v.margin_m = target_height_m;
        return v;
    }
    v.margin_m = rise - max_gain;
    v.visible = v.margin_m >= 0.0;
    return v;
}

}  // namespace lookfar
