// MultiSignal: the reference signal engine per site, folded cell by cell into the strongest
// level (MultiSignal.hpp).
//
// Notation
//   (e, n)   east and north offsets of a cell from the site, metres (the site's LocalFrame)
//   az, el   azimuth clockwise from grid north, elevation above the horizontal, degrees
//   Δ        drop of the cell after refraction (Curvature::drop)
#include "lookfar/radio/MultiSignal.hpp"

#include <cmath>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/ParallelFor.hpp"
#include "lookfar/core/Units.hpp"

namespace lookfar {

MultiSignalResult multiSignal(const Grid<float>& dem, const GridGeometry& geometry,
                              const EarthModel& earth, const std::vector<SignalSite>& sites,
                              const MultiSignalOptions& options, Progress& progress) {
    if (sites.empty() || sites.size() >= kNoServer) {
        throw UsageError("a run takes 1 to 65534 transmitters, not " +
                         std::to_string(sites.size()));
    }
    const float nan = std::numeric_limits<float>::quiet_NaN();
    MultiSignalResult out;
    out.level_dbm = Grid<float>(dem.width(), dem.height(), nan);
    out.loss_db = Grid<float>(dem.width(), dem.height(), nan);
    out.best = Grid<std::uint16_t>(dem.width(), dem.height(), kNoServer);
    out.served_cells.assign(sites.size(), 0);
    out.served_area_m2.assign(sites.size(), 0.0);
    out.best_area_m2.assign(sites.size(), 0.0);
    for (std::size_t s = 0; s < sites.size(); ++s) {
        const SignalSite& site = sites[s];
        SignalOptions opt;
        opt.radio = options.ground;
        opt.radio.frequency_mhz = site.frequency_mhz;
        opt.rx_height_m = options.rx_height_m;
        opt.reach_m = options.reach_m;
        const SignalGrids g =
            referenceSignal(dem, geometry, earth, site.transmitter, opt, progress);
        const Observer& tx = site.transmitter;
        const LocalFrame frame = geometry.localFrame(tx.col, tx.row);
        const Curvature curvature = earth.curvatureAt(tx.latitude_deg);
        const double z_tx = dem(tx.col, tx.row) + tx.height_m;
        // Rows are independent; the per-site areas are summed per row, then in row order, so
        // the sums are the same for any number of threads.
        std::vector<double> served_row(dem.height(), 0.0);
        std::vector<std::int64_t> served_count(dem.height(), 0);
        CancelOnlyProgress quiet(progress);
        ParallelForOptions pf;
        pf.report = false;
        parallelFor(
            dem.height(), quiet,
            [&](std::int64_t ri) {
                const int r = static_cast<int>(ri);
                const double area = geometry.cellAreaM2(r);
                for (int c = 0; c < dem.width(); ++c) {
                    const float loss = g.loss_db(c, r);
                    if (std::isnan(loss))
                        continue;
                    const double e = frame.east(c, r), n = frame.north(r);
                    const double d = std::hypot(e, n);
                    double gain = 0;
                    if (d > 0) {
                        const double az = std::atan2(e, n) * kRadToDeg;
                        const double rise =
                            dem(c, r) + options.rx_height_m - curvature.drop(e, n) - z_tx;
                        gain = site.pattern.relativeGainDb(az, std::atan2(rise, d) * kRadToDeg);
                    }
                    const double level = site.eirp_dbm + gain + options.rx_gain_dbi - loss;
                    if (level >= options.min_level_dbm) {
                        served_row[r] += area;
                        ++served_count[r];
                    }
                    const float lv = static_cast<float>(level);
                    if (std::isnan(out.level_dbm(c, r)) || lv > out.level_dbm(c, r)) {
                        out.level_dbm(c, r) = lv;
                        out.loss_db(c, r) = loss;
                        out.best(c, r) = static_cast<std::uint16_t>(s);
                    }
                }
            },
            pf);
        for (int r = 0; r < dem.height(); ++r) {
            out.served_area_m2[s] += served_row[r];
            out.served_cells[s] += served_count[r];
        }
    }
    for (int r = 0; r < dem.height(); ++r) {
        const double area = geometry.cellAreaM2(r);
        for (int c = 0; c < dem.width(); ++c) {
            if (out.best(c, r) != kNoServer)
                out.best_area_m2[out.best(c, r)] += area;
        }
    }
    return out;
}

}  // namespace lookfar
