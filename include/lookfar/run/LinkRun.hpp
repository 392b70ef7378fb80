#pragma once
// lookfar link: the path profile between two points, with the first Fresnel zone of a radio
// link, its basic transmission loss and the antenna heights a wanted clearance needs; the run
// places the samples (PROJ geodesic or straight map line) and writes the profile CSV, the SVG
// plot and the summary. With --pairs it measures every link of a CSV the same way, into one CSV
// row and one summary entry each. The profile itself is lookfar/link/PathProfile.
#include "lookfar/run/Command.hpp"

namespace lookfar::run {

struct LinkRunOptions {
    CommonOptions common;
    std::string from, to;  ///< X,Y in --crs (one link)
    std::string pairs;     ///< CSV of links (several); instead of from and to
    std::string from_height = "1.7", to_height = "1.7";
    bool from_height_given = false, to_height_given = false;
    std::string frequency_mhz;       ///< empty = no Fresnel zone
    std::string required_clearance;  ///< fraction of F1; empty = no required heights
    /// The ground under the path, for the loss (land by default, as for `signal`).
    double ground_permittivity = 22;
    double ground_conductivity = 0.003;  ///< S/m
    std::string polarization = "vertical";
    std::string csv, plot;  ///< output paths, empty = not written
    /// --refraction of link as typed: one k, or a list for the plot (the first is the link's,
    /// set into the common options by the run); empty = common.refraction alone.
    std::string refraction;
};

class LinkRun final : public RunCommand {
  public:
    LinkRunOptions options;

    CommandHelp help() const override;
    OptionTable declare() override;
    const CommonOptions& common() const override { return options.common; }
    RunReport run(const RunEnv& env) override;
};

}  // namespace lookfar::run
