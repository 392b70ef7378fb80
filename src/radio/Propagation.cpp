// Propagation: the ITU-R methods of Propagation.hpp.
//
// The ITU-R texts write these methods in practical units, and so does this file so that every
// constant can be checked against them: distances d, d_i in km, heights h in metres, the
// effective Earth radius a_e in km, C_e = 1/a_e in 1/km, the frequency f in GHz (P.1812 forms)
// and the wavelength λ in metres. Equation numbers are those of ITU-R P.1812-4, whose §4.3
// writes out the method of P.526-15 §3.2 and §4.5 step by step (and of P.1812-6 Attachment 1 §5.6
// for the smooth-Earth heights); the P.526-15 sections are named beside them.
#include "lookfar/radio/Propagation.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <limits>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Text.hpp"
#include "lookfar/core/Units.hpp"
#include "RadioText.hpp"

namespace lookfar {
namespace {

constexpr double kInf = std::numeric_limits<double>::infinity();

std::string lower(std::string text) {
    for (char& ch : text)
        ch = static_cast<char>(std::tolower(static_cast<unsigned char>(ch)));
    return text;
}

/// C_e = 1/a_e in 1/km; 0 for a flat Earth.
double curvaturePerKm(double earth_radius_m) {
    return std::isfinite(earth_radius_m) ? 1000.0 / earth_radius_m : 0.0;
}

/// Bullington's loss from the uncorrected knife-edge loss (P.1812 eq. (21); P.526-15 §4.5.1):
/// L_b = L_uc + (1 − exp(−L_uc/6))(10 + 0.02 d), d in km.
double bullingtonCorrected(double l_uc, double d_km) {
    return l_uc + (1.0 - std::exp(-l_uc / 6.0)) * (10.0 + 0.02 * d_km);
}

}  // namespace

Polarization parsePolarization(const std::string& text) {
    const std::string t = lower(text);
    if (t == "vertical")
        return Polarization::Vertical;
    if (t == "horizontal")
        return Polarization::Horizontal;
    throw InvalidOption("polarization",
                        "'" + echoText(text) + "' is neither vertical nor horizontal");
}

std::string toString(Polarization polarization) {
    return polarization == Polarization::Vertical ? "vertical" : "horizontal";
}

void validateRadioParams(const RadioParams& params) {
    if (!(params.frequency_mhz >= kMinFrequencyMhz && params.frequency_mhz <= kMaxFrequencyMhz)) {
        throw InvalidOption(
            "frequency_mhz",
            radioNumberText(params.frequency_mhz) +
                " is outside 30 to 50000 MHz, where the propagation method applies");
    }
    if (!(params.ground_permittivity > 0 && std::isfinite(params.ground_permittivity))) {
        throw InvalidOption("ground_permittivity",
                            radioNumberText(params.ground_permittivity) +
                                " must be a positive number (land 22, sea 80)");
    }
    if (!(params.ground_conductivity_s_m >= 0 && std::isfinite(params.ground_conductivity_s_m))) {
        throw InvalidOption("ground_conductivity",
                            radioNumberText(params.ground_conductivity_s_m) +
                                " must be zero or more, in S/m (land 0.003, sea 5)");
    }
}

double freeSpaceLossDb(double distance_m, double frequency_mhz) {
    // P.525-4 §2.2: L_bf = 20 log(4π d / λ).
    const double wavelength_m = kSpeedOfLightMps / (frequency_mhz * 1e6);
    return 20.0 * std::log10(4.0 * kPi * distance_m / wavelength_m);
}

double knifeEdgeLossDb(double nu) {
    // P.526-15 §4.1 (P.1812 eq. (12)), the approximation for ν > −0.78; no loss below.
    if (!(nu > -0.78))
        return 0.0;
    const double v = nu - 0.1;
    return 6.9 + 20.0 * std::log10(std::sqrt(v * v + 1.0) + v);
}

double fresnelRadiusM(double d1_m, double d2_m, double wavelength_m) {
    // P.526-15 §2.1 eq. (2), n = 1.
    return std::sqrt(wavelength_m * d1_m * d2_m / (d1_m + d2_m));
}

double sphericalEarthFirstTermDb(double distance_m, double h1_m, double h2_m, double earth_radius_m,
                                 const RadioParams& params) {
    const double f = params.frequency_mhz / 1000.0;  // GHz
    const double a = earth_radius_m / 1000.0;        // km
    const double d = distance_m / 1000.0;            // km
    const double eps = params.ground_permittivity;
    const double s = 18.0 * params.ground_conductivity_s_m / f;
    // Normalized surface admittance and β (P.526-15 §3.1.1.1; P.1812 §4.3.3, eqs. (29)–(36)).
    const double k_h =
        0.036 * std::cbrt(1.0 / (a * f)) * std::pow((eps - 1.0) * (eps - 1.0) + s * s, -0.25);
    const double k =
        params.polarization == Polarization::Horizontal ? k_h : k_h * std::sqrt(eps * eps + s * s);
    const double k2 = k * k;
    const double beta = (1.0 + 1.6 * k2 + 0.67 * k2 * k2) / (1.0 + 4.5 * k2 + 1.53 * k2 * k2);
    // Normalized distance and heights (P.526-15 §3.1.1.2).
    const double x = 21.88 * beta * std::cbrt(f / (a * a)) * d;
    const double y_factor = 0.9575 * beta * std::cbrt(f * f / a);
    // Distance term F(X).
    const double fx = x >= 1.6 ? 11.0 + 10.0 * std::log10(x) - 17.6 * x
                               : -20.0 * std::log10(x) - 5.6488 * std::pow(x, 1.425);
    // Height-gain term G(Y) of B = βY, bounded below by 2 + 20 log K.
    const double g_min = 2.0 + 20.0 * std::log10(k);
    auto height_gain = [&](double h) {
        const double b = beta * y_factor * h;
        const double g = b > 2.0 ? 17.6 * std::sqrt(b - 1.1) - 5.0 * std::log10(b - 1.1) - 8.0
                                 : 20.0 * std::log10(b + 0.1 * b * b * b);
        return std::max(g, g_min);
    };
    return -fx - height_gain(h1_m) - height_gain(h2_m);
}

double sphericalEarthLossDb(double distance_m, double h1_m, double h2_m, double earth_radius_m,
                            const RadioParams& params) {
    // On a flat Earth the ray clears the surface most closely at the lower end, where the
    // required clearance is zero: no spherical-Earth loss.
    if (!std::isfinite(earth_radius_m))
        return 0.0;
    const double a = earth_radius_m / 1000.0;  // km
    const double d = distance_m / 1000.0;      // km
    const double lambda = params.wavelengthM();
    // Marginal line-of-sight distance (P.1812 eq. (22); P.526-15 §3.2).
    const double d_los = std::sqrt(2.0 * a) * (std::sqrt(0.001 * h1_m) + std::sqrt(0.001 * h2_m));
    if (d >= d_los)
        return std::max(0.0,
                        sphericalEarthFirstTermDb(distance_m, h1_m, h2_m, earth_radius_m, params));
    // Smallest clearance h_se between the curved surface and the ray (P.1812 eqs. (23), (24)).
    const double c = (h1_m - h2_m) / (h1_m + h2_m);
    const double m = 250.0 * d * d / (a * (h1_m + h2_m));
    const double arg = std::clamp(1.5 * c * std::sqrt(3.0 * m / std::pow(m + 1.0, 3)), -1.0, 1.0);
    const double b = std::clamp(
        2.0 * std::sqrt((m + 1.0) / (3.0 * m)) * std::cos(kPi / 3.0 + std::acos(arg) / 3.0), -1.0,
        1.0);
    const double d_se1 = 0.5 * d * (1.0 + b);
    const double d_se2 = d - d_se1;
    const double h_se =
        ((h1_m - 500.0 * d_se1 * d_se1 / a) * d_se2 + (h2_m - 500.0 * d_se2 * d_se2 / a) * d_se1) /
        d;
    // Clearance needed for no diffraction loss (P.1812 eq. (25)).
    const double h_req = 17.456 * std::sqrt(d_se1 * d_se2 * lambda / d);
    if (h_se > h_req)
        return 0.0;
    // Radius that puts the ends at marginal line of sight (P.1812 eq. (26)), then the first term
    // there, scaled by the missing clearance (P.1812 eq. (27)).
    const double sum = std::sqrt(h1_m) + std::sqrt(h2_m);
    const double a_em_m = 1000.0 * 500.0 * (d / sum) * (d / sum);
    const double l_dft = sphericalEarthFirstTermDb(distance_m, h1_m, h2_m, a_em_m, params);
    if (l_dft < 0)
        return 0.0;
    return (1.0 - h_se / h_req) * l_dft;
}

double bullingtonLossDb(const double* d_m, const double* h_m, std::size_t n, double hts_m,
                        double hrs_m, double earth_radius_m, double wavelength_m) {
    if (n < 3)
        return 0.0;  // no intermediate point: nothing diffracts
    const double ce = curvaturePerKm(earth_radius_m);
    const double d = d_m[n - 1] / 1000.0;
    // Heights of the intermediate points with the Earth's bulge, h_i + 500 C_e d_i (d − d_i).
    auto bulged = [&](std::size_t i, double di) {
        const double h = h_m ? h_m[i] : 0.0;
        return h + 500.0 * ce * di * (d - di);
    };
    // Highest slope from the transmitter to the terrain, and of the direct ray (eqs. (13), (14)).
    double s_tim = -kInf;
    for (std::size_t i = 1; i + 1 < n; ++i) {
        const double di = d_m[i] / 1000.0;
        s_tim = std::max(s_tim, (bulged(i, di) - hts_m) / di);
    }
    const double s_tr = (hrs_m - hts_m) / d;
    double l_uc = 0;
    if (s_tim < s_tr) {
        // Line of sight: the highest diffraction parameter of any point (eqs. (15), (16)).
        double nu_max = -kInf;
        for (std::size_t i = 1; i + 1 < n; ++i) {
            const double di = d_m[i] / 1000.0;
            const double clear = bulged(i, di) - (hts_m * (d - di) + hrs_m * di) / d;
            nu_max =
                std::max(nu_max, clear * std::sqrt(0.002 * d / (wavelength_m * di * (d - di))));
        }
        l_uc = knifeEdgeLossDb(nu_max);
    } else {
        // Transhorizon: the Bullington point where the two highest slopes meet (eqs. (17)–(20)).
        double s_rim = -kInf;
        for (std::size_t i = 1; i + 1 < n; ++i) {
            const double di = d_m[i] / 1000.0;
            s_rim = std::max(s_rim, (bulged(i, di) - hrs_m) / (d - di));
        }
        const double d_bp = std::clamp((hrs_m - hts_m + s_rim * d) / (s_tim + s_rim), 0.0, d);
        const double nu_b = (hts_m + s_tim * d_bp - (hts_m * (d - d_bp) + hrs_m * d_bp) / d) *
                            std::sqrt(0.002 * d / (wavelength_m * d_bp * (d - d_bp)));
        l_uc = std::isfinite(nu_b) ? knifeEdgeLossDb(nu_b) : 0.0;
    }
    return bullingtonCorrected(l_uc, d);
}

SmoothEarthHeights smoothEarthHeights(const TerrainProfile& profile, double hts_m, double hrs_m) {
    const std::vector<double>& dm = profile.distance_m;
    const std::vector<double>& h = profile.height_m;
    const std::size_t n = dm.size();
    const double d = dm[n - 1] / 1000.0;
    // Least-squares smooth surface through the profile (P.1812-6 Attachment 1 §5.6.1, eqs.
    // (85)–(88); P.452 Attachment 2 §5.1.6.2): v1, v2, then its heights at the ends.
    double v1 = 0, v2 = 0;
    for (std::size_t i = 1; i < n; ++i) {
        const double di = dm[i] / 1000.0, dp = dm[i - 1] / 1000.0;
        v1 += (di - dp) * (h[i] + h[i - 1]);
        v2 += (di - dp) * (h[i] * (2.0 * di + dp) + h[i - 1] * (di + 2.0 * dp));
    }
    const double h_stip = (2.0 * v1 * d - v2) / (d * d);
    const double h_srip = (v2 - v1 * d) / (d * d);
    // Obstruction correction (P.1812-6 Attachment 1 §5.6.2, eqs. (89), (90); P.452 §5.1.6.3): the
    // highest obstruction above the direct ray lowers the surface at each end in proportion to
    // the obstruction's angles seen from either end.
    double h_obs = -kInf, a_obt = -kInf, a_obr = -kInf;
    for (std::size_t i = 1; i + 1 < n; ++i) {
        const double di = dm[i] / 1000.0;
        const double hi = h[i] - (hts_m * (d - di) + hrs_m * di) / d;
        h_obs = std::max(h_obs, hi);
        a_obt = std::max(a_obt, hi / di);
        a_obr = std::max(a_obr, hi / (d - di));
    }
    double h_stp = h_stip, h_srp = h_srip;
    if (h_obs > 0) {
        const double g_t = a_obt / (a_obt + a_obr);
        const double g_r = a_obr / (a_obt + a_obr);
        h_stp -= h_obs * g_t;
        h_srp -= h_obs * g_r;
    }
    // No higher than the ground at the ends (P.1812-6 eq. (91)).
    return {std::min(h_stp, h[0]), std::min(h_srp, h[n - 1])};
}

PathLoss deltaBullingtonLoss(const TerrainProfile& profile, double tx_height_m, double rx_height_m,
                             double earth_radius_m, const RadioParams& params) {
    const std::vector<double>& dm = profile.distance_m;
    const std::vector<double>& h = profile.height_m;
    const std::size_t n = dm.size();
    const double lambda = params.wavelengthM();
    const double d_m = dm[n - 1];
    const double hts = h[0] + tx_height_m;
    const double hrs = h[n - 1] + rx_height_m;
    PathLoss out;
    const double slant_m = std::hypot(d_m, hts - hrs);
    out.free_space_db = freeSpaceLossDb(slant_m, params.frequency_mhz);

    // P.526-15 §4.5.2 (P.1812 §4.3.4): Bullington over the real profile…
    const double l_bulla =
        bullingtonLossDb(dm.data(), h.data(), n, hts, hrs, earth_radius_m, lambda);
    // …the smooth-Earth heights and the antenna heights above that surface…
    const SmoothEarthHeights smooth = smoothEarthHeights(profile, hts, hrs);
    const double hts_s = hts - smooth.tx_m;
    const double hrs_s = hrs - smooth.rx_m;
    // …Bullington over the smooth profile (all heights zero) and the spherical-Earth loss for it.
    const double l_bulls =
        bullingtonLossDb(dm.data(), nullptr, n, hts_s, hrs_s, earth_radius_m, lambda);
    const double l_dsph = sphericalEarthLossDb(d_m, hts_s, hrs_s, earth_radius_m, params);
    out.diffraction_db = l_bulla + std::max(l_dsph - l_bulls, 0.0);
    out.basic_db = out.free_space_db + out.diffraction_db;

    // Fresnel clearance: the direct ray above each intermediate point with the Earth's bulge,
    // in first-zone radii (P.526-15 §2.1).
    const double ce = curvaturePerKm(earth_radius_m);
    const double d = d_m / 1000.0;
    double worst = kInf;
    for (std::size_t i = 1; i + 1 < n; ++i) {
        const double di = dm[i] / 1000.0;
        const double ray = (hts * (d - di) + hrs * di) / d;
        const double ground = h[i] + 500.0 * ce * di * (d - di);
        worst = std::min(worst, (ray - ground) / fresnelRadiusM(dm[i], d_m - dm[i], lambda));
    }
    out.fresnel_fraction = std::isfinite(worst) ? worst : std::numeric_limits<double>::quiet_NaN();
    return out;
}

}  // namespace lookfar
