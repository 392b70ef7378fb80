// The radio methods of Propagation.hpp against the published values and independent
// computations (docs/references.md, radio rows). Each check names its source.
#include <gtest/gtest.h>

#include <cmath>
#include <limits>

#include "lookfar/core/Errors.hpp"
#include "lookfar/radio/Propagation.hpp"

using namespace lookfar;

namespace {

constexpr double kInf = std::numeric_limits<double>::infinity();

/// A profile of `n` + 1 equally spaced points over `length_m`, heights from `height(d)`.
template <typename F>
TerrainProfile profileOf(int n, double length_m, F height) {
    TerrainProfile p;
    for (int i = 0; i <= n; ++i) {
        const double d = length_m * i / n;
        p.distance_m.push_back(d);
        p.height_m.push_back(height(d));
    }
    return p;
}

RadioParams radio(double f_mhz, double eps = 22, double sigma = 0.003,
                  Polarization pol = Polarization::Vertical) {
    RadioParams r;
    r.frequency_mhz = f_mhz;
    r.ground_permittivity = eps;
    r.ground_conductivity_s_m = sigma;
    r.polarization = pol;
    return r;
}

/// J(ν) of ITU-R P.526-15 §4.1, written out again here.
double knifeEdgeJ(double nu) {
    return nu > -0.78 ? 6.9 + 20 * std::log10(std::sqrt((nu - 0.1) * (nu - 0.1) + 1) + nu - 0.1)
                      : 0.0;
}

/// The first term of the residue series in the practical units of ITU-R P.526-15 §3.1.1 (f in
/// MHz, a_e and d in km, h in m: K_H = 0.36 (a_e f)^(−1/3) [(ε−1)² + (18000σ/f)²]^(−1/4),
/// X = 2.188 β f^(1/3) a_e^(−2/3) d, Y = 9.575·10⁻³ β f^(2/3) a_e^(−1/3) h) — other constants
/// than the engine's GHz forms of P.1812, computed independently.
double firstTermP526(double f_mhz, double ae_km, double d_km, double h1, double h2, double eps,
                     double sigma, bool vertical) {
    const double s = 18000 * sigma / f_mhz;
    double k =
        0.36 * std::pow(ae_km * f_mhz, -1.0 / 3) * std::pow((eps - 1) * (eps - 1) + s * s, -0.25);
    if (vertical)
        k *= std::sqrt(eps * eps + s * s);
    const double beta =
        (1 + 1.6 * k * k + 0.67 * std::pow(k, 4)) / (1 + 4.5 * k * k + 1.53 * std::pow(k, 4));
    const double x = 2.188 * beta * std::pow(f_mhz, 1.0 / 3) * std::pow(ae_km, -2.0 / 3) * d_km;
    const double f_x = x >= 1.6 ? 11 + 10 * std::log10(x) - 17.6 * x
                                : -20 * std::log10(x) - 5.6488 * std::pow(x, 1.425);
    auto g = [&](double h) {
        const double y = 9.575e-3 * beta * std::pow(f_mhz, 2.0 / 3) * std::pow(ae_km, -1.0 / 3) * h;
        const double b = beta * y;
        const double v = b > 2 ? 17.6 * std::sqrt(b - 1.1) - 5 * std::log10(b - 1.1) - 8
                               : 20 * std::log10(b + 0.1 * b * b * b);
        return std::max(v, 2 + 20 * std::log10(k));
    };
    return -(f_x + g(h1) + g(h2));
}

}  // namespace

TEST(PropagationTest, FreeSpaceLossOneKilometreAtOneGigahertz) {
    // ITU-R P.525-4 §2.2: L_bf = 32.45 + 20 log f(MHz) + 20 log d(km) = 92.45 dB at 1 GHz, 1 km.
    EXPECT_NEAR(freeSpaceLossDb(1000.0, 1000.0), 92.45, 0.005);
    // Doubling the distance adds 20 log 2 = 6.02 dB (the inverse-square law).
    EXPECT_NEAR(freeSpaceLossDb(2000.0, 1000.0) - freeSpaceLossDb(1000.0, 1000.0), 6.0206, 1e-4);
}

