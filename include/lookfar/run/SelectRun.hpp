#pragma once
// lookfar select: choose the candidate sites that together see the most ground (or weight).
// The choice is lookfar/siting/SiteSelection (lazy greedy maximum coverage); the run reads the
// candidates and the weight raster and writes the count raster, the ranked CSV and the summary.
#include "lookfar/run/Command.hpp"

namespace lookfar::run {

struct SelectRunOptions {
    CommonOptions common;
    std::string candidates;  ///< CSV of candidate sites
    int count = 0;
    bool count_given = false;  ///< --count given (0 is refused, not "no count")
    std::string coverage;      ///< percent; empty = no coverage goal
    std::string output;        ///< -o: the count raster
    std::string csv;           ///< ranked CSV, empty = not written
    std::string weight;        ///< weight raster on the DEM's grid, empty = ground area
    std::string polygons;      ///< the chosen sites' coverage as polygons, empty = none
    std::string points;        ///< the chosen sites as points, empty = none
};

class SelectRun final : public RunCommand {
  public:
    SelectRunOptions options;

    SelectRun() { options.common.extent = "dem"; }
    CommandHelp help() const override;
    OptionTable declare() override;
    const CommonOptions& common() const override { return options.common; }
    RunReport run(const RunEnv& env) override;
};

}  // namespace lookfar::run
