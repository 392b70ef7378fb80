// The reference signal engine of Signal.hpp: every cell's terrain profile from the sightline
// rule's samples, then the delta-Bullington prediction of Propagation.hpp.
//
// Notation
//   (c0, r0)   transmitter cell; (dc, dr) the offset of cell C from it
//   t          position along T→C, from the sample's column or row line (SightlineSamples)
//   D          ground distance T→C, metres; a sample at t lies t·D from T
//   Δ          drop at C after refraction (Curvature::drop); a_e = D²/(2Δ)
#include <cmath>
#include <limits>
#include <string>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/ParallelFor.hpp"
#include "lookfar/radio/Signal.hpp"
#include "lookfar/viewshed/SightlineRule.hpp"
#include "lookfar/viewshed/SightlineSamples.hpp"
#include "RadioText.hpp"

namespace lookfar {
namespace {

/// Appends the intermediate samples of T→C to `profile` in order of t, leaving out no-data
/// samples; distances are t·D.
void appendSamples(const SightlineSamples& s, double distance_m, TerrainProfile& profile) {
    s.forEachSample([&](double t, double z) {
        if (std::isnan(z))
            return;
        profile.distance_m.push_back(t * distance_m);
        profile.height_m.push_back(z);
    });
}

}  // namespace

void validateSignalInputs(const Grid<float>& dem, const Observer& transmitter,
                          const SignalOptions& options) {
    validateRadioParams(options.radio);
    if (!dem.contains(transmitter.col, transmitter.row)) {
        throw InputError("the transmitter '" + transmitter.name + "' is outside the DEM");
    }
    if (std::isnan(dem(transmitter.col, transmitter.row))) {
        throw InputError("the transmitter '" + transmitter.name + "' stands on a no-data cell");
    }
    if (!(transmitter.height_m > 0) || !std::isfinite(transmitter.height_m)) {
        throw InvalidOption("tx_height_m", radioNumberText(transmitter.height_m) +
                                               " m must be a finite height above the ground, > 0");
    }
    if (!(options.rx_height_m > 0) || !std::isfinite(options.rx_height_m)) {
        throw InvalidOption("rx_height_m", radioNumberText(options.rx_height_m) +
                                               " m must be a finite height above the ground, > 0");
    }
    if (!(options.reach_m > 0)) {
        throw InvalidOption("reach_m",
                            radioNumberText(options.reach_m) + " m must be a positive distance");
    }
}

SignalGrids referenceSignal(const Grid<float>& dem, const GridGeometry& geometry,
                            const EarthModel& earth, const Observer& transmitter,
                            const SignalOptions& options, Progress& progress) {
    validateSignalInputs(dem, transmitter, options);
    const SightlineRule rule(dem, geometry, earth, transmitter);
    const LocalFrame& frame = rule.frame();
    const Curvature& curvature = rule.curvature();
    const int c0 = transmitter.col, r0 = transmitter.row;
    const double ground_tx = dem(c0, r0);
    const float nan = std::numeric_limits<float>::quiet_NaN();
    SignalGrids out;
    out.loss_db = Grid<float>(dem.width(), dem.height(), nan);
    if (options.want_fresnel)
        out.fresnel = Grid<float>(dem.width(), dem.height(), nan);

    progress.begin("reference signal", dem.height());
    parallelFor(dem.height(), progress, [&](std::int64_t ri) {
        const int r = static_cast<int>(ri);
        TerrainProfile profile;  // this row's scratch, reused cell after cell
        for (int c = 0; c < dem.width(); ++c) {
            const float ground_rx = dem(c, r);
            const double east = frame.east(c, r), north = frame.north(r);
            const double distance_m = std::hypot(east, north);
            if (std::isnan(ground_rx) || distance_m > options.reach_m)
                continue;
            if (c == c0 && r == r0) {
                const double gap = std::fabs(transmitter.height_m - options.rx_height_m);
                if (gap > 0)
                    out.loss_db(c, r) =
                        static_cast<float>(freeSpaceLossDb(gap, options.radio.frequency_mhz));
                continue;
            }
            const SightlineSamples samples = rule.samples(c, r, 0.0);
            profile.distance_m.assign(1, 0.0);
            profile.height_m.assign(1, ground_tx);
            appendSamples(samples, distance_m, profile);
            profile.distance_m.push_back(distance_m);
            profile.height_m.push_back(ground_rx);
            const double drop = curvature.drop(east, north);
            const double earth_radius_m = drop > 0 ? distance_m * distance_m / (2.0 * drop)
                                                   : std::numeric_limits<double>::infinity();
            const PathLoss loss = deltaBullingtonLoss(
                profile, transmitter.height_m, options.rx_height_m, earth_radius_m, options.radio);
            out.loss_db(c, r) = static_cast<float>(loss.basic_db);
            if (options.want_fresnel)
                out.fresnel(c, r) = static_cast<float>(loss.fresnel_fraction);
        }
    });
    progress.end();
    return out;
}

}  // namespace lookfar
