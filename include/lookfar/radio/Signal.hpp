#pragma once
// Signal: the basic transmission loss from one transmitter to every cell of a DEM.
//
// The terrain profile from the transmitter T to a cell C is the sightline rule's
// (SightlineRule.hpp): the ground at T's and C's cell centres at the ends, and between them the
// samples where the segment T→C crosses the column and row lines through cell centres, interpolated
// between the two neighbouring centres (no-data samples are left out). Antenna heights are above
// the ground at the ends. The effective Earth radius along T→C is the one of the sightline rule's
// drop, a_e = D²/(2Δ) with D the ground distance and Δ the drop at C after refraction — R_α/(1 − k)
// of the Earth model (infinite when flat). The loss is Propagation.hpp's delta-Bullington
// prediction over that profile.
//
// Engines: only the reference engine exists yet, which builds every cell's profile and applies
// the method literally (O(distance) per cell); each cell is independent, so the result is the
// same for any number of threads.
#include <limits>

#include "lookfar/core/Grid.hpp"
#include "lookfar/core/GridGeometry.hpp"
#include "lookfar/core/Progress.hpp"
#include "lookfar/earth/EarthModel.hpp"
#include "lookfar/radio/Propagation.hpp"
#include "lookfar/sightline/Observer.hpp"

namespace lookfar {

struct SignalOptions {
    RadioParams radio;
    double rx_height_m = 1.5;  ///< receiver antenna above the ground of each cell, metres, > 0
    double reach_m = std::numeric_limits<double>::infinity();  ///< farthest distance, m, > 0
    bool want_fresnel = false;                                 ///< fill SignalGrids::fresnel
};

struct SignalGrids {
    /// Basic transmission loss, dB (NaN: no data, or beyond reach). The transmitter's own cell
    /// holds the free-space loss over the height between the two antennas.
    Grid<float> loss_db;
    /// Worst clearance over the path in first Fresnel zone radii (negative when blocked; NaN
    /// where no terrain sample lies between the ends, or no data). Empty unless asked.
    Grid<float> fresnel;
};

/// Throws UsageError when the radio parameters, the transmitter's height (Observer::height_m,
/// the antenna above its cell's ground), the receiver's height or the reach are out of range,
/// and InputError when the transmitter is outside the DEM or on no data.
void validateSignalInputs(const Grid<float>& dem, const Observer& transmitter,
                          const SignalOptions& options);

/// The reference engine: every cell within reach on its own.
SignalGrids referenceSignal(const Grid<float>& dem, const GridGeometry& geometry,
                            const EarthModel& earth, const Observer& transmitter,
                            const SignalOptions& options, Progress& progress);

}  // namespace lookfar
