#pragma once
// Propagation: basic transmission loss over a terrain profile by published ITU-R methods.
//
//   free space      ITU-R P.525-4 §2.2: L_bf = 20 log(4πd/λ)
//   knife edge      ITU-R P.526-15 §4.1: J(ν) = 6.9 + 20 log(√((ν − 0.1)² + 1) + ν − 0.1), ν >
//   −0.78 spherical Earth ITU-R P.526-15 §3.1.1 (first term of the residue series) and §3.2 (any
//                   distance: interpolated inside the marginal line-of-sight distance), in the
//                   forms of ITU-R P.1812 §4.3.2–4.3.3
//   terrain         ITU-R P.526-15 §4.5 delta-Bullington: Bullington over the real profile, plus
//                   the spherical-Earth loss for the smooth-Earth effective heights (least-squares
//                   surface with the obstruction correction of P.1812 Attachment 1 / P.452), minus
//                   Bullington over that smooth profile, when positive
//
// Notation
//   d           path length along the ground, km in the ITU-R forms, metres in the interface
//   d_i, h_i    distance from the transmitter and height above sea of profile point i, i = 0…n
//   h_ts, h_rs  antenna heights above sea: h_0 + transmitter height, h_n + receiver height
//   a_e         effective Earth radius R/(1 − k); C_e = 1/a_e its curvature (0 when flat)
//   λ           wavelength, metres; f frequency, MHz at the interface
//   ν           the Fresnel–Kirchhoff diffraction parameter of P.526 §4.1
//
// Every loss is in dB, ≥ 0 for the diffraction parts. Predictions are medians for planning.
#include <cstddef>
#include <string>
#include <vector>

#include "lookfar/core/Units.hpp"

namespace lookfar {

/// The frequency range the methods are used over here (P.526 §3.2 holds from 10 MHz; the
/// Bullington construction is used up to 50 GHz by P.1812 and P.452), MHz.
inline constexpr double kMinFrequencyMhz = 30.0;
inline constexpr double kMaxFrequencyMhz = 50000.0;

enum class Polarization { Vertical, Horizontal };

/// Parses "vertical" or "horizontal" (any case); throws UsageError otherwise.
Polarization parsePolarization(const std::string& text);
std::string toString(Polarization polarization);

/// The radio side of a prediction: frequency and the ground's electrical constants.
struct RadioParams {
    double frequency_mhz = 100.0;            ///< MHz, [kMinFrequencyMhz, kMaxFrequencyMhz]
    double ground_permittivity = 22.0;       ///< relative permittivity ε_r (land 22, sea 80), > 0
    double ground_conductivity_s_m = 0.003;  ///< conductivity σ, S/m (land 0.003, sea 5), ≥ 0
    Polarization polarization = Polarization::Vertical;

    double wavelengthM() const { return kSpeedOfLightMps / (frequency_mhz * 1e6); }
};

/// Throws UsageError naming the value when the frequency is outside [30 MHz, 50 GHz], the
/// permittivity is not > 0 or the conductivity is negative (NaN-safe).
void validateRadioParams(const RadioParams& params);

/// Free-space basic transmission loss over `distance_m` (metres, > 0), dB (ITU-R P.525-4 §2.2).
double freeSpaceLossDb(double distance_m, double frequency_mhz);

/// Knife-edge diffraction loss J(ν), dB: 0 for ν ≤ −0.78 (ITU-R P.526-15 §4.1).
double knifeEdgeLossDb(double nu);

/// Radius of the first Fresnel zone (metres) at d1 and d2 metres from the ends (ITU-R P.526-15
/// §2.1): √(λ d1 d2 / (d1 + d2)).
double fresnelRadiusM(double d1_m, double d2_m, double wavelength_m);

/// First term of the residue series for a smooth Earth of radius `earth_radius_m` (ITU-R P.526-15
/// §3.1.1): loss below free space, dB, for antennas `h1_m`, `h2_m` above the surface, `distance_m`
/// apart. Valid beyond the horizon; may be negative inside it (P.526-15 §3.2 then interpolates).
double sphericalEarthFirstTermDb(double distance_m, double h1_m, double h2_m, double earth_radius_m,
                                 const RadioParams& params);

/// Spherical-Earth diffraction loss for any distance (ITU-R P.526-15 §3.2; P.1812 §4.3.2), dB
/// ≥ 0. `earth_radius_m` may be infinite (flat Earth); heights are above the smooth surface, > 0.
double sphericalEarthLossDb(double distance_m, double h1_m, double h2_m, double earth_radius_m,
                            const RadioParams& params);

/// A terrain profile from the transmitter (point 0) to the receiver (point n): distances from
/// the transmitter along the ground (metres, increasing, first 0) and ground heights above sea
/// (metres). At least two points.
struct TerrainProfile {
    std::vector<double> distance_m;
    std::vector<double> height_m;
};

/// Bullington's construction (ITU-R P.526-15 §4.5.1; P.1812 §4.3.1) over `n` points of distances
/// `d_m` and heights `h_m`, antennas at heights above sea `hts_m` and `hrs_m`, dB ≥ 0.
double bullingtonLossDb(const double* d_m, const double* h_m, std::size_t n, double hts_m,
                        double hrs_m, double earth_radius_m, double wavelength_m);

/// Heights above sea (metres) of the smooth-Earth surface under the transmitter and receiver for
/// the delta-Bullington method: the least-squares line through the profile, lowered by the
/// obstruction correction, and no higher than the ground at either end (P.1812-6
/// Attachment 1 §5.6; P.452 Attachment 2 to Annex 1 §5.1.6).
struct SmoothEarthHeights {
    double tx_m = 0;
    double rx_m = 0;
};
SmoothEarthHeights smoothEarthHeights(const TerrainProfile& profile, double hts_m, double hrs_m);

/// The parts of one prediction.
struct PathLoss {
    double basic_db = 0;        ///< free space over the slant distance + diffraction, dB
    double free_space_db = 0;   ///< P.525 over the slant distance, dB
    double diffraction_db = 0;  ///< delta-Bullington, dB ≥ 0
    /// Smallest clearance of the straight ray above the terrain (with the Earth's bulge) as a
    /// fraction of the first Fresnel zone radius over the intermediate points; negative when the
    /// ray is blocked; NaN when the profile has no intermediate point.
    double fresnel_fraction = 0;
};

/// Basic transmission loss over `profile` by the delta-Bullington method of ITU-R P.526-15
/// §4.5.2 (with P.1812 §4.3.4), antennas `tx_height_m` and `rx_height_m` above the ground at the
/// ends (> 0), effective Earth radius `earth_radius_m` (metres, may be infinite).
PathLoss deltaBullingtonLoss(const TerrainProfile& profile, double tx_height_m, double rx_height_m,
                             double earth_radius_m, const RadioParams& params);

}  // namespace lookfar
