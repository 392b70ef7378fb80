#pragma once
// lookfar viewshed: which cells a target can be seen from, for one observer (--observer) or many
// sites (--sites), with optional margin and elevation-angle layers, a summary table and JSON.
#include "lookfar/run/Command.hpp"

namespace lookfar::run {

struct ViewshedRunOptions {
    CommonOptions common;
    std::string observer;  ///< "X,Y" in --crs (one observer)
    std::string name = "observer";
    std::string sites;     ///< CSV of sites (several observers)
    std::string output;    ///< -o: visibility (one observer) or count raster (sites)
    std::string margin;    ///< margin raster, empty = not written
    std::string angle;     ///< elevation-angle raster (one observer), empty = not written
    std::string polygons;  ///< visible areas as polygons (.gpkg or .geojson), empty = none
    std::string points;    ///< the observers as points with their figures, empty = none
    std::string per_site;  ///< folder of each site's own visibility raster (--sites), empty = none
};

class ViewshedRun final : public RunCommand {
  public:
    ViewshedRunOptions options;

    ViewshedRun() { options.common.extent = "dem"; }
    CommandHelp help() const override;
    OptionTable declare() override;
    const CommonOptions& common() const override { return options.common; }
    RunReport run(const RunEnv& env) override;
};

}  // namespace lookfar::run
