#pragma once
// lookfar horizon: the horizon of every cell in N directions (angles, distances, sky-view factor,
// dip), streamed to GeoTIFFs tile by tile over --memory; or the 360° horizon of one spot (--at)
// as a CSV, an SVG panorama and a summary.
#include "lookfar/run/Command.hpp"

namespace lookfar::run {

struct HorizonRunOptions {
    CommonOptions common;
    // Every cell.
    std::string output;    ///< -o: angles, N bands; empty = not written
    std::string distance;  ///< distances, N bands; empty = not written
    std::string svf;       ///< sky-view factor; empty = not written
    std::string dip;       ///< dip; empty = not written
    int directions = 32;
    bool directions_given = false;
    // One spot.
    std::string at;  ///< "X,Y" in --crs; empty = every cell
    double step = 1.0;
    bool step_given = false;
    std::string csv, plot;  ///< empty = not written
};

class HorizonRun final : public RunCommand {
  public:
    HorizonRunOptions options;

    CommandHelp help() const override;
    OptionTable declare() override;
    const CommonOptions& common() const override { return options.common; }
    RunReport run(const RunEnv& env) override;
};

}  // namespace lookfar::run
