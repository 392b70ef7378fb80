#include "Commands.hpp"

#include <pybind11/eval.h>

#include <limits>
#include <memory>
#include <string>
#include <vector>

#include "Args.hpp"
#include "lookfar/core/Errors.hpp"
#include "lookfar/earth/EarthModel.hpp"
#include "lookfar/run/HorizonRun.hpp"
#include "lookfar/run/IntervisRun.hpp"
#include "lookfar/run/LinkRun.hpp"
#include "lookfar/run/SelectRun.hpp"
#include "lookfar/run/SignalRun.hpp"
#include "lookfar/run/ViewshedRun.hpp"
#include "lookfar/run/InfoRun.hpp"

namespace lookfar::python {

namespace {

/// What lookfar.link, intervis, select and signal return: attributes set per function.
struct Result {};

/// How an output is handed back.
enum class Kind {
    Raster,   ///< a numpy array of the raster's type
    Columns,  ///< a CSV as a dict of columns (numbers as numpy arrays, text as lists)
    File,     ///< written only where the caller asks (SVG, GeoJSON …): no attribute
    Bands,    ///< every band of a raster, bands × rows × cols (also for one band)
};

/// One output of a function: the attribute of the result, the command's option, the file name in
/// the temporary folder, and what the caller gave (a path, True, or False/None).
struct Output {
    Output(std::string attr_, std::string flag_, std::string file_, Kind kind_, py::object value_,
           bool always_ = false)
        : attr(std::move(attr_)),
          flag(std::move(flag_)),
          file(std::move(file_)),
          kind(kind_),
          value(std::move(value_)),
          always(always_) {}
    std::string attr, flag, file;
    Kind kind;
    py::object value;
    bool always;       ///< made even when not asked for (the command's main output)
    std::string path;  ///< where the run writes it, "" for none
};

/// Every band of a raster as bands × rows × cols, also when it has one band.
py::array allBands(const std::string& path) {
    py::array a = readRasterArray(path, 0);
    if (a.ndim() == 2)
        a = a.reshape({py::ssize_t(1), a.shape(0), a.shape(1)});
    return a;
}

/// The no-data value of the horizon rasters (docs/design.md).
constexpr float kHorizonNoData = -9999.0f;

/// A float32 array with `nodata` cells made NaN (None stays None).
py::object noDataAsNan(const py::object& value, float nodata) {
    if (value.is_none())
        return value;
    py::array_t<float> a = value.cast<py::array_t<float>>();
    float* p = a.mutable_data();
    for (py::ssize_t i = 0; i < a.size(); ++i)
        p[i] = p[i] == nodata ? std::numeric_limits<float>::quiet_NaN() : p[i];
    return std::move(a);
}

/// A function's run: the DEM, the command's options being set, and its outputs.
class Call {
  public:
    Call(run::RunCommand& command, const py::object& dem)
        : command_(command), dem_(demArgument(dem)), set_(command, dem_->runPath()) {}
    OptionSetter& set() { return set_; }
    const TempFolder& temp() const { return temp_; }
    const PyDem& dem() const { return *dem_; }
    void add(Output out) { outputs_.push_back(std::move(out)); }

    /// Sets the outputs, runs, and reads every output back into a Result.
    py::object run(bool overwrite, const py::object& progress) {
        for (Output& o : outputs_) {
            OutputChoice c = outputChoice(o.value, temp_, o.file);
            if (c.path.empty() && o.always)
                c = {temp_.file(o.file), false};
            if (o.kind == Kind::File && !c.path.empty() && !c.keep)
                throw UsageError(o.attr + ": give a path for this file (it has no array)");
            o.path = c.path;
            if (!c.path.empty())
                set_.output(o.flag, c.path, c.keep);
        }
        if (overwrite)
            set_.flag("--overwrite");
        const run::RunReport report = runCommandReleased(command_, set_.commandLine(), progress);
        py::object r = py::cast(Result());
        const py::object columns = py::module_::import("lookfar").attr("_csv_columns");
        for (const Output& o : outputs_) {
            if (o.kind == Kind::File)
                continue;
            py::object value = py::none();
            if (!o.path.empty() && o.kind == Kind::Bands)
                value = allBands(o.path);
            else if (!o.path.empty())
                value = o.kind == Kind::Raster ? readRasterArray(o.path) : columns(o.path);
            r.attr(o.attr.c_str()) = value;
        }
        r.attr("summary") = summaryOf(report.summary, temp_, *dem_);
        r.attr("table") = report.table;
        return r;
    }

