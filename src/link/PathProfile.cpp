// Path profile over a sphere of effective radius R′ (see PathProfile.hpp for the notation).
//   r_A, r_B   radii of the two antennas from the centre of the effective sphere, R′ + z
//   θ, Θ       central angles of a sample and of B, radians
//   λ          wavelength c/f, metres
#include "lookfar/link/PathProfile.hpp"

#include <cmath>
#include <limits>

#include "lookfar/core/Errors.hpp"

namespace lookfar {

namespace {
constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
}

double firstFresnelRadiusM(double d1_m, double d2_m, double frequency_mhz) {
    if (!(frequency_mhz > 0) || !(d1_m >= 0) || !(d2_m >= 0))
        return kNaN;
    if (d1_m == 0 || d2_m == 0)
        return 0.0;
    const double lambda_m = kSpeedOfLightMps / (frequency_mhz * 1e6);
    return std::sqrt(lambda_m * d1_m * d2_m / (d1_m + d2_m));
}

double bilinearHeight(const Grid<float>& dem, double col, double row) {
    const int w = dem.width(), h = dem.height();
    if (!(col >= -0.5 && row >= -0.5 && col <= w - 0.5 && row <= h - 0.5))
        return kNaN;
    // Own cell: the one whose area holds the point.
    int own_c = static_cast<int>(std::floor(col + 0.5));
    int own_r = static_cast<int>(std::floor(row + 0.5));
    own_c = own_c < 0 ? 0 : (own_c >= w ? w - 1 : own_c);
    own_r = own_r < 0 ? 0 : (own_r >= h ? h - 1 : own_r);
    if (std::isnan(dem(own_c, own_r)))
        return kNaN;
    const double cc = std::fmin(std::fmax(col, 0.0), w - 1.0);
    const double rr = std::fmin(std::fmax(row, 0.0), h - 1.0);
    int c0 = static_cast<int>(std::floor(cc));
    int r0 = static_cast<int>(std::floor(rr));
    if (c0 > w - 2)
        c0 = w > 1 ? w - 2 : 0;
    if (r0 > h - 2)
        r0 = h > 1 ? h - 2 : 0;
    const double fx = w > 1 ? cc - c0 : 0.0;
    const double fy = h > 1 ? rr - r0 : 0.0;
    double sum = 0, weight = 0;
    for (int j = 0; j < 2; ++j) {
        for (int i = 0; i < 2; ++i) {
            const int c = c0 + i, r = r0 + j;
            if (c >= w || r >= h)
                continue;
            const double wgt = (i ? fx : 1.0 - fx) * (j ? fy : 1.0 - fy);
            const float z = dem(c, r);
            if (wgt == 0.0 || std::isnan(z))
                continue;
            sum += wgt * z;
            weight += wgt;
        }
    }
    return weight > 0 ? sum / weight : static_cast<double>(dem(own_c, own_r));
}

PathProfileResult computePathProfile(const Grid<float>& dem, const EarthModel& earth,
                                     const PathProfileInput& in) {
    const auto& s = in.samples;
    if (s.size() < 2 || !(s.back().distance_m > 0)) {
        throw InternalError("path profile: need at least two samples and a positive length");
    }
    PathProfileResult out;
    const double D = s.back().distance_m;
    out.path_length_m = D;
    out.from_ground_m = bilinearHeight(dem, s.front().col, s.front().row);
    out.to_ground_m = bilinearHeight(dem, s.back().col, s.back().row);
    if (std::isnan(out.from_ground_m))
        throw InputError("the start of the path has no terrain (outside the DEM or no-data)");
    if (std::isnan(out.to_ground_m))
        throw InputError("the end of the path has no terrain (outside the DEM or no-data)");
    out.from_antenna_m = out.from_ground_m + in.from_height_m;
    out.to_antenna_m = out.to_ground_m + in.to_height_m;

    const double r_eff = earth.shape() == EarthShape::Flat
                             ? std::numeric_limits<double>::infinity()
                             : earth.effectiveRadius(in.latitude_deg, in.azimuth_deg);
    out.effective_radius_m = r_eff;
    const bool flat = !std::isfinite(r_eff);
    const double zA = out.from_antenna_m, zB = out.to_antenna_m;
    out.from_elevation_deg = EarthModel::sphereElevationAngleDeg(zA, zB, D, r_eff);
    out.to_elevation_deg = EarthModel::sphereElevationAngleDeg(zB, zA, D, r_eff);

    const double Theta = flat ? 0.0 : D / r_eff;
    const double rA = flat ? 0.0 : r_eff + zA, rB = flat ? 0.0 : r_eff + zB;
    const double sinTheta = std::sin(Theta);
    const bool fresnel = in.frequency_mhz > 0;

    out.points.resize(s.size());
    double min_clear = std::numeric_limits<double>::infinity();
    double min_frac = std::numeric_limits<double>::infinity();
    for (std::size_t i = 0; i < s.size(); ++i) {
        ProfilePoint& p = out.points[i];
        const bool end = (i == 0 || i + 1 == s.size());
        const double d = (i == 0) ? 0.0 : (i + 1 == s.size() ? D : s[i].distance_m);
        p.distance_m = d;
        p.terrain_m = (i == 0) ? out.from_ground_m
                               : (i + 1 == s.size() ? out.to_ground_m
                                                    : bilinearHeight(dem, s[i].col, s[i].row));
        if (flat) {
            p.earth_bulge_m = 0;
            p.sightline_m = zA + (zB - zA) * d / D;
        } else {
            const double theta = d / r_eff;
            p.earth_bulge_m = EarthModel::sphereBulgeM(d, D - d, r_eff);
            if (i == 0) {
                p.sightline_m = zA;
            } else if (i + 1 == s.size()) {
                p.sightline_m = zB;
            } else {
                const double r =
                    rA * rB * sinTheta / (rA * std::sin(theta) + rB * std::sin(Theta - theta));
                p.sightline_m = r - r_eff;
            }
        }
        p.clearance_m = p.sightline_m - p.terrain_m;  // NaN when no data
        p.fresnel_radius_m = fresnel ? firstFresnelRadiusM(d, D - d, in.frequency_mhz) : kNaN;
        p.fresnel_fraction =
            (fresnel && p.fresnel_radius_m > 0) ? p.clearance_m / p.fresnel_radius_m : kNaN;
        if (end || std::isnan(p.clearance_m))
            continue;  // the ends never block; no-data never blocks
        if (p.clearance_m < 0) {
            if (out.line_of_sight)
                out.blocked_at_m = d;
            out.line_of_sight = false;
            ++out.blocked_samples;
        }
        if (p.clearance_m < min_clear) {
            min_clear = p.clearance_m;
            out.min_clearance_m = p.clearance_m;
            out.min_clearance_at_m = d;
        }
        if (!std::isnan(p.fresnel_fraction) && p.fresnel_fraction < min_frac) {
            min_frac = p.fresnel_fraction;
            out.min_fresnel_fraction = p.fresnel_fraction;
            out.min_fresnel_at_m = d;
        }
    }
    out.fresnel_60_clear = fresnel && !(out.min_fresnel_fraction < 0.6);
    if (fresnel && std::isnan(out.min_fresnel_fraction))
        out.fresnel_60_clear = true;  // no terrain sample between the ends
    return out;
}

RequiredHeights requiredEndHeights(const PathProfileResult& r, double fraction) {
    const auto& pts = r.points;
    if (pts.size() < 2 || !(fraction >= 0)) {
        throw InternalError("required heights: need a profile and a fraction >= 0");
    }
    const double D = r.path_length_m;
    const double R = r.effective_radius_m;
    const bool flat = !std::isfinite(R);
    const double Theta = flat ? 0.0 : D / R;
    const double sinTheta = std::sin(Theta);
    const double zA = r.from_antenna_m, zB = r.to_antenna_m;
    // The least antenna above the datum at each end; -infinity until a sample asks for more.
    double needA = -std::numeric_limits<double>::infinity(), needB = needA;
    for (std::size_t i = 1; i + 1 < pts.size(); ++i) {
        const ProfilePoint& p = pts[i];
        if (std::isnan(p.terrain_m))
            continue;  // no data: never blocks
        if (std::isnan(p.fresnel_radius_m))
            throw InternalError("required heights: the profile has no Fresnel zone");
        const double z = p.terrain_m + fraction * p.fresnel_radius_m;  // the sightline's floor
        const double d = p.distance_m;
        if (flat) {
            // s(d) = zA (D − d)/D + zB d/D ≥ z
            needA = std::fmax(needA, (z * D - zB * d) / (D - d));
            needB = std::fmax(needB, (z * D - zA * (D - d)) / d);
            continue;
        }
        // r(θ) = rA rB sin Θ / (rA sin θ + rB sin(Θ − θ)) ≥ rz, rising in rA and in rB:
        // rA (rB sin Θ − rz sin θ) ≥ rz rB sin(Θ − θ), and the same with the ends swapped.
        const double theta = d / R;
        const double rz = R + z, rA = R + zA, rB = R + zB;
        const double sin1 = std::sin(theta), sin2 = std::sin(Theta - theta);
        const double denA = rB * sinTheta - rz * sin1;
        const double denB = rA * sinTheta - rz * sin2;
        needA = denA > 0 ? std::fmax(needA, rz * rB * sin2 / denA - R)
                         : std::numeric_limits<double>::infinity();
        needB = denB > 0 ? std::fmax(needB, rz * rA * sin1 / denB - R)
                         : std::numeric_limits<double>::infinity();
    }
    const auto above = [](double need, double ground) {
        if (!std::isfinite(need))
            return need > 0 ? kNaN : 0.0;  // unreachable, or no sample asks for anything
        return std::fmax(need - ground, 0.0);
    };
    RequiredHeights out;
    out.from_m = above(needA, r.from_ground_m);
    out.to_m = above(needB, r.to_ground_m);
    return out;
}

}  // namespace lookfar
