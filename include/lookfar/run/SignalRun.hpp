#pragma once
// lookfar signal: the basic transmission loss from a transmitter (or the best of several, from a
// sites CSV with antenna patterns) to every cell (ITU-R P.525 free
// space + the delta-Bullington diffraction of ITU-R P.526-15 §4.5, lookfar/radio), with the
// received level, the served area and the Fresnel clearance; the summary adds the served area and
// the area by level band.
#include "lookfar/run/Command.hpp"

namespace lookfar::run {

struct SignalRunOptions {
    /// The common options, with the 4/3 Earth of radio (k = 0.25) as this command's default.
    CommonOptions common = [] {
        CommonOptions c;
        c.refraction = 0.25;
        return c;
    }();
    std::string tx;     ///< X,Y in --crs (one transmitter)
    std::string sites;  ///< CSV of transmitters (several); one of tx and sites
    std::string name = "transmitter";
    std::string tx_height = "30";   ///< above the ground, > 0 (unit suffixes allowed)
    std::string rx_height = "1.5";  ///< above the ground of every cell, > 0
    double frequency_mhz = 0;       ///< MHz, 30 to 50 000
    bool frequency_given = false;
    double ground_permittivity = 22;
    double ground_conductivity = 0.003;  ///< S/m
    std::string polarization = "vertical";
    double eirp_dbm = 0;
    bool eirp_given = false;
    double rx_gain_dbi = 0;
    double min_level_dbm = 0;
    bool min_level_given = false;
    std::string output, level, served, fresnel;  ///< output paths, empty = not written
    std::string best;                            ///< with sites: the best-server raster
};

class SignalRun final : public RunCommand {
  public:
    SignalRunOptions options;

    CommandHelp help() const override;
    OptionTable declare() override;
    const CommonOptions& common() const override { return options.common; }
    RunReport run(const RunEnv& env) override;
};

}  // namespace lookfar::run