  private:
    run::RunCommand& command_;
    std::shared_ptr<PyDem> dem_;
    TempFolder temp_;
    OptionSetter set_;
    std::vector<Output> outputs_;
};

/// The Python side of _csv_columns: a CSV as {column: values}, numbers as numpy arrays (an empty
/// field is NaN), anything else as a list of str.
const char* const kCsvColumns = R"(
def _csv_columns(path):
    import csv
    import numpy
    with open(path, newline="", encoding="utf-8") as f:
        rows = list(csv.reader(f))
    header, body = rows[0], rows[1:]
    columns = {}
    for i, name in enumerate(header):
        values = [row[i] if i < len(row) else "" for row in body]
        try:
            columns[name] = numpy.array([int(v) for v in values], dtype=numpy.int64)
            continue
        except ValueError:
            pass
        try:
            columns[name] = numpy.array([float(v) if v != "" else numpy.nan for v in values])
        except ValueError:
            columns[name] = values
    return columns
)";

const char* const kHeightDoc = R"(
    observer_height: eye above the ground, metres (or a text with a unit: "30ft"); default 1.7.
    target_height: target above the ground, metres; default 0.)";

const char* const kGeometryDoc = R"(
    reach: farthest distance considered, metres; None (the default) is unlimited.
    refraction: refraction coefficient k, -1 <= k < 1 (0.13: light over land; 0.25: the
        4/3-Earth radio value).
    earth_model: "ellipsoid" (default), "sphere" (earth_radius) or "flat".
    earth_radius: radius of the sphere, metres; default 6371008.8; only with "sphere".
    crs: CRS of the coordinates given (anything PROJ reads); None (the default) is the DEM's.
    threads: worker threads; None (the default) uses every core.
    overwrite: replace existing output files (else OutputError).
    progress: None, or a callable progress(fraction) called on the calling thread with the
        fraction done (0 to 1, never decreasing).

Raises UsageError (bad values), InputError (DEM, points, CSV rows), OutputError (outputs),
KeyboardInterrupt (Ctrl-C: nothing written).)";

py::arg_v earthRadiusArg() {
    return py::arg("earth_radius") = EarthModel::kMeanRadiusM;
}

}  // namespace

