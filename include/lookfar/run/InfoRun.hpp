#pragma once
// lookfar info: what lookfar sees in a DEM before any engine runs (size, CRS, units, cell size,
// extent, elevations), read strip by strip in bounded memory.
#include "lookfar/run/Command.hpp"

namespace lookfar::run {

struct InfoRunOptions {
    CommonOptions common;
    bool approx = false;  ///< statistics from an overview of at least a million cells
};

class InfoRun final : public RunCommand {
  public:
    InfoRunOptions options;

    CommandHelp help() const override;
    OptionTable declare() override;
    const CommonOptions& common() const override { return options.common; }
    RunReport run(const RunEnv& env) override;
};

}  // namespace lookfar::run
