#pragma once
// lookfar link: the path profile between two points, with the first Fresnel zone of a radio
// link; the run places the samples (PROJ geodesic or straight map line) and writes the profile
// CSV, the SVG plot and the summary. The profile itself is lookfar/link/PathProfile.
#include "lookfar/run/Command.hpp"

namespace lookfar::run {

struct LinkRunOptions {
    CommonOptions common;
    std::string from, to;  ///< X,Y in --crs
    std::string from_height = "1.7", to_height = "1.7";
    std::string frequency_mhz;  ///< empty = no Fresnel zone
    std::string csv, plot;      ///< output paths, empty = not written
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