void registerCommands(py::module_& m) {
    py::exec(kCsvColumns, m.attr("__dict__"));
    py::class_<Result>(m, "Result", py::dynamic_attr(),
                       "What the functions return: arrays (or CSV columns), .summary (the CLI's "
                       "summary JSON as a dict) and .table (the CLI's summary table).")
        .def("__repr__", [](const py::object& self) {
            std::string names;
            for (const auto& item : self.attr("__dict__").cast<py::dict>())
                names += (names.empty() ? "" : ", ") + item.first.cast<std::string>();
            return "<lookfar.Result: " + names + ">";
        });

    m.def(
        "info",
        [](const py::object& dem, bool approx, const py::object& progress) {
            run::InfoRun command;
            Call call(command, dem);
            setCommon(call.set(), call.dem(), CommonArgs());
            if (approx)
                call.set().flag("--approx");
            return call.run(false, progress);
        },
        py::arg("dem"), py::arg("approx") = false, py::arg("progress") = py::none(),
        R"(What lookfar sees in a DEM (lookfar info): size, CRS, units, cell size, extent,
elevations.

    dem: a path or a lookfar.Dem.
    approx: statistics from the DEM's overview of at least a million cells, when it has
        overviews (quick on large DEMs).
    progress: None, or a callable progress(fraction).

Returns a Result: .summary (the CLI's summary JSON as a dict), .table.)");

    m.def(
        "viewshed",
        [](const py::object& dem, const py::object& observer, const py::object& observer_height,
           const py::object& target_height, const py::object& reach, const py::object& refraction,
           const py::object& earth_model, const py::object& earth_radius, const py::object& crs,
           const py::object& method, const py::object& threads, const py::object& margin,
           const py::object& angle, const py::object& output, const py::object& sites,
           const py::object& name, const py::object& polygons, const py::object& points,
           const py::object& per_site, bool overwrite, const py::object& progress) {
            run::ViewshedRun command;
            Call call(command, dem);
            const CommonArgs common{observer_height, target_height, reach,  refraction, earth_model,
                                    earth_radius,    crs,           method, threads};
            setCommon(call.set(), call.dem(), common);
            if (!observer.is_none())
                call.set().set("--observer", pointText(observer, "--observer"));
            const bool many = !sites.is_none();
            if (many)
                call.set().set("--sites", sitesCsv(sites, call.temp()));
            call.set().set("--name", name);
            call.add(Output(many ? "count" : "visible", "--output",
                            many ? "count.tif" : "visible.tif", Kind::Raster, output, true));
            call.add(Output("margin", "--margin", "margin.tif", Kind::Raster, margin));
            call.add(Output("angle", "--angle", "angle.tif", Kind::Raster, angle));
            call.add(Output("polygons", "--polygons", "polygons.gpkg", Kind::File, polygons));
            call.add(Output("points", "--points", "points.gpkg", Kind::File, points));
            call.add(Output("per_site", "--per-site", "per_site", Kind::File, per_site));
            py::object r = call.run(overwrite, progress);
            r.attr(many ? "visible" : "count") = py::none();
            return r;
        },
        py::arg("dem"), py::arg("observer") = py::none(), py::arg("observer_height") = 1.7,
        py::arg("target_height") = 0.0, py::arg("reach") = py::none(),
        py::arg("refraction") = EarthModel::kDefaultRefraction,
        py::arg("earth_model") = "ellipsoid", earthRadiusArg(), py::arg("crs") = py::none(),
        py::arg("method") = "fast", py::arg("threads") = py::none(), py::arg("margin") = false,
        py::arg("angle") = false, py::arg("output") = py::none(), py::arg("sites") = py::none(),
        py::arg("name") = "observer", py::arg("polygons") = py::none(),
        py::arg("points") = py::none(), py::arg("per_site") = py::none(),
        py::arg("overwrite") = false, py::arg("progress") = py::none(),
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
    polygons: a .gpkg or .geojson path for the visible areas as polygons.
    points: a .gpkg or .geojson path for the observer (or every site) as points with their
        figures.
    per_site: with sites, a folder for each site's own visibility GeoTIFF, named after the
        site, as the CLI's --per-site (made if missing; an existing one must be empty unless
        overwrite).
    method: "fast" (default) or "reference" (judges every cell on its own; same result,
        slower).)") +
         kHeightDoc + kGeometryDoc + R"(

Returns a Result: .visible (uint8: 1 visible, 0 hidden, 255 no data: outside reach or DEM
no-data; None with sites), .count (uint16: sites that see the cell, 65535 no data; None
without sites), .margin (float32 metres: DEM + target height minus the limiting sightline,
>= 0 visible, NaN no data; None unless asked for), .angle (float32 degrees: elevation angle
from the eye to the target point; None unless asked for), .summary, .table.)")
            .c_str());

    m.def(
        "horizon",
        [](const py::object& dem, const py::object& directions, const py::object& observer_height,
           const py::object& reach, const py::object& refraction, const py::object& earth_model,
           const py::object& earth_radius, const py::object& crs, const py::object& method,
           const py::object& threads, const py::object& distance, const py::object& svf,
           const py::object& dip, const py::object& memory, const py::object& output,
           bool overwrite, const py::object& progress) {
            run::HorizonRun command;
            Call call(command, dem);
            const CommonArgs common{observer_height, py::none(), reach,  refraction, earth_model,
                                    earth_radius,    crs,        method, threads};
            setCommon(call.set(), call.dem(), common);
            call.set().set("--directions", directions);
            call.set().set("--memory", memory);
            call.add(Output("angle", "--output", "angle.tif", Kind::Bands, output, true));
            call.add(Output("distance", "--distance", "distance.tif", Kind::Bands, distance));
            call.add(Output("svf", "--svf", "svf.tif", Kind::Raster, svf));
            call.add(Output("dip", "--dip", "dip.tif", Kind::Raster, dip));
            py::object r = call.run(overwrite, progress);
            for (const char* name : {"angle", "distance", "svf", "dip"})
                r.attr(name) = noDataAsNan(r.attr(name), kHorizonNoData);
            return r;
        },
        py::arg("dem"), py::arg("directions") = 32, py::arg("observer_height") = 1.7,
        py::arg("reach") = py::none(), py::arg("refraction") = EarthModel::kDefaultRefraction,
        py::arg("earth_model") = "ellipsoid", earthRadiusArg(), py::arg("crs") = py::none(),
        py::arg("method") = "fast", py::arg("threads") = py::none(), py::arg("distance") = false,
        py::arg("svf") = false, py::arg("dip") = false, py::arg("memory") = py::none(),
        py::arg("output") = py::none(), py::arg("overwrite") = false,
        py::arg("progress") = py::none(),
        (std::string(R"(The horizon of every cell in N directions (lookfar horizon -o).

    dem: a path or a lookfar.Dem.
    directions: N, the azimuths i*360/N degrees clockwise from grid north, 1 to 3600; default 32.
    observer_height: the eye above the ground of each cell, metres; default 1.7.
    distance: True for the .distance array; a path also writes it there (Float32 GeoTIFF).
    svf, dip: True for the .svf (sky-view factor) and .dip arrays; a path also writes it there.
    memory: the memory budget, bytes or a text such as "512M"; a DEM whose run does not fit is
        worked tile by tile (reach is then needed); None (the default) is half the physical
        memory.
    output: a path to write the angles GeoTIFF too, as the CLI's -o (-9999 for no data there).
    method: "fast" (default) or "reference" (every ray marched cell by cell; same result,
        slow).)") +
         kGeometryDoc + R"(

Returns a Result: .angle (float32, directions × rows × cols: the horizon angle at azimuth
i*360/N, degrees above the eye's local horizontal), .distance (float32, the same shape: ground
distance to the horizon-defining terrain, metres; None unless asked for), .svf (float32 rows ×
cols: 1 - mean over the directions of sin(max(angle, 0)); None unless asked for), .dip (float32
rows × cols: largest depression of the horizon below the eye's horizontal, degrees, negative
where it is above it all round; None unless asked for), .summary, .table. NaN where the
rasters hold -9999: no terrain with data in that direction within reach.)")
            .c_str());

    m.def(
        "horizon_at",
        [](const py::object& dem, const py::object& at, const py::object& step,
           const py::object& observer_height, const py::object& reach, const py::object& refraction,
           const py::object& earth_model, const py::object& earth_radius, const py::object& crs,
           const py::object& threads, const py::object& csv, const py::object& plot, bool overwrite,
           const py::object& progress) {
            run::HorizonRun command;
            Call call(command, dem);
            const CommonArgs common{observer_height, py::none(),   reach, refraction,
                                    earth_model,     earth_radius, crs,   py::none(),
                                    threads};
            setCommon(call.set(), call.dem(), common);
            call.set().set("--at", pointText(at, "--at"));
            call.set().set("--step", step);
            call.add(Output("horizon", "--csv", "horizon.csv", Kind::Columns, csv, true));
            call.add(Output("plot", "--plot", "horizon.svg", Kind::File, plot));
            py::object r = call.run(overwrite, progress);
            const py::object columns = r.attr("horizon");
            r.attr("azimuth") = columns["azimuth_deg"];
            r.attr("angle") = columns["angle_deg"];
            r.attr("distance") = columns["distance_m"];
            r.attr("edge_distance") = columns["edge_distance_m"];
            return r;
        },
        py::arg("dem"), py::arg("at"), py::arg("step") = 1.0, py::arg("observer_height") = 1.7,
        py::arg("reach") = py::none(), py::arg("refraction") = EarthModel::kDefaultRefraction,
        py::arg("earth_model") = "ellipsoid", earthRadiusArg(), py::arg("crs") = py::none(),
        py::arg("threads") = py::none(), py::arg("csv") = py::none(), py::arg("plot") = py::none(),
        py::arg("overwrite") = false, py::arg("progress") = py::none(),
        (std::string(R"(The 360° horizon of one spot (lookfar horizon --at).

    dem: a path or a lookfar.Dem.
    at: (x, y) of the spot in crs (the eye stands on the centre of the cell that holds it).
    step: the azimuth step, degrees, 0.05 to 90; default 1.
    observer_height: the eye above the ground, metres; default 1.7.
    csv: a path to write the horizon CSV too; plot: a path for the SVG panorama.)") +
         kGeometryDoc + R"(

Returns a Result: .azimuth (degrees clockwise from grid north), .angle (degrees above the eye's
horizontal) and .distance (ground distance to the horizon point, metres) as numpy arrays, one
value per direction, NaN where no terrain lies within the DEM and reach; .edge_distance (ground
distance to where the DEM ends in that direction, metres, NaN where that is beyond the reach);
.horizon (every column of the CSV: azimuth_deg, angle_deg, distance_m, x, y, elevation_m,
edge_distance_m; x, y in crs); .summary (with
the lowest and highest horizon, the open sectors, the sky-view factor and the sea-horizon dip),
.table.)")
            .c_str());

    m.def(
        "link",
        [](const py::object& dem, const py::object& from_, const py::object& to,
           const py::object& from_height, const py::object& to_height,
           const py::object& frequency_mhz, const py::object& refraction,
           const py::object& earth_model, const py::object& earth_radius, const py::object& crs,
           const py::object& threads, const py::object& csv, const py::object& plot,
           const py::object& pairs, const py::object& required_clearance,
           const py::object& ground_permittivity, const py::object& ground_conductivity,
           const py::object& polarization, bool overwrite, const py::object& progress) {
            run::LinkRun command;
            Call call(command, dem);
            const CommonArgs common{py::none(),   py::none(), py::none(), refraction, earth_model,
                                    earth_radius, crs,        py::none(), threads};
            setCommon(call.set(), call.dem(), common);
            if (!from_.is_none())
                call.set().set("--from", pointText(from_, "--from"));
            if (!to.is_none())
                call.set().set("--to", pointText(to, "--to"));
            if (pairs.is_none()) {
                call.set().set("--from-height", from_height);
                call.set().set("--to-height", to_height);
            } else {
                call.set().set(
                    "--pairs",
                    py::str(py::module_::import("os").attr("fspath")(pairs)).cast<std::string>());
            }
            call.set().set("--frequency-mhz", frequency_mhz);
            call.set().set("--required-clearance", required_clearance);
            call.set().set("--ground-permittivity", ground_permittivity);
            call.set().set("--ground-conductivity", ground_conductivity);
            call.set().set("--polarization", polarization);
            if (pairs.is_none())
                call.add(Output("profile", "--csv", "profile.csv", Kind::Columns, csv, true));
            else
                call.add(Output("links", "--csv", "links.csv", Kind::Columns, csv, true));
            call.add(Output("plot", "--plot", "profile.svg", Kind::File, plot));
            return call.run(overwrite, progress);
        },
        py::arg("dem"), py::arg("from_") = py::none(), py::arg("to") = py::none(),
        py::arg("from_height") = 1.7, py::arg("to_height") = 1.7,
        py::arg("frequency_mhz") = py::none(),
        py::arg("refraction") = EarthModel::kDefaultRefraction,
        py::arg("earth_model") = "ellipsoid", earthRadiusArg(), py::arg("crs") = py::none(),
        py::arg("threads") = py::none(), py::arg("csv") = py::none(), py::arg("plot") = py::none(),
        py::arg("pairs") = py::none(), py::arg("required_clearance") = py::none(),
        py::arg("ground_permittivity") = 22.0, py::arg("ground_conductivity") = 0.003,
        py::arg("polarization") = "vertical", py::arg("overwrite") = false,
        py::arg("progress") = py::none(),
        (std::string(R"(The path profile between two points, or many links at once (lookfar link).

    dem: a path or a lookfar.Dem.
    from_, to: (x, y) of the two ends in crs (the exact points, bilinear heights).
    from_height, to_height: antennas above the ground, metres; default 1.7.
    frequency_mhz: MHz, for the first Fresnel zone and, from 30 to 50000 MHz, the basic
        transmission loss (median prediction); None (the default) for none.
    required_clearance: a fraction of F1 (0 to 2, e.g. 0.6): the summary gives the antenna
        height each end needs, the other fixed (needs a frequency).
    ground_permittivity (default 22), ground_conductivity (S/m, default 0.003), polarization
        ("vertical" or "horizontal"): the ground for the loss (sea: 80 and 5).
    pairs: instead of from_/to and the heights, a path to a CSV of links (from_name, from_x,
        from_y, from_height, to_name, to_x, to_y, to_height, optional frequency_mhz).
    csv: a path to write the profile CSV (with pairs: one row per link) too; plot: a path for
        the SVG plot (one link).
    refraction: default 0.13; one link may take a list "0.25,-0.33" for the plot.)") +
         kGeometryDoc + R"(

Returns a Result: .profile (dict of columns: distance_m, x, y, terrain_m, earth_bulge_m,
sightline_m, clearance_m, fresnel_radius_m, fresnel_fraction) or, with pairs, .links (dict of
the columns of the links CSV, docs/link.md), .summary, .table.)")
            .c_str());

    m.def(
        "intervis",
        [](const py::object& dem, const py::object& stations, const py::object& observer_height,
           const py::object& reach, const py::object& refraction, const py::object& earth_model,
           const py::object& earth_radius, const py::object& crs, const py::object& threads,
           bool all_pairs, const py::object& output, const py::object& lines,
           const py::object& points, bool overwrite, const py::object& progress) {
            run::IntervisRun command;
            Call call(command, dem);
            const CommonArgs common{observer_height, py::none(),   reach, refraction,
                                    earth_model,     earth_radius, crs,   py::none(),
                                    threads};
            setCommon(call.set(), call.dem(), common);
            call.set().set("--stations", sitesCsv(stations, call.temp()));
            if (all_pairs)
                call.set().flag("--all-pairs");
            call.add(Output("matrix", "--output", "matrix.csv", Kind::Columns, output, true));
            call.add(Output("lines", "--lines", "lines.geojson", Kind::File, lines));
            call.add(Output("points", "--points", "points.gpkg", Kind::File, points));
            return call.run(overwrite, progress);
        },
        py::arg("dem"), py::arg("stations"), py::arg("observer_height") = 1.7,
        py::arg("reach") = py::none(), py::arg("refraction") = EarthModel::kDefaultRefraction,
        py::arg("earth_model") = "ellipsoid", earthRadiusArg(), py::arg("crs") = py::none(),
        py::arg("threads") = py::none(), py::arg("all_pairs") = false,
        py::arg("output") = py::none(), py::arg("lines") = py::none(),
        py::arg("points") = py::none(), py::arg("overwrite") = false,
        py::arg("progress") = py::none(),
        (std::string(R"(Which stations of a network see each other (lookfar intervis).

    dem: a path or a lookfar.Dem.
    stations: a CSV path (name,x,y[,height]) or a list of (name, x, y[, height]) rows.
    observer_height: height of a station above the ground where its row gives none, metres;
        default 1.7.
    all_pairs: also list the pairs beyond reach in the matrix (visible "no", margin NaN).
    output: a path to write the matrix CSV too (the CLI's -o); lines: a GeoJSON path for the
        lines of sight; points: a .gpkg or .geojson path for the stations.)") +
         kGeometryDoc + R"(

Returns a Result: .matrix (dict of the matrix CSV's columns: from, to, visible, margin_m,
distance_m, azimuth_deg, back_azimuth_deg, …), .summary, .table.)")
            .c_str());

    m.def(
        "select",
        [](const py::object& dem, const py::object& candidates, const py::object& count,
           const py::object& coverage, const py::object& weight, const py::object& observer_height,
           const py::object& target_height, const py::object& reach, const py::object& refraction,
           const py::object& earth_model, const py::object& earth_radius, const py::object& crs,
           const py::object& method, const py::object& threads, const py::object& output,
           const py::object& csv, bool overwrite, const py::object& progress) {
            run::SelectRun command;
            Call call(command, dem);
            const CommonArgs common{observer_height, target_height, reach,  refraction, earth_model,
                                    earth_radius,    crs,           method, threads};
            setCommon(call.set(), call.dem(), common);
            call.set().set("--candidates", sitesCsv(candidates, call.temp()));
            call.set().set("--count", count);
            call.set().set("--coverage", coverage);
            if (!weight.is_none())
                call.set().set("--weight",
                               py::str(py::module_::import("os").attr("fspath")(weight)));
            call.add(Output("count", "--output", "count.tif", Kind::Raster, output, true));
            call.add(Output("ranked", "--csv", "ranked.csv", Kind::Columns, csv, true));
            return call.run(overwrite, progress);
        },
        py::arg("dem"), py::arg("candidates"), py::arg("count") = py::none(),
        py::arg("coverage") = py::none(), py::arg("weight") = py::none(),
        py::arg("observer_height") = 1.7, py::arg("target_height") = 0.0,
        py::arg("reach") = py::none(), py::arg("refraction") = EarthModel::kDefaultRefraction,
        py::arg("earth_model") = "ellipsoid", earthRadiusArg(), py::arg("crs") = py::none(),
        py::arg("method") = "fast", py::arg("threads") = py::none(), py::arg("output") = py::none(),
        py::arg("csv") = py::none(), py::arg("overwrite") = false, py::arg("progress") = py::none(),
        (std::string(R"(The candidate sites that together see the most ground (lookfar select).

    dem: a path or a lookfar.Dem.
    candidates: a CSV path (name,x,y[,height]) or a list of (name, x, y[, height]) rows.
    count: choose at most this many sites; coverage: stop at this percent of the evaluated area
        (or weight); give one or both.
    weight: a raster on the DEM's grid weighting each cell (None: ground area).
    observer_height: mast above the ground where a candidate has no height, metres; default 1.7.
    target_height: target above the ground, metres; default 0.
    method: "fast" (default) or "reference".
    output: a path to write the count raster too (the CLI's -o); csv: a path for the ranked CSV.)") +
         kGeometryDoc + R"(

Returns a Result: .count (uint16: chosen sites that see the cell, 65535 no data), .ranked (dict
of the ranked CSV's columns: rank, name, x, y, marginal_area_m2, cumulative_area_m2,
cumulative_percent), .summary, .table.)")
            .c_str());

    m.def(
        "signal",
        [](const py::object& dem, const py::object& tx, const py::object& frequency_mhz,
           const py::object& tx_height, const py::object& rx_height, const py::object& name,
           const py::object& ground_permittivity, const py::object& ground_conductivity,
           const py::object& polarization, const py::object& eirp_dbm,
           const py::object& rx_gain_dbi, const py::object& min_level_dbm, const py::object& reach,
           const py::object& refraction, const py::object& earth_model,
           const py::object& earth_radius, const py::object& crs, const py::object& threads,
           const py::object& level, const py::object& served, const py::object& fresnel,
           const py::object& output, bool overwrite, const py::object& progress) {
            run::SignalRun command;
            Call call(command, dem);
            const CommonArgs common{py::none(),   py::none(), reach,      refraction, earth_model,
                                    earth_radius, crs,        py::none(), threads};
            setCommon(call.set(), call.dem(), common);
            OptionSetter& set = call.set();
            set.set("--tx", pointText(tx, "--tx"));
            set.set("--frequency-mhz", frequency_mhz);
            set.set("--tx-height", tx_height);
            set.set("--rx-height", rx_height);
            set.set("--name", name);
            set.set("--ground-permittivity", ground_permittivity);
            set.set("--ground-conductivity", ground_conductivity);
            set.set("--polarization", polarization);
            set.set("--eirp-dbm", eirp_dbm);
            set.set("--rx-gain-dbi", rx_gain_dbi);
            set.set("--min-level-dbm", min_level_dbm);
            call.add(Output("loss", "--output", "loss.tif", Kind::Raster, output, true));
            call.add(Output("level", "--level", "level.tif", Kind::Raster, level));
            call.add(Output("served", "--served", "served.tif", Kind::Raster, served));
            call.add(Output("fresnel", "--fresnel", "fresnel.tif", Kind::Raster, fresnel));
            return call.run(overwrite, progress);
        },
        py::arg("dem"), py::arg("tx"), py::arg("frequency_mhz") = py::none(),
        py::arg("tx_height") = 30.0, py::arg("rx_height") = 1.5, py::arg("name") = "transmitter",
        py::arg("ground_permittivity") = 22.0, py::arg("ground_conductivity") = 0.003,
        py::arg("polarization") = "vertical", py::arg("eirp_dbm") = py::none(),
        py::arg("rx_gain_dbi") = 0.0, py::arg("min_level_dbm") = py::none(),
        py::arg("reach") = py::none(), py::arg("refraction") = 0.25,
        py::arg("earth_model") = "ellipsoid", earthRadiusArg(), py::arg("crs") = py::none(),
        py::arg("threads") = py::none(), py::arg("level") = false, py::arg("served") = false,
        py::arg("fresnel") = false, py::arg("output") = py::none(), py::arg("overwrite") = false,
        py::arg("progress") = py::none(),
        (std::string(R"(Radio loss from a transmitter to every cell (lookfar signal).

    dem: a path or a lookfar.Dem.
    tx: (x, y) of the transmitter in crs.
    frequency_mhz: MHz, 30 to 50 000 (required).
    tx_height, rx_height: antennas above the ground, metres; defaults 30 and 1.5.
    name: the transmitter's name in the summary.
    ground_permittivity (default 22), ground_conductivity (S/m, default 0.003), polarization
        ("vertical" or "horizontal"): the ground of the smooth-Earth term.
    eirp_dbm: EIRP, dBm, for the level; rx_gain_dbi: receiver gain, dBi (default 0);
        min_level_dbm: the level that serves a cell, dBm.
    level, served, fresnel: True for the .level (dBm), .served (uint8 1/0/255) and .fresnel
        (worst clearance as a fraction of the first Fresnel zone) arrays; a path also writes it.
    output: a path to write the loss raster too (the CLI's -o).
    refraction: default 0.25 (4/3 Earth).)") +
         kGeometryDoc + R"(

Returns a Result: .loss (float32 dB, basic transmission loss), .level, .served, .fresnel (None
unless asked for), .summary, .table.)")
            .c_str());
}

}  // namespace lookfar::python
