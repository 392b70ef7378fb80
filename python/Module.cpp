// The Python module lookfar: the library's commands as functions over numpy arrays, through the
// same run classes as the CLI (docs/python.md).
#include <gdal.h>

#include <string>

#include "Bridge.hpp"
#include "Commands.hpp"
#include "PyDem.hpp"
#include "lookfar/Version.hpp"

PYBIND11_MODULE(lookfar, m) {
    using namespace lookfar::python;
    GDALAllRegister();
    m.doc() =
        "lookfar: visibility, horizon and radio layers from DEMs over a curved, refracting "
        "Earth.\n\nThe functions run the same code as the lookfar command line and give the same "
        "results, as numpy arrays and a summary dict. Heights and distances are metres; "
        "coordinates are in the DEM's CRS unless crs= is given. See docs/python.md.";
    m.attr("__version__") = lookfar::kVersion;
    registerErrors(m);

    py::class_<PyDem, std::shared_ptr<PyDem>>(m, "Dem",
                                              "A DEM: elevations in metres on a north-up grid.")
        .def_static("from_array", &PyDem::fromArray, py::arg("z"), py::arg("geotransform"),
                    py::arg("crs"), py::arg("nodata") = py::none(),
                    R"(A DEM from a numpy array.

    z: elevations, metres, rows x columns (row 0 is the northern edge); any numeric dtype.
        NaN cells are no data.
    geotransform: GDAL's six terms (x origin, cell width, 0, y origin, 0, -cell height) of the
        top-left corner of the top-left cell, in the CRS's units; north-up only.
    crs: the grid's CRS, anything PROJ reads ("EPSG:32630", WKT, a PROJ string).
    nodata: a value of z that means no data (None: only NaN).)")
        .def_property_readonly("array", &PyDem::array,
                               "Elevations, metres, float32, rows x columns, NaN for no data "
                               "(read-only; read from the file on first use).")
        .def_property_readonly("geotransform", &PyDem::geotransform,
                               "GDAL's six terms of the grid (north-up).")
        .def_property_readonly("crs", &PyDem::crs, "The grid's CRS as WKT.")
        .def_property_readonly("path", &PyDem::sourcePath,
                               "The file read, or None for a DEM made from an array.")
        .def_property_readonly(
            "shape", [](const PyDem& d) { return py::make_tuple(d.height(), d.width()); },
            "(rows, columns)")
        .def("__repr__", [](const PyDem& d) {
            return "<lookfar.Dem " + std::to_string(d.width()) + " x " +
                   std::to_string(d.height()) +
                   (d.isArray() ? " from an array" : " " + d.runPath()) + ">";
        });

    m.def(
        "read_dem",
        [](const py::object& path, int band, const py::object& z_unit) {
            const std::string p = py::str(py::module_::import("os").attr("fspath")(path));
            return PyDem::open(p, band, z_unit.is_none() ? "" : z_unit.cast<std::string>());
        },
        py::arg("path"), py::arg("band") = 1, py::arg("z_unit") = py::none(),
        R"(Opens a DEM that GDAL reads, as the CLI does (its cells are read when .array is used).

    path: the file.
    band: the band of elevations, 1-based; default 1.
    z_unit: unit of the stored elevations, "m", "ft" or "us-ft"; None (the default) takes the
        band's unit type, else metres.

Raises InputError when the file is missing, not a raster, rotated or without a CRS.)");

    registerCommands(m);
}
