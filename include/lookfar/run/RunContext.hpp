#pragma once
// The life every command shares: validate the common options, open the DEM, check every output
// before any work, place points through PROJ, write rasters and text into temporaries, and
// rename them all together at the end (docs/architecture.md "How data flows through a run").
// Nothing here prints: progress goes to the caller's Progress sink, the summary is returned.
#include <chrono>
#include <cstdint>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "lookfar/core/Grid.hpp"
#include "lookfar/core/Progress.hpp"
#include "lookfar/earth/EarthModel.hpp"
#include "lookfar/io/Crs.hpp"
#include "lookfar/io/Dem.hpp"
#include "lookfar/io/MemoryBudget.hpp"
#include "lookfar/io/OutputSet.hpp"
#include "lookfar/io/RasterWriter.hpp"
#include "lookfar/io/SitesCsv.hpp"
#include "lookfar/io/VectorOutput.hpp"
#include "lookfar/report/Summary.hpp"
#include "lookfar/run/Format.hpp"
#include "lookfar/run/Options.hpp"
#include "lookfar/sightline/Observer.hpp"
#include "lookfar/viewshed/Viewshed.hpp"

namespace lookfar::run {

/// What the caller of a run gives it: where progress goes, and the command line for metadata.
struct RunEnv {
    Progress* progress = &silentProgress();
    std::string command_line;  ///< as typed (recorded in summaries and raster metadata)
};

/// What a finished run hands back: the summary model and its table, for the caller to show
/// (the CLI prints the JSON with --json, else the table).
struct RunReport {
    nlohmann::json summary;
    std::string table;
};

/// Everything a command needs once its options are parsed and checked.
struct RunContext {
    CommonOptions options;
    Dem dem;            ///< the cells read (the window of `window`) and their geometry
    GridGeometry grid;  ///< the whole DEM's grid: observers are placed and outputs written on it
    CellWindow window;  ///< the DEM cells held in dem.z, in cells of the whole DEM
    EarthModel earth;
    double observer_height_m = 1.7;
    double target_height_m = 0;
    double reach_m = 0;   ///< infinity = unlimited
    MemoryShares memory;  ///< --memory, shared out (GDAL's cache is set from it)
    RunDescription run;
    Progress* progress = nullptr;  ///< the caller's sink (RunEnv); never null during a run
    std::chrono::steady_clock::time_point start;
    std::vector<std::string> inputs;  ///< paths of every input (for output checks)
    /// The run's outputs, finished in temporaries and renamed together by finishRun().
    std::unique_ptr<OutputSet> outputs = std::make_unique<OutputSet>();
};

/// What an output holds, for the check of its file name's extension before any work.
enum class OutputKind {
    Any,     ///< text, CSV, JSON, SVG: any name
    Raster,  ///< a GeoTIFF: .tif or .tiff
    Vector,  ///< a GeoPackage or GeoJSON, chosen by the extension
    Folder,  ///< a folder of outputs (checkOutputFolder): made if missing, empty unless --overwrite
};

/// An output path and the option that gave it (for messages).
struct NamedPath {
    std::string option;
    std::string path;
    OutputKind kind = OutputKind::Any;
};

/// Cells whose elevations lie outside what the Earth holds (the deepest trench to above the
/// highest summit, after conversion to metres): a no-data value the file does not declare, or a
/// wrong unit. Commands say so on stderr and go on (issue 12 item 17d).
struct ImplausibleCells {
    static constexpr float kLowestPlausibleM = -12000.0f, kHighestPlausibleM = 9000.0f;
    std::int64_t count = 0;
    float first = 0;         ///< the first such elevation, metres
    int col = -1, row = -1;  ///< its cell in the whole DEM
    /// Counts the implausible cells of `width` elevations, the first at (col0, row_index).
    void scan(const float* row, int width, int col0, int row_index);
    /// The warning: "DEM: N cells hold elevations outside −12 km to +9 km (the first …)".
    std::string sentence(const std::string& dem_path) const;
};

/// When prepareRun reads the DEM's cells.
enum class DemCells {
    Whole,  ///< all of them, in prepareRun
    Later,  ///< none: the command places its observers, then calls readDemWindow
    /// None, and a south-up DEM is described rather than refused (info reads its own strips).
    Describe,
};

/// Validates the common options and the extension of every raster and vector output (exit 2 on
/// bad values), opens the DEM (exit 3), checks every
/// output path before any work — two outputs that are the same file are exit 2 naming both
/// options; an output that cannot be written is exit 4 — then reads the DEM's cells unless
/// `cells` is Later. `outputs` are the paths this run will write (empty paths are skipped);
/// --summary is added to them here.
RunContext prepareRun(const RunEnv& env, const std::string& command, const CommonOptions& options,
                      const std::vector<NamedPath>& outputs,
                      const std::vector<std::string>& extra_inputs = {},
                      DemCells cells = DemCells::Whole);

/// The DEM cells that work limited by --reach around `observers` (cells of the whole DEM) needs:
/// the smallest rectangle holding every observer's reach window with one cell of margin; the
/// whole DEM when the reach is unlimited.
CellWindow workWindow(const RunContext& ctx, const std::vector<Observer>& observers);
/// Reads the DEM cells of `window` (cells of the whole DEM) into ctx.dem (exit 3); a window
/// whose cells and results (8 bytes a cell) exceed --memory is refused first (exit 2).
void readDemWindow(RunContext& ctx, const CellWindow& window);
/// The read options of the cells of `window` (--band, --z-unit).
DemReadOptions demReadOptions(const RunContext& ctx, const CellWindow& window);
/// Records `window` as the window of work (ctx.window and the metadata), as readDemWindow does,
/// for a command that reads its cells itself (horizon's tiles).
void describeWindow(RunContext& ctx, const CellWindow& window);
/// `o` (placed on the whole DEM) in the cells of the window read.
Observer inWindow(const RunContext& ctx, Observer o);
/// Elevation of a cell of the whole DEM, which must lie in the window read.
float groundAt(const RunContext& ctx, int col, int row);

/// The CRS the run's points were given in, for metadata: --crs as typed, else the DEM's (its
/// EPSG code, or its name when it has none).
std::string coordinateCrs(const RunContext& ctx);
/// Throws InputError naming `what` and the point as given when the cell of `o` (placed on the
/// whole DEM, inside the window read) holds no data.
void requireData(const RunContext& ctx, const std::string& what, const MapPoint& given,
                 const Observer& o);

/// Parses a non-negative, finite height option (exit 2 otherwise).
double parseHeightOption(const std::string& text, const std::string& what);
/// Parses --reach: empty = unlimited, else a positive length.
double parseReachOption(const std::string& text);
/// Parses --earth-radius (1 km to 100 000 km); empty = the mean Earth radius. Refused unless
/// `earth_model` is "sphere": the other models take no radius.
double parseEarthRadiusOption(const std::string& text, const std::string& earth_model);

/// Places a point given in --crs coordinates on the DEM: the cell of the whole DEM that contains
/// it. Throws InputError when outside the DEM or, once cells are read, on no-data (naming the
/// point and the DEM; before the cells are read, call requireData after readDemWindow).
Observer placeObserver(const RunContext& ctx, const std::string& what, double x, double y,
                       double height_m, const std::string& name);
/// placeObserver for many points at once, with one PROJ transform for all of them (creating a
/// transform costs milliseconds). `what[i]` names point i in messages. When `points_dem` is given
/// it receives the points converted into the DEM's CRS.
std::vector<Observer> placeObservers(const RunContext& ctx, const std::vector<std::string>& what,
                                     const std::vector<MapPoint>& points,
                                     const std::vector<double>& heights_m,
                                     const std::vector<std::string>& names,
                                     std::vector<MapPoint>* points_dem = nullptr);
/// The rows of a sites CSV placed on the DEM.
struct PlacedSites {
    std::vector<Site> rows;            ///< as read (name, x/y as given, height, line)
    std::vector<Observer> observers;   ///< one per row; height = the row's or --observer-height
    std::vector<MapPoint> points_dem;  ///< each row's point in the DEM's CRS
    std::vector<std::string> what;     ///< each row named for messages (file, line, name)
};
/// requireData for every placed row, in order.
void requireData(const RunContext& ctx, const PlacedSites& placed);
/// Reads a sites CSV (docs/design.md) and places every row on the DEM. `role` names a row in
/// messages ("site", "station", "candidate"). A repeated name is bad input in every command,
/// naming both lines and the reason (`unique_because`, e.g. "the matrix needs unique names").
PlacedSites placeSitesCsv(const RunContext& ctx, const std::string& path, const std::string& role,
                          const std::string& unique_because = "");
/// Converts a point from --crs into the DEM's CRS (onDemLongitudes applied).
MapPoint toDemCrs(const RunContext& ctx, const MapPoint& p);
/// `p` (in the DEM's CRS) moved by whole turns of longitude onto the DEM when it lies outside a
/// geographic DEM and the same meridian is inside (a DEM across the antimeridian); else `p`.
MapPoint onDemLongitudes(const RunContext& ctx, MapPoint p);
/// Latitude (degrees) of a point given in the DEM's CRS.
double latitudeOf(const RunContext& ctx, const MapPoint& p_dem);

/// Raster spec for an output of the DEM's size, geotransform and CRS, with metadata.
RasterSpec outputSpec(const RunContext& ctx, const std::string& path, PixelType type, int bands,
                      double nodata);
/// outputSpec for a raster of the work on `window` (cells of the whole DEM) rather than the
/// window read: the whole DEM's grid with --extent dem, else `window` on the DEM's grid lines.
RasterSpec outputSpecFor(const RunContext& ctx, const CellWindow& window, const std::string& path,
                         PixelType type, int bands, double nodata);
/// True when the output rasters cover the window read only (--extent reach).
bool reachExtent(const RunContext& ctx);
/// The summary's "extent": mode, window of DEM cells read, size of the output rasters.
nlohmann::json extentJson(const RunContext& ctx);
/// Writes `data`, a grid over the window read (ctx.window), into band `band` of an output raster
/// made by outputSpec (in place on the DEM's grid, or the whole raster with --extent reach).
void writeWindowBand(const RunContext& ctx, RasterWriter& writer, int band, const void* data);
/// Writes a one-band grid over the window read (uint8_t, uint16_t or float) into its temporary
/// file; finishRun() renames it with the run's other outputs.
/// Writes the areas of `values` (cells ≥ 0; see writeAreaPolygons) as polygons to `path`
/// (.gpkg or .geojson), with columns `value_field`, `observers` (`observers` in every feature),
/// `cells` and `area_m2`; hands the file to the run's outputs and returns the summary's entry
/// (path, features, cells, area_m2).
nlohmann::json writePolygons(RunContext& ctx, const std::string& path,
                             const Grid<std::int32_t>& values, const std::string& value_field,
                             const std::string& description, const std::string& observers);

/// A count layer (`max_count` > 0) carries countPalette(max_count).
void writeGrid(const RunContext& ctx, const std::string& path, PixelType type, double nodata,
               const void* data, const std::string& description, const std::string& unit = "",
               int max_count = 0);

/// Writes the summary file (if --summary) and renames every finished output of the run into
/// place together (ctx.outputs); returns the summary (with `extent` and `elapsed_s`) and `table`
/// for the caller to show.
RunReport finishRun(RunContext& ctx, nlohmann::json summary, const std::string& table);

/// Finishes a text output in its temporary file; finishRun() renames it with the others.
void writeTextFile(const RunContext& ctx, const std::string& path, const std::string& content);

}  // namespace lookfar::run
