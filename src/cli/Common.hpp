#pragma once
// What the subcommands share: the common options of docs/design.md, opening the DEM, placing
// points, writing rasters and summaries, progress on stderr. No math lives here.
#include <CLI/CLI.hpp>

#include <chrono>
#include <cstdint>
#include <functional>
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
#include "lookfar/io/OutputSet.hpp"
#include "lookfar/io/RasterWriter.hpp"
#include "lookfar/io/SitesCsv.hpp"
#include "lookfar/report/Summary.hpp"
#include "lookfar/viewshed/Observer.hpp"
#include "lookfar/viewshed/Viewshed.hpp"

namespace lookfar::cli {

/// A subcommand: its CLI11 app and what to run once it is parsed.
struct Command {
    CLI::App* app = nullptr;
    std::function<void()> run;
};

/// Most worker threads --threads accepts.
inline constexpr int kMaxThreads = 1024;

/// Which of the common options a subcommand takes.
enum CommonSet : unsigned {
    kGeometryOptions = 1u << 0,  ///< --refraction --earth-model --earth-radius --reach
    kHeightOptions = 1u << 1,    ///< --observer-height --target-height
    kOutputOptions = 1u << 2,    ///< --co (raster outputs)
    kMethodOption = 1u << 3,     ///< --method
    kAllCommon = 0xFFu,
};

struct CommonOptions {
    std::string dem;
    std::string crs;
    std::string observer_height = "1.7";
    std::string target_height = "0";
    std::string reach;
    double refraction = EarthModel::kDefaultRefraction;
    std::string earth_model = "ellipsoid";
    std::string earth_radius;  ///< empty: EarthModel::kMeanRadiusM; only with sphere
    std::string z_unit;
    int band = 1;
    int threads = 0;
    std::string summary;
    bool json = false;
    bool quiet = false;
    bool overwrite = false;
    std::vector<std::string> creation_options;
    std::string method = "fast";
    std::string extent;  ///< --extent: "dem" or "reach"; empty for commands without rasters
};

/// Adds the DEM positional argument and the common options to `app`.
void addCommonOptions(CLI::App* app, CommonOptions& options, unsigned which = kAllCommon);

/// Checks for numeric options, run by CLI11 on the text before conversion, so that a bad value
/// is refused in lookfar's words ("--threads: '-1' is not a whole number from 0 to 1024").
/// `note` is appended to the message, e.g. "(0: every core)".
CLI::Validator wholeNumberCheck(long long lo, long long hi, const std::string& note = "");
/// A finite decimal number from `lo` to `hi` (both included); `unit` follows the range.
CLI::Validator decimalCheck(double lo, double hi, const std::string& unit);
/// The refraction coefficient: a decimal number with −1 ≤ k < 1, with a hint when a K-factor
/// (effective radius ÷ true radius, e.g. 1.333) is typed where k is meant.
CLI::Validator refractionCheck();
/// One of `names` (the text exactly).
CLI::Validator oneOfCheck(const std::vector<std::string>& names);

/// Refuses (UsageError naming the option) a value of `app` that is not UTF-8. Options whose type
/// name is FILE are paths, taken as the bytes the system gives: they are not checked.
void checkTextOptionsAreUtf8(const CLI::App& app);

/// `j` with every string and key made valid UTF-8 (a byte that breaks UTF-8 becomes \xNN), so
/// that a path given as bytes can be echoed in JSON.
nlohmann::json jsonSafe(const nlohmann::json& j);

/// Progress on stderr: a bar on a terminal, a line every 10 % otherwise, nothing with --quiet.
class TerminalProgress final : public Progress {
  public:
    explicit TerminalProgress(bool quiet);
    ~TerminalProgress() override;
    void begin(const std::string& label, std::int64_t total) override;
    void advance(std::int64_t done) override;
    void end() override;
    bool cancelled() const override;

