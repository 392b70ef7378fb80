#pragma once
// The parts of every summary and every raster's metadata that all commands share
// (docs/design.md "Summary JSON": tool, version, command, dem, parameters, elapsed_s).
#include <map>
#include <string>

#include <nlohmann/json.hpp>

namespace lookfar {

/// What a run was asked to do, as reported in summaries and raster metadata.
struct RunDescription {
    std::string command;       ///< the subcommand, e.g. "viewshed"
    std::string command_line;  ///< the whole command line as typed
    std::string dem_path;
    std::string crs_name;
    std::string crs_code;  ///< "EPSG:32630" or empty
    int width = 0;
    int height = 0;
    double cell_size_m = 0;
    double refraction = 0.13;
    std::string earth_model = "ellipsoid";
    double earth_radius_m = 6371008.8;  ///< sphere radius, or the nominal radius at the DEM
    double reach_m = 0;                 ///< infinity = unlimited (null in JSON)
    double observer_height_m = 1.7;
    double target_height_m = 0;
    std::string method = "fast";
    std::map<std::string, std::string> extra;  ///< command-specific parameters (metadata)
};

/// The common top-level keys; `elapsed_s` is added by the caller at the end of the run.
nlohmann::json summaryBase(const RunDescription& run);
/// LOOKFAR_* metadata items recording the version, the command and every parameter.
std::map<std::string, std::string> rasterMetadata(const RunDescription& run);
/// JSON number, or null when not finite.
nlohmann::json finiteOrNull(double value);
/// A height for the summary, to the millimetre: a DEM cell's Float32 value (244.7 is stored as
/// 244.69999694824219) and the heights added to it are written as typed (244.7, 259.7).
double summaryMetres(double metres);

}  // namespace lookfar
