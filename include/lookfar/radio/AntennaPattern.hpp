#pragma once
// AntennaPattern: the relative gain of a transmitting antenna toward a direction, for planning.
//
// The sector pattern is the parabolic-in-dB reference form of common practice (the
// "12 (θ/θ_3dB)²" rule, as in ITU-R F.1336 §3 and the sector patterns of mobile-network
// studies), from memory:
//   horizontal  A_h(φ) = −min(12 (φ/φ_3dB)², A_m)         φ off boresight, degrees
//   vertical    A_v(θ) = −min(12 ((θ + tilt)/θ_3dB)², A_m)  θ elevation above the horizontal
//   combined    A = −min(−(A_h + A_v), A_m)
// with A_m the front-to-back limit (25 dB here, common practice, no source). The vertical 3 dB
// beamwidth follows from the gain and the horizontal beamwidth by ITU-R F.1336 §3.1:
// θ_3dB = 31000 · 10^(−0.1 G_0) / φ_3dB (degrees; from memory). An antenna without a
// beamwidth is omnidirectional in azimuth; without a gain it has no vertical pattern.
#include <limits>

namespace lookfar {

struct AntennaPattern {
    /// Boresight azimuth, degrees clockwise from grid north.
    double azimuth_deg = 0;
    /// Horizontal 3 dB beamwidth, degrees, (0, 360]; infinity = omnidirectional.
    double beamwidth_deg = std::numeric_limits<double>::infinity();
    /// Vertical 3 dB beamwidth, degrees, > 0; infinity = no vertical pattern.
    double vertical_beamwidth_deg = std::numeric_limits<double>::infinity();
    /// Downtilt of the boresight below the horizontal, degrees (negative tilts up).
    double tilt_deg = 0;
    /// Largest attenuation of the pattern (front-to-back limit), dB.
    double front_to_back_db = 25;

    /// Relative gain (dB, ≤ 0) toward azimuth `azimuth_deg` (clockwise from grid north) and
    /// elevation `elevation_deg` (above the horizontal).
    double relativeGainDb(double azimuth_deg, double elevation_deg) const;
};

/// Vertical 3 dB beamwidth of a sector antenna of gain `gain_dbi` and horizontal beamwidth
/// `beamwidth_deg` (ITU-R F.1336 §3.1, from memory): 31000 · 10^(−0.1 G) / φ_3dB, degrees.
double verticalBeamwidthDeg(double gain_dbi, double beamwidth_deg);

}  // namespace lookfar
