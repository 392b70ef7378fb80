#pragma once
// MultiSignal: several transmitters over one DEM: the strongest received level at every cell,
// the best server, the loss from it, and what each site serves on its own.
//
// For site i and cell C the level is P_i + A_i(az, el) + G_r − L_i(C): the site's EIRP in its
// main beam, the relative gain of its antenna pattern (AntennaPattern.hpp) toward C — azimuth
// from the site's local frame, elevation of the receiving antenna seen from the transmitting
// one over the curved Earth (the sightline rule's drop) — the receiver's gain, and the basic
// transmission loss of the reference signal engine (Signal.hpp) at the site's frequency. The
// best server is the site of the strongest level; a tie goes to the lower index.
#include <cstdint>
#include <limits>
#include <string>
#include <vector>

#include "lookfar/core/Grid.hpp"
#include "lookfar/core/GridGeometry.hpp"
#include "lookfar/core/Progress.hpp"
#include "lookfar/earth/EarthModel.hpp"
#include "lookfar/radio/AntennaPattern.hpp"
#include "lookfar/radio/Signal.hpp"
#include "lookfar/sightline/Observer.hpp"

namespace lookfar {

/// No best server (no data, or beyond every site's reach).
inline constexpr std::uint16_t kNoServer = 65535;

struct SignalSite {
    Observer transmitter;      ///< cell, antenna height above its ground (> 0), latitude, name
    double frequency_mhz = 0;  ///< MHz, 30 to 50 000
    double eirp_dbm = 0;       ///< EIRP in the main beam, dBm
    AntennaPattern pattern;    ///< omnidirectional by default
};

struct MultiSignalOptions {
    RadioParams ground;  ///< permittivity, conductivity, polarization (its frequency is unused)
    double rx_height_m = 1.5;
    double rx_gain_dbi = 0;
    double reach_m = std::numeric_limits<double>::infinity();
    /// Level that serves a cell, dBm; NaN counts no served cells.
    double min_level_dbm = std::numeric_limits<double>::quiet_NaN();
};

struct MultiSignalResult {
    Grid<float> level_dbm;                   ///< strongest level, dBm (NaN none)
    Grid<float> loss_db;                     ///< basic transmission loss from the best server, dB
    Grid<std::uint16_t> best;                ///< index of the best server, kNoServer none
    std::vector<std::int64_t> served_cells;  ///< per site, on its own: level ≥ min_level_dbm
    std::vector<double> served_area_m2;      ///< per site, on its own, true ground area
    std::vector<double> best_area_m2;        ///< per site: where it is the best server
};

/// Throws UsageError when there are no sites or more than 65 534, or a site's inputs are out of
/// range (validateSignalInputs), InputError when a site is outside the DEM or on no data.
MultiSignalResult multiSignal(const Grid<float>& dem, const GridGeometry& geometry,
                              const EarthModel& earth, const std::vector<SignalSite>& sites,
                              const MultiSignalOptions& options, Progress& progress);

}  // namespace lookfar
