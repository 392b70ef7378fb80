#pragma once
// lookfar intervis: which stations of a network see each other. The matrix comes from
// lookfar/link/Intervisibility; the run places the stations, adds the PROJ distances and
// azimuths and writes the matrix CSV (streamed), the GeoJSON lines and the summary.
#include "lookfar/run/Command.hpp"

namespace lookfar::run {

struct IntervisRunOptions {
    CommonOptions common;
    std::string stations;  ///< CSV of stations
    std::string matrix;    ///< -o: the matrix CSV
    std::string lines;     ///< GeoJSON of the pairs that see each other, empty = not written
    std::string points;    ///< the stations as points (.gpkg or .geojson), empty = not written
    bool all_pairs = false;
    /// How the CSV's height column is read: "above-ground" (metres above the ground of the
    /// station's cell) or "absolute" (the instrument's elevation in the DEM's vertical datum).
    std::string heights = "above-ground";
};

class IntervisRun final : public RunCommand {
  public:
    IntervisRunOptions options;

    CommandHelp help() const override;
    OptionTable declare() override;
    const CommonOptions& common() const override { return options.common; }
    RunReport run(const RunEnv& env) override;
};

}  // namespace lookfar::run