TEST(PropagationTest, KnifeEdgeLossMatchesPublishedValues) {
    // ITU-R P.526-15 §4.1 and its Figure of J(ν): J(0) = 6.0 dB (the grazing edge halves the
    // field), J(1) ≈ 13.9 dB; no loss for ν ≤ −0.78.
    EXPECT_NEAR(knifeEdgeLossDb(0.0), 6.0, 0.05);
    EXPECT_NEAR(knifeEdgeLossDb(1.0), 13.9, 0.05);
    EXPECT_EQ(knifeEdgeLossDb(-0.78), 0.0);
    EXPECT_EQ(knifeEdgeLossDb(-2.0), 0.0);
    // Large ν: the Fresnel integrals give |E/E0| → 1/(π√2 ν), J → 20 log(π√2 ν) ≈ 12.95 +
    // 20 log ν (common practice, no source: the textbook asymptote; the approximation of P.526
    // stays within 0.1 dB of it at ν = 10).
    EXPECT_NEAR(knifeEdgeLossDb(10.0), 20 * std::log10(3.14159265358979 * std::sqrt(2.0) * 10),
                0.1);
}

TEST(PropagationTest, SingleWallOnFlatGroundIsTheKnifeEdgeGeometry) {
    // A 25 m wall 4 km from the transmitter on a flat, level plain (no Earth curvature), 10 km
    // path at 600 MHz: ν from the wall's height above the direct ray (P.526-15 §4.1 eq. for ν),
    // J(ν), then Bullington's correction L_uc + (1 − e^(−L_uc/6))(10 + 0.02 d) (P.526-15 §4.5.1).
    const double f = 600, lambda = kSpeedOfLightMps / (f * 1e6);
    const double d = 10000, d1 = 4000, d2 = d - d1, wall = 25, ht = 10, hr = 5;
    TerrainProfile p = profileOf(100, d, [&](double x) { return x == d1 ? wall : 0.0; });
    const PathLoss loss = deltaBullingtonLoss(p, ht, hr, kInf, radio(f));
    const double ray = (ht * d2 + hr * d1) / d;
    const double nu = (wall - ray) * std::sqrt(2 * d / (lambda * d1 * d2));
    const double j = knifeEdgeJ(nu);
    const double expected = j + (1 - std::exp(-j / 6)) * (10 + 0.02 * d / 1000);
    EXPECT_NEAR(loss.diffraction_db, expected, 0.01);
    EXPECT_NEAR(loss.free_space_db, freeSpaceLossDb(std::hypot(d, ht - hr), f), 1e-9);
    // The wall blocks the ray: the worst Fresnel clearance is negative there.
    EXPECT_NEAR(loss.fresnel_fraction, (ray - wall) / std::sqrt(lambda * d1 * d2 / d), 1e-9);
    EXPECT_LT(loss.fresnel_fraction, 0.0);
}

TEST(PropagationTest, FlatGroundWithLowReceiverApproachesPlaneEarthLoss) {
    // Over smooth ground well past the two-ray break point (4 h_t h_r / λ), the loss approaches
    // the plane-earth value 40 log d − 20 log(h_t h_r) (common practice, no source: the textbook
    // two-ray result; within 2 dB here), 4/3 Earth.
    const double ae = 6371008.8 / (1 - 0.25);
    for (double f : {150.0, 450.0}) {
        for (double d : {3000.0, 6000.0}) {
            const double ht = 30, hr = 1.5;
            TerrainProfile p = profileOf(200, d, [](double) { return 0.0; });
            const PathLoss loss = deltaBullingtonLoss(p, ht, hr, ae, radio(f));
            const double plane = 40 * std::log10(d) - 20 * std::log10(ht * hr);
            EXPECT_NEAR(loss.basic_db, plane, 2.0) << "f " << f << " MHz, d " << d << " m";
            // Not free space: the ground takes 10 dB or more here.
            EXPECT_GT(loss.diffraction_db, 8.0);
        }
    }
}

TEST(PropagationTest, SmoothSeaBeyondTheHorizonIsTheFirstTerm) {
    // Smooth sea (ε_r 80, σ 5 S/m), 4/3 Earth, 100 km at 200 MHz, antennas 50 m and 10 m: the
    // marginal line-of-sight distance is √(2a_e)(√h1 + √h2) ≈ 42 km, so the path is beyond the
    // horizon and the loss is the first term of the residue series (P.526-15 §3.1.1, computed
    // independently in P.526's MHz forms by firstTermP526).
    const double ae = 6371008.8 / (1 - 0.25);
    for (Polarization pol : {Polarization::Vertical, Polarization::Horizontal}) {
        const RadioParams sea = radio(200, 80, 5, pol);
        const double expected =
            firstTermP526(200, ae / 1000, 100, 50, 10, 80, 5, pol == Polarization::Vertical);
        EXPECT_GT(expected, 20.0);  // well into the shadow
        EXPECT_NEAR(sphericalEarthLossDb(100000, 50, 10, ae, sea), expected, 0.01);
        TerrainProfile p = profileOf(500, 100000, [](double) { return 0.0; });
        const PathLoss loss = deltaBullingtonLoss(p, 50, 10, ae, sea);
        EXPECT_NEAR(loss.diffraction_db, expected, 0.01);
    }
}