  private:
    bool quiet_;
    bool tty_;
    std::string label_;
    std::int64_t total_ = 0;
    int last_shown_ = -1;
    std::chrono::steady_clock::time_point start_;
    bool open_ = false;
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
    double reach_m = 0;  ///< infinity = unlimited
    RunDescription run;
    std::unique_ptr<TerminalProgress> progress;
    std::chrono::steady_clock::time_point start;
    std::vector<std::string> inputs;  ///< paths of every input (for output checks)
    /// The run's outputs, finished in temporaries and renamed together by finishSummary().
    std::unique_ptr<OutputSet> outputs = std::make_unique<OutputSet>();
};

/// An output path and the option that gave it (for messages).
struct NamedPath {
    std::string option;
    std::string path;
};

/// When prepareRun reads the DEM's cells.
enum class DemCells {
    Whole,  ///< all of them, in prepareRun
    Later,  ///< none: the command places its observers, then calls readDemWindow
};

/// Validates the common options (exit 2 on bad values), opens the DEM (exit 3), checks every
/// output path before any work — two outputs that are the same file are exit 2 naming both
/// options; an output that cannot be written is exit 4 — then reads the DEM's cells unless
/// `cells` is Later. `outputs` are the paths this run will write (empty paths are skipped);
/// --summary is added to them here.
RunContext prepareRun(const std::string& command, const CommonOptions& options,
                      const std::vector<NamedPath>& outputs,
                      const std::vector<std::string>& extra_inputs = {},
                      DemCells cells = DemCells::Whole);

/// The DEM cells that work limited by --reach around `observers` (cells of the whole DEM) needs:
/// the smallest rectangle holding every observer's reach window with one cell of margin; the
/// whole DEM when the reach is unlimited.
CellWindow workWindow(const RunContext& ctx, const std::vector<Observer>& observers);
/// Reads the DEM cells of `window` (cells of the whole DEM) into ctx.dem (exit 3).
void readDemWindow(RunContext& ctx, const CellWindow& window);
/// `o` (placed on the whole DEM) in the cells of the window read.
Observer inWindow(const RunContext& ctx, Observer o);
/// Elevation of a cell of the whole DEM, which must lie in the window read.
float groundAt(const RunContext& ctx, int col, int row);
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
/// Converts a point from --crs into the DEM's CRS.
MapPoint toDemCrs(const RunContext& ctx, const MapPoint& p);
/// Latitude (degrees) of a point given in the DEM's CRS.
double latitudeOf(const RunContext& ctx, const MapPoint& p_dem);

/// Raster spec for an output of the DEM's size, geotransform and CRS, with metadata.
RasterSpec outputSpec(const RunContext& ctx, const std::string& path, PixelType type, int bands,
                      double nodata);
/// True when the output rasters cover the window read only (--extent reach).
bool reachExtent(const RunContext& ctx);
/// The summary's "extent": mode, window of DEM cells read, size of the output rasters.
nlohmann::json extentJson(const RunContext& ctx);
/// Writes `data`, a grid over the window read (ctx.window), into band `band` of an output raster
/// made by outputSpec (in place on the DEM's grid, or the whole raster with --extent reach).
void writeWindowBand(const RunContext& ctx, RasterWriter& writer, int band, const void* data);
/// Writes a one-band grid over the window read (uint8_t, uint16_t or float) into its temporary
/// file; finishSummary() renames it with the run's other outputs.
void writeGrid(const RunContext& ctx, const std::string& path, PixelType type, double nodata,
               const void* data, const std::string& description, const std::string& unit = "");

/// Writes the summary file (if --summary), renames every finished output of the run into place
/// together (ctx.outputs), then prints either the JSON (--json) or `table`.
void finishSummary(RunContext& ctx, nlohmann::json summary, const std::string& table);

/// Finishes a text output in its temporary file; finishSummary() renames it with the others.
void writeTextFile(const RunContext& ctx, const std::string& path, const std::string& content);

/// `v` through printf's `format` (one double conversion).
std::string printfNumber(const char* format, double v);
/// The same, or "" when `v` is not finite (an empty CSV field).
std::string printfFinite(const char* format, double v);
/// `v` with 10 significant digits (%.10g), for coordinates in CSVs and tables.
std::string fmtg(double v);
/// An azimuth in [0, 360).
double wrap360(double az);

/// The command line as typed, for metadata.
std::string& commandLine();

}  // namespace lookfar::cli
