// The Python module lookfar: the library's commands as functions over numpy arrays, through the
// same run classes as the CLI (docs/python.md).
#include <gdal.h>

#include <cmath>
#include <memory>
#include <string>

#include "Bridge.hpp"
#include "Commands.hpp"
#include "Args.hpp"
#include "PyDem.hpp"
#include "lookfar/Version.hpp"
#include "lookfar/core/Errors.hpp"
#include "lookfar/earth/EarthModel.hpp"
#include "lookfar/run/ViewshedRun.hpp"

namespace lookfar::python {

namespace {

/// A function's result: its arrays, the summary (a dict equal to the CLI's summary JSON) and the
/// CLI's table.
struct ViewshedResult {
    py::object visible = py::none(), count = py::none(), margin = py::none(), angle = py::none();
    py::object summary = py::none();
    std::string table;
};

ViewshedResult viewshed(const py::object& dem_arg, const py::object& observer,
                        const CommonArgs& common, const py::object& sites, const std::string& name,
                        const py::object& margin, const py::object& angle, const py::object& output,
                        bool overwrite, const py::object& progress) {
    const std::shared_ptr<PyDem> dem = demArgument(dem_arg);
    TempFolder temp;
    run::ViewshedRun command;
    OptionSetter set(command, dem->runPath());
    setCommon(set, *dem, common);
    if (!observer.is_none())
        set.set("--observer", pointText(observer, "--observer"));
    if (!sites.is_none())
        set.set("--sites", sitesCsv(sites, temp));
    if (name != "observer")
        set.set("--name", name);
    const OutputChoice out = output.is_none() ? OutputChoice{temp.file("visible.tif"), false}
                                              : outputChoice(output, temp, "visible.tif");
    const OutputChoice mar = outputChoice(margin, temp, "margin.tif");
    const OutputChoice ang = outputChoice(angle, temp, "angle.tif");
    set.output("--output", out.path, out.keep);
    if (!mar.path.empty())
        set.output("--margin", mar.path, mar.keep);
    if (!ang.path.empty())
        set.output("--angle", ang.path, ang.keep);
    if (overwrite)
        set.flag("--overwrite");
    const run::RunReport report = runCommandReleased(command, set.commandLine(), progress);
    ViewshedResult r;
    (sites.is_none() ? r.visible : r.count) = readRasterArray(out.path);
    if (!mar.path.empty())
        r.margin = readRasterArray(mar.path);
    if (!ang.path.empty())
        r.angle = readRasterArray(ang.path);
    r.summary = summaryOf(report.summary, temp, *dem);
    r.table = report.table;
    return r;
}

const char* const kCommonDoc = R"(
    observer_height: eye above the ground, metres (or a text with a unit: "30ft"); default 1.7.
    target_height: target above the ground, metres; default 0.
    reach: farthest distance considered, metres; None (the default) is unlimited.
    refraction: refraction coefficient k, -1 <= k < 1; default 0.13 (light over land; 0.25 is
        the 4/3-Earth radio value).
    earth_model: "ellipsoid" (default: radius of curvature along each sightline's azimuth),
        "sphere" (earth_radius) or "flat".
    earth_radius: radius of the sphere, metres; default 6371008.8 (the mean Earth radius); only
        with earth_model="sphere".
    crs: CRS of the coordinates given (anything PROJ reads, e.g. "EPSG:4326", x/longitude
        first); None (the default) is the DEM's.
    method: "fast" (default) or "reference" (judges every cell on its own; same result, slower).
    threads: worker threads; None (the default) uses every core.
    progress: None, or a callable progress(fraction) called on the calling thread with the
        fraction done (0 to 1, never decreasing) while the engine runs.)";

}  // namespace

}  // namespace lookfar::python

PYBIND11_MODULE(lookfar, m) {
    using namespace lookfar::python;
    namespace run = lookfar::run;
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

    py::class_<ViewshedResult>(m, "ViewshedResult", "What lookfar.viewshed returns.")
        .def_readonly("visible", &ViewshedResult::visible,
                      "uint8, rows x columns: 1 visible, 0 hidden, 255 no data (outside reach "
                      "or DEM no-data); None with sites")
        .def_readonly("count", &ViewshedResult::count,
                      "uint16: number of sites that see the cell, 65535 no data; None without "
                      "sites")
        .def_readonly("margin", &ViewshedResult::margin,
                      "float32 metres: DEM + target height minus the limiting sightline (>= 0 "
                      "visible; NaN no data); None unless margin= was given")
        .def_readonly("angle", &ViewshedResult::angle,
                      "float32 degrees: elevation angle from the eye to the target point; None "
                      "unless angle= was given")
        .def_readonly("summary", &ViewshedResult::summary,
                      "dict equal to the CLI's summary JSON (lookfar viewshed --json)")
        .def_readonly("table", &ViewshedResult::table, "the CLI's summary table, as text");

    m.def(
        "viewshed",
        [](const py::object& dem, const py::object& observer, const py::object& observer_height,
           const py::object& target_height, const py::object& reach, const py::object& refraction,
           const std::string& earth_model, const py::object& earth_radius, const py::object& crs,
           const std::string& method, const py::object& threads, const py::object& margin,
           const py::object& angle, const py::object& output, const py::object& sites,
           const std::string& name, bool overwrite, const py::object& progress) {
            const CommonArgs common{
                observer_height, target_height, reach,           refraction, py::str(earth_model),
                earth_radius,    crs,           py::str(method), threads};
            return viewshed(dem, observer, common, sites, name, margin, angle, output, overwrite,
                            progress);
        },
        py::arg("dem"), py::arg("observer") = py::none(), py::arg("observer_height") = 1.7,
        py::arg("target_height") = 0.0, py::arg("reach") = py::none(),
        py::arg("refraction") = lookfar::EarthModel::kDefaultRefraction,
        py::arg("earth_model") = "ellipsoid",
        py::arg("earth_radius") = lookfar::EarthModel::kMeanRadiusM, py::arg("crs") = py::none(),
        py::arg("method") = "fast", py::arg("threads") = py::none(), py::arg("margin") = false,
        py::arg("angle") = false, py::arg("output") = py::none(), py::arg("sites") = py::none(),
        py::arg("name") = "observer", py::arg("overwrite") = false,
        py::arg("progress") = py::none(),
        (std::string(R"(Which cells a target can be seen from (lookfar viewshed).

    dem: a path or a lookfar.Dem.
    observer: (x, y) of the observer in crs (it stands on the centre of the cell that holds it,
        on that cell's elevation); or give sites.
    sites: instead of observer, a CSV path (name,x,y[,height]) or a list of (name, x, y[,
        height]) rows (height: metres above the ground, else observer_height); the result is
        .count.
    name: the observer's name in the summary; default "observer".
    margin: True for the .margin array; a path also writes it there (Float32 GeoTIFF).
    angle: True for the .angle array (one observer); a path also writes it there.
    output: a path to write the visibility (or count) GeoTIFF too, as the CLI's -o; None keeps
        it in memory only.
    overwrite: replace existing output files (else OutputError).)") +
         kCommonDoc + R"(

Returns a ViewshedResult (.visible, .count, .margin, .angle, .summary, .table). Raises UsageError
(bad values), InputError (DEM, points, sites), OutputError (outputs), KeyboardInterrupt (Ctrl-C:
nothing written).)")
            .c_str());

    registerCommands(m);
}