TEST(PropagationTest, SphericalEarthLossVanishesWithClearance) {
    // P.526-15 §3.2: no loss when the smooth Earth stays below the clearance h_req; over a flat
    // Earth never any.
    const double ae = 6371008.8 / (1 - 0.25);
    EXPECT_EQ(sphericalEarthLossDb(5000, 100, 100, ae, radio(1000)), 0.0);
    EXPECT_EQ(sphericalEarthLossDb(50000, 2, 2, kInf, radio(100)), 0.0);
    // Inside the horizon the interpolation stays between 0 and the first term at the horizon.
    const double inside = sphericalEarthLossDb(20000, 20, 5, ae, radio(100));
    EXPECT_GT(inside, 0.0);
    EXPECT_LT(inside, 40.0);
}

TEST(PropagationTest, LossIsReciprocal) {
    // Swapping the ends gives the same loss (reciprocity of the propagation path; every step of
    // the method is symmetric in the two ends).
    const double ae = 6371008.8 / (1 - 0.25);
    TerrainProfile p = profileOf(300, 24000, [](double x) {
        return 120 + 60 * std::sin(x / 1700) + 35 * std::cos(x / 530) + 0.002 * x;
    });
    TerrainProfile q;
    for (std::size_t i = p.distance_m.size(); i-- > 0;) {
        q.distance_m.push_back(p.distance_m.back() - p.distance_m[i]);
        q.height_m.push_back(p.height_m[i]);
    }
    for (double f : {60.0, 900.0, 20000.0}) {
        const PathLoss ab = deltaBullingtonLoss(p, 25, 3, ae, radio(f));
        const PathLoss ba = deltaBullingtonLoss(q, 3, 25, ae, radio(f));
        EXPECT_GT(ab.diffraction_db, 0.0);
        EXPECT_NEAR(ab.basic_db, ba.basic_db, 1e-6) << f << " MHz";
        EXPECT_NEAR(ab.fresnel_fraction, ba.fresnel_fraction, 1e-9);
    }
}

TEST(PropagationTest, SmoothEarthHeightsOfALevelPlainAreThePlain) {
    // The least-squares line through a level profile is the profile (P.1812 Attachment 1 §5.6.1).
    TerrainProfile p = profileOf(50, 9000, [](double) { return 42.0; });
    const SmoothEarthHeights s = smoothEarthHeights(p, 72, 43.5);
    EXPECT_NEAR(s.tx_m, 42.0, 1e-9);
    EXPECT_NEAR(s.rx_m, 42.0, 1e-9);
    // A uniform slope is its own least-squares line, capped by the ground at each end.
    TerrainProfile slope = profileOf(50, 9000, [](double x) { return 10 + 0.01 * x; });
    const SmoothEarthHeights t = smoothEarthHeights(slope, 40, 101.5);
    EXPECT_NEAR(t.tx_m, 10.0, 1e-6);
    EXPECT_NEAR(t.rx_m, 100.0, 1e-6);
}

TEST(PropagationTest, RadioParametersAreChecked) {
    RadioParams r = radio(29.9);
    EXPECT_THROW(validateRadioParams(r), UsageError);
    r.frequency_mhz = 50001;
    EXPECT_THROW(validateRadioParams(r), UsageError);
    r.frequency_mhz = std::nan("");
    EXPECT_THROW(validateRadioParams(r), UsageError);
    r = radio(30);
    EXPECT_NO_THROW(validateRadioParams(r));
    r.ground_permittivity = 0;
    EXPECT_THROW(validateRadioParams(r), UsageError);
    r = radio(50000, 80, -1);
    EXPECT_THROW(validateRadioParams(r), UsageError);
    EXPECT_EQ(parsePolarization("Horizontal"), Polarization::Horizontal);
    EXPECT_THROW(parsePolarization("circular"), UsageError);
}
