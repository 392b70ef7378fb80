#pragma once
// lookfar.info, viewshed, link, intervis, select and signal: each through its command's run
// class, returning its rasters as arrays, its CSVs as columns and the summary dict
// (docs/python.md).
#include "Bridge.hpp"

namespace lookfar::python {

/// Adds the functions and their Result class to the module.
void registerCommands(py::module_& m);

}  // namespace lookfar::python
