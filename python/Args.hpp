#pragma once
// Keyword arguments of the module's functions turned into a command's options: the common
// options, points, sites, outputs kept or in a temporary folder, and the summary handed back.
#include <string>

#include "Bridge.hpp"
#include "PyDem.hpp"

namespace lookfar::python {

/// The common options, from keyword arguments; None is "not given" (the command's default).
struct CommonArgs {
    py::object observer_height = py::none(), target_height = py::none(), reach = py::none(),
               refraction = py::none(), earth_model = py::none(), earth_radius = py::none(),
               crs = py::none(), method = py::none(), threads = py::none();
};

/// Sets the DEM's band and unit and every common option given. earth_radius is given to the run
/// only with earth_model="sphere" or when it is not the default (the CLI refuses it otherwise).
void setCommon(OptionSetter& set, const PyDem& dem, const CommonArgs& a);

/// "X,Y" of a Python pair (UsageError naming `flag` otherwise).
std::string pointText(const py::object& point, const std::string& flag);

/// Where an output goes: a path the caller gave (kept), a file `name` in the run's temporary
/// folder (True: for the array only), or nowhere (False/None: empty path).
struct OutputChoice {
    std::string path;
    bool keep = false;
};
OutputChoice outputChoice(const py::object& value, const TempFolder& temp, const std::string& name);

/// The CSV of sites (stations, candidates) a function is given: a path, or a list of
/// (name, x, y[, height]) rows written to a CSV in the run's temporary folder.
std::string sitesCsv(const py::object& sites, const TempFolder& temp);

/// The summary as a dict: outputs in the temporary folder left out, an array's DEM without path.
py::object summaryOf(nlohmann::json summary, const TempFolder& temp, const PyDem& dem);

}  // namespace lookfar::python
