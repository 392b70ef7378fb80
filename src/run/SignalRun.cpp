// lookfar signal: one transmitter's basic transmission loss at every cell, with the received
// level, the served area and the Fresnel clearance (SignalRun.hpp). The loss is lookfar/radio's
// reference engine; this file places the transmitter, writes the rasters and the summary.
#include "lookfar/run/SignalRun.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <cstdint>
#include <fstream>
#include <iterator>
#include <limits>
#include <map>
#include <optional>
#include <sstream>
#include <string>
#include <vector>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Text.hpp"
#include "lookfar/core/Units.hpp"
#include "lookfar/io/SitesCsv.hpp"
#include "lookfar/radio/MultiSignal.hpp"
#include "lookfar/radio/Signal.hpp"
#include "lookfar/report/TextTable.hpp"

namespace lookfar::run {

namespace {

constexpr std::uint8_t kServed = 1, kNotServed = 0, kNoServed = 255;

/// An antenna height: a length above the ground, > 0 (exit 2 otherwise).
double antennaHeight(const std::string& text, const std::string& what) {
    const double h = parseLengthMetres(text, what);
    if (!(h > 0) || h > kMaxHeightAboveGroundM) {
        throw UsageError(what + ": " + fmtg(h) + " m is not an antenna height above the ground " +
                         "(more than 0, at most " + kMaxHeightAboveGroundText + ")");
    }
    return h;
}

/// Band edges of the summary: received level (dBm, from the strongest) or loss (dB).
const std::array<double, 6> kLevelEdgesDbm = {-60, -70, -80, -90, -100, -110};
const std::array<double, 6> kLossEdgesDb = {80, 100, 120, 140, 160, 180};

std::string bandLabel(const std::array<double, 6>& edges, std::size_t b, bool level) {
    const std::string unit = level ? " dBm" : " dB";
    auto num = [](double v) { return printfNumber("%g", v); };
    if (b == 0)
        return (level ? ">= " : "< ") + num(edges[0]) + unit;
    if (b == edges.size())
        return (level ? "< " : ">= ") + num(edges.back()) + unit;
    return level ? num(edges[b]) + " to " + num(edges[b - 1]) + unit
                 : num(edges[b - 1]) + " to " + num(edges[b]) + unit;
}

/// Band of a value: 0 the best (strongest level, least loss), edges.size() the worst.
std::size_t bandOf(const std::array<double, 6>& edges, double v, bool level) {
    std::size_t b = 0;
    while (b < edges.size() && (level ? v < edges[b] : v >= edges[b]))
        ++b;
    return b;
}

/// 1 where `level` reaches `min_level_dbm`, 0 below, kNoServed where it has no value.
std::vector<std::uint8_t> servedCells(const Grid<float>& level, double min_level_dbm) {
    std::vector<std::uint8_t> out;
    out.reserve(level.size());
    for (std::size_t i = 0; i < level.size(); ++i) {
        const float v = level.data()[i];
        out.push_back(std::isnan(v) ? kNoServed : v >= min_level_dbm ? kServed : kNotServed);
    }
    return out;
}

struct SignalStats {
    std::int64_t evaluated_cells = 0;
    double evaluated_area_m2 = 0;
    std::int64_t served_cells = 0;
    double served_area_m2 = 0;
    double min_loss_db = std::numeric_limits<double>::infinity();
    double max_loss_db = -std::numeric_limits<double>::infinity();
    double median_loss_db = std::numeric_limits<double>::quiet_NaN();
    std::array<double, 7> band_area_m2{};
};

SignalStats summarize(const Grid<float>& loss, const GridGeometry& g, const SignalRunOptions& s) {
    SignalStats st;
    std::vector<float> values;
    const bool level = s.eirp_given;
    const auto& edges = level ? kLevelEdgesDbm : kLossEdgesDb;
    for (int r = 0; r < loss.height(); ++r) {
        const double area = g.cellAreaM2(r);
        for (int c = 0; c < loss.width(); ++c) {
            const float l = loss(c, r);
            if (std::isnan(l))
                continue;
            ++st.evaluated_cells;
            st.evaluated_area_m2 += area;
            values.push_back(l);
            st.min_loss_db = std::min<double>(st.min_loss_db, l);
            st.max_loss_db = std::max<double>(st.max_loss_db, l);
            const double v = level ? s.eirp_dbm + s.rx_gain_dbi - l : l;
            st.band_area_m2[bandOf(edges, v, level)] += area;
            if (level && s.min_level_given && v >= s.min_level_dbm) {
                ++st.served_cells;
                st.served_area_m2 += area;
            }
        }
    }
    if (!values.empty()) {
        const std::size_t mid = values.size() / 2;
        std::nth_element(values.begin(), values.begin() + mid, values.end());
        st.median_loss_db = values[mid];
    }
    return st;
}

/// The figures of the strongest level of several transmitters (no loss figures: each cell's
/// loss is from its own best server).
SignalStats summarizeLevel(const Grid<float>& level_dbm, const GridGeometry& g,
                           const SignalRunOptions& s) {
    SignalStats st;
    for (int r = 0; r < level_dbm.height(); ++r) {
        const double area = g.cellAreaM2(r);
        for (int c = 0; c < level_dbm.width(); ++c) {
            const float v = level_dbm(c, r);
            if (std::isnan(v))
                continue;
            ++st.evaluated_cells;
            st.evaluated_area_m2 += area;
            st.band_area_m2[bandOf(kLevelEdgesDbm, v, true)] += area;
            if (s.min_level_given && v >= s.min_level_dbm) {
                ++st.served_cells;
                st.served_area_m2 += area;
            }
        }
    }
    return st;
}

/// The summary's "coverage" object: the evaluated and served areas and the area by band.
nlohmann::json coverageJson(const SignalStats& st, const SignalRunOptions& s, bool level) {
    const auto& edges = level ? kLevelEdgesDbm : kLossEdgesDb;
    nlohmann::json bands = nlohmann::json::object();
    for (std::size_t b = 0; b <= edges.size(); ++b)
        bands[bandLabel(edges, b, level)] = st.band_area_m2[b];
    nlohmann::json c = {{"evaluated_cells", st.evaluated_cells},
                        {"evaluated_area_m2", st.evaluated_area_m2},
                        {level ? "area_by_level_m2" : "area_by_loss_m2", bands}};
    if (s.min_level_given) {
        c["served_cells"] = st.served_cells;
        c["served_area_m2"] = st.served_area_m2;
        c["served_fraction"] =
            st.evaluated_area_m2 > 0 ? st.served_area_m2 / st.evaluated_area_m2 : 0.0;
    }
    return c;
}

/// The summary's "outputs" object: the rasters written.
nlohmann::json outputsJson(const SignalRunOptions& s) {
    nlohmann::json o = {{"loss", s.output}};
    for (const auto& [key, path] : {std::pair<const char*, const std::string&>{"level", s.level},
                                    {"best", s.best},
                                    {"served", s.served},
                                    {"fresnel", s.fresnel}}) {
        if (!path.empty())
            o[key] = path;
    }
    return o;
}

/// The optional radio columns of a sites CSV, per data row (by line).
struct RadioColumns {
    std::optional<double> frequency_mhz, eirp_dbm, azimuth_deg, beamwidth_deg, tilt_deg, gain_dbi;
};

/// Reads the radio columns of `path` (the rows readSitesCsv reads), refusing a value that is not
/// a finite decimal or is out of range, naming the file, line and column (exit 3).
std::map<int, RadioColumns> readRadioColumns(const std::string& path) {
    std::ifstream f(path, std::ios::binary);
    std::ostringstream text;
    text << f.rdbuf();
    const std::vector<CsvRecord> records = parseCsvRecords(text.str(), path);
    std::map<int, RadioColumns> out;
    if (records.empty())
        return out;
    struct Column {
        const char* name;
        std::optional<double> RadioColumns::*field;
        double lo, hi;
        const char* unit;
    };
    const Column columns[] = {
        {"frequency_mhz", &RadioColumns::frequency_mhz, kMinFrequencyMhz, kMaxFrequencyMhz, "MHz"},
        {"eirp_dbm", &RadioColumns::eirp_dbm, -100, 200, "dBm"},
        {"azimuth_deg", &RadioColumns::azimuth_deg, -360, 360, "degrees"},
        {"beamwidth_deg", &RadioColumns::beamwidth_deg, 1, 360, "degrees"},
        {"tilt_deg", &RadioColumns::tilt_deg, -90, 90, "degrees"},
        {"gain_dbi", &RadioColumns::gain_dbi, -20, 60, "dBi"}};
    std::vector<int> index(std::size(columns), -1);
    const std::vector<std::string>& header = records.front().fields;
    for (std::size_t k = 0; k < std::size(columns); ++k) {
        for (std::size_t i = 0; i < header.size(); ++i) {
            if (trim(header[i]) == columns[k].name)
                index[k] = static_cast<int>(i);
        }
    }
    for (std::size_t r = 1; r < records.size(); ++r) {
        RadioColumns row;
        for (std::size_t k = 0; k < std::size(columns); ++k) {
            if (index[k] < 0 || index[k] >= static_cast<int>(records[r].fields.size()))
                continue;
            const std::string field = trim(records[r].fields[index[k]]);
            if (field.empty())
                continue;  // this row takes the default
            const auto v = parseDecimal(field);
            if (!v || !(*v >= columns[k].lo && *v <= columns[k].hi)) {
                throw InputError(path + ", line " + std::to_string(records[r].line) + ": " +
                                 columns[k].name + " '" + echoText(field) +
                                 "' is not a number from " + printfNumber("%g", columns[k].lo) +
                                 " to " + printfNumber("%g", columns[k].hi) + " " +
                                 columns[k].unit);
            }
            row.*columns[k].field = *v;
        }
        out[records[r].line] = row;
    }
    return out;
}

/// The options both forms share, checked (exit 2): the antenna heights and the ground.
struct RadioCommon {
    double tx_h = 0, rx_h = 0;
    Polarization polarization = Polarization::Vertical;
    RadioParams ground;  ///< permittivity, conductivity, polarization; the frequency from --tx's
};

RadioCommon checkRadioOptions(const SignalRunOptions& s) {
    RadioCommon c;
    c.tx_h = antennaHeight(s.tx_height, "--tx-height");
    c.rx_h = antennaHeight(s.rx_height, "--rx-height");
    c.polarization = parsePolarization(s.polarization);
    c.ground.ground_permittivity = s.ground_permittivity;
    c.ground.ground_conductivity_s_m = s.ground_conductivity;
    c.ground.polarization = c.polarization;
    return c;
}

/// What the rasters' metadata records of the receiver, the ground and the method in both forms.
void describeRadio(RunDescription& run, RunContext& ctx, const SignalRunOptions& s,
                   const RadioCommon& c) {
    run.observer_height_m = c.tx_h;
    run.target_height_m = c.rx_h;
    run.method = "reference";
    run.extra["COORDINATE_CRS"] = coordinateCrs(ctx);
    run.extra["RX_HEIGHT_M"] = fmtg(c.rx_h);
    run.extra["GROUND_PERMITTIVITY"] = fmtg(s.ground_permittivity);
    run.extra["GROUND_CONDUCTIVITY_S_M"] = fmtg(s.ground_conductivity);
    run.extra["POLARIZATION"] = toString(c.polarization);
    run.extra["PROPAGATION_METHOD"] =
        "ITU-R P.525 free space over the slant distance + ITU-R P.526-15 4.5 delta-Bullington";
    run.extra["RX_GAIN_DBI"] = fmtg(s.rx_gain_dbi);
    if (s.min_level_given)
        run.extra["MIN_LEVEL_DBM"] = fmtg(s.min_level_dbm);
}

/// The summary's "radio" object, in both forms (the frequency and the power are added by the
/// form of one transmitter).
nlohmann::json radioJson(const SignalRunOptions& s, const RadioCommon& c) {
    return {
        {"rx_height_m", c.rx_h},
        {"ground_permittivity", s.ground_permittivity},
        {"ground_conductivity_s_m", s.ground_conductivity},
        {"polarization", toString(c.polarization)},
        {"rx_gain_dbi", s.rx_gain_dbi},
        {"min_level_dbm", s.min_level_given ? nlohmann::json(s.min_level_dbm) : nlohmann::json()},
        {"method", "ITU-R P.525 + ITU-R P.526-15 4.5 delta-Bullington (reference)"}};
}

/// The table of the area by band, with each band's share of the evaluated area.
std::string bandTable(const std::string& title, const char* column,
                      const std::array<double, 6>& edges, const std::array<double, 7>& area,
                      double evaluated_area, bool level) {
    TextTable b(title);
    b.setHeader({column, "area", "share of the evaluated area"});
    for (std::size_t k = 0; k <= edges.size(); ++k) {
        b.addRow(
            {bandLabel(edges, k, level), formatArea(area[k]),
             evaluated_area > 0 ? formatNumber(100.0 * area[k] / evaluated_area, 2) + " %" : "-"});
    }
    return b.render();
}

/// The sites of the CSV with their radio columns, or the options' defaults (exit 3 naming the
/// line for a height, a frequency or a power missing).
std::vector<SignalSite> signalSites(const SignalRunOptions& s, const PlacedSites& placed) {
    const std::map<int, RadioColumns> radio = readRadioColumns(s.sites);
    std::vector<SignalSite> sites;
    for (std::size_t i = 0; i < placed.rows.size(); ++i) {
        const Site& row = placed.rows[i];
        const std::string where = s.sites + ", line " + std::to_string(row.line);
        const auto it = radio.find(row.line);
        const RadioColumns cols = it == radio.end() ? RadioColumns{} : it->second;
        SignalSite site;
        site.transmitter = placed.observers[i];
        if (!(site.transmitter.height_m > 0)) {
            throw InputError(where + ": the height of transmitter '" + echoText(row.name) +
                             "' must be above the ground (more than 0 m)");
        }
        const std::optional<double> f =
            cols.frequency_mhz
                ? cols.frequency_mhz
                : (s.frequency_given ? std::optional<double>(s.frequency_mhz) : std::nullopt);
        const std::optional<double> p =
            cols.eirp_dbm ? cols.eirp_dbm
                          : (s.eirp_given ? std::optional<double>(s.eirp_dbm) : std::nullopt);
        if (!f) {
            throw InputError(where + ": transmitter '" + echoText(row.name) +
                             "' has no frequency_mhz and no --frequency-mhz is given");
        }
        if (!p) {
            throw InputError(where + ": transmitter '" + echoText(row.name) +
                             "' has no eirp_dbm and no --eirp-dbm is given: levels of several "
                             "transmitters need their powers");
        }
        site.frequency_mhz = *f;
        site.eirp_dbm = *p;
        if (cols.beamwidth_deg) {
            site.pattern.beamwidth_deg = *cols.beamwidth_deg;
            site.pattern.azimuth_deg = cols.azimuth_deg.value_or(0.0);
            if (cols.gain_dbi)
                site.pattern.vertical_beamwidth_deg =
                    verticalBeamwidthDeg(*cols.gain_dbi, *cols.beamwidth_deg);
        }
        site.pattern.tilt_deg = cols.tilt_deg.value_or(0.0);
        sites.push_back(site);
    }
    return sites;
}

/// The rasters of several transmitters, each to its temporary file.
void writeSitesRasters(RunContext& ctx, const SignalRunOptions& s, const MultiSignalResult& res,
                       std::size_t count) {
    const float nan = std::numeric_limits<float>::quiet_NaN();
    writeGrid(ctx, s.output, PixelType::Float32, nan, res.loss_db.data(),
              "basic transmission loss from the best server of " + std::to_string(count) +
                  " transmitters, dB (median prediction; NaN no data or beyond reach)",
              "dB");
    if (!s.level.empty()) {
        writeGrid(ctx, s.level, PixelType::Float32, nan, res.level_dbm.data(),
                  "strongest received level of " + std::to_string(count) +
                      " transmitters, dBm (receiver gain " + fmtg(s.rx_gain_dbi) +
                      " dBi, median prediction)",
                  "dBm");
    }
    if (!s.best.empty()) {
        writeGrid(ctx, s.best, PixelType::UInt16, kNoServer, res.best.data(),
                  "best server: 0-based row of " + s.sites +
                      " giving the strongest level, "
                      "65535 none");
    }
    if (!s.served.empty()) {
        const std::vector<std::uint8_t> served = servedCells(res.level_dbm, s.min_level_dbm);
        writeGrid(ctx, s.served, PixelType::Byte, kNoServed, served.data(),
                  "served by any transmitter: 1 strongest level >= " + fmtg(s.min_level_dbm) +
                      " dBm, 0 below, 255 no data or beyond reach");
    }
}

/// The summary of several transmitters: per site what it serves alone and where it is the best
/// server, and the area by strongest level.
RunReport finishSites(RunContext& ctx, const SignalRunOptions& s, const PlacedSites& placed,
                      const std::vector<SignalSite>& sites, const MultiSignalResult& res,
                      const RadioCommon& rc) {
    const SignalStats st = summarizeLevel(res.level_dbm, ctx.dem.geometry, s);
    nlohmann::json j = summaryBase(ctx.run);
    j["outputs"] = outputsJson(s);
    nlohmann::json list = nlohmann::json::array();
    TextTable t("Signal from " + std::to_string(sites.size()) + " transmitters on " + ctx.dem.path);
    t.setHeader({"transmitter", "height", "frequency", "EIRP", "best-server area",
                 s.min_level_given ? "served alone" : "-"});
    for (std::size_t i = 0; i < sites.size(); ++i) {
        const SignalSite& site = sites[i];
        nlohmann::json e = {{"index", i},
                            {"name", site.transmitter.name},
                            {"x", placed.rows[i].x},
                            {"y", placed.rows[i].y},
                            {"height_m", site.transmitter.height_m},
                            {"frequency_mhz", site.frequency_mhz},
                            {"eirp_dbm", site.eirp_dbm},
                            {"best_server_area_m2", res.best_area_m2[i]}};
        if (std::isfinite(site.pattern.beamwidth_deg)) {
            e["azimuth_deg"] = site.pattern.azimuth_deg;
            e["beamwidth_deg"] = site.pattern.beamwidth_deg;
            e["vertical_beamwidth_deg"] = finiteOrNull(site.pattern.vertical_beamwidth_deg);
        }
        e["tilt_deg"] = site.pattern.tilt_deg;
        if (s.min_level_given) {
            e["served_cells"] = res.served_cells[i];
            e["served_area_m2"] = res.served_area_m2[i];
        }
        list.push_back(e);
        t.addRow({site.transmitter.name, formatNumber(site.transmitter.height_m, 1) + " m",
                  fmtg(site.frequency_mhz) + " MHz", fmtg(site.eirp_dbm) + " dBm",
                  formatArea(res.best_area_m2[i]),
                  s.min_level_given ? formatArea(res.served_area_m2[i]) : "-"});
    }
    j["transmitters"] = list;
    j["radio"] = radioJson(s, rc);
    j["coverage"] = coverageJson(st, s, true);
    std::string table = t.render() + "\n" +
                        bandTable("Area by strongest received level", "level", kLevelEdgesDbm,
                                  st.band_area_m2, st.evaluated_area_m2, true) +
                        "\n";
    if (s.min_level_given) {
        table += "Served by any transmitter: " + formatArea(st.served_area_m2) +
                 " where the level reaches " + fmtg(s.min_level_dbm) + " dBm\n";
    }
    return finishRun(ctx, j, table);
}

RunReport runSignalSites(const RunEnv& env, const SignalRunOptions& s) {
    if (!s.fresnel.empty())
        throw UsageError("--fresnel needs a single transmitter (--tx)");
    if (!s.served.empty() && !s.min_level_given)
        throw UsageError("--served needs --min-level-dbm: the level that serves");
    const RadioCommon rc = checkRadioOptions(s);
    const double tx_h = rc.tx_h, rx_h = rc.rx_h;
    MultiSignalOptions opt;
    opt.ground = rc.ground;
    opt.rx_height_m = rx_h;
    opt.rx_gain_dbi = s.rx_gain_dbi;
    if (s.min_level_given)
        opt.min_level_dbm = s.min_level_dbm;

    const std::vector<NamedPath> outputs = {{"-o", s.output, OutputKind::Raster},
                                            {"--level", s.level, OutputKind::Raster},
                                            {"--served", s.served, OutputKind::Raster},
                                            {"--best", s.best, OutputKind::Raster}};
    RunContext ctx = prepareRun(env, "signal", s.common, outputs, {s.sites}, DemCells::Later);
    ctx.observer_height_m = tx_h;  // the height of rows without one
    const PlacedSites placed = placeSitesCsv(ctx, s.sites, "transmitter");
    std::vector<SignalSite> sites = signalSites(s, placed);
    readDemWindow(ctx, workWindow(ctx, placed.observers));
    requireData(ctx, placed);
    opt.reach_m = ctx.reach_m;
    for (SignalSite& site : sites)
        site.transmitter = inWindow(ctx, site.transmitter);
    const GridGeometry& g = ctx.dem.geometry;

    RunDescription& run = ctx.run;
    describeRadio(run, ctx, s, rc);
    run.extra["SITES"] = s.sites;
    run.extra["SITE_COUNT"] = std::to_string(sites.size());
    run.extra["ANTENNA_PATTERN"] =
        "-min(12(phi/phi3)^2 + 12((theta+tilt)/theta3)^2, 25) dB, theta3 by ITU-R F.1336";

    MultiSignalResult res = multiSignal(ctx.dem.z, g, ctx.earth, sites, opt, *ctx.progress);
    ctx.dem.z = Grid<float>();
    writeSitesRasters(ctx, s, res, sites.size());
    return finishSites(ctx, s, placed, sites, res, rc);
}

/// The rasters of one transmitter `name`, each to its temporary file.
void writeOneRasters(RunContext& ctx, const SignalRunOptions& s, const SignalGrids& grids,
                     const std::string& name) {
    const float nan = std::numeric_limits<float>::quiet_NaN();
    const std::string freq = fmtg(s.frequency_mhz) + " MHz";
    writeGrid(ctx, s.output, PixelType::Float32, nan, grids.loss_db.data(),
              "basic transmission loss from " + name + " at " + freq +
                  ", dB (median prediction; NaN no data or beyond reach)",
              "dB");
    if (s.eirp_given && (!s.level.empty() || !s.served.empty())) {
        const double budget = s.eirp_dbm + s.rx_gain_dbi;
        Grid<float> level(grids.loss_db.width(), grids.loss_db.height(), nan);
        for (std::size_t i = 0; i < level.size(); ++i)
            level.data()[i] = static_cast<float>(budget - grids.loss_db.data()[i]);
        if (!s.served.empty()) {
            const std::vector<std::uint8_t> served = servedCells(level, s.min_level_dbm);
            writeGrid(ctx, s.served, PixelType::Byte, kNoServed, served.data(),
                      "served by " + name + ": 1 level >= " + fmtg(s.min_level_dbm) +
                          " dBm, 0 below, 255 no data or beyond reach");
        }
        if (!s.level.empty()) {
            writeGrid(ctx, s.level, PixelType::Float32, nan, level.data(),
                      "received level from " + name + ", dBm (EIRP " + fmtg(s.eirp_dbm) +
                          " dBm, receiver gain " + fmtg(s.rx_gain_dbi) + " dBi, median prediction)",
                      "dBm");
        }
    }
    if (!s.fresnel.empty()) {
        writeGrid(ctx, s.fresnel, PixelType::Float32, nan, grids.fresnel.data(),
                  "worst clearance of the path in first Fresnel zone radii at " + freq +
                      " (negative: blocked; 0.6 the usual fixed-link criterion; NaN no terrain "
                      "between, no data or beyond reach)");
    }
}

}  // namespace

CommandHelp SignalRun::help() const {
    return {"signal",
            "basic transmission loss from a transmitter to every cell (ITU-R free space + "
            "delta-Bullington diffraction), with received level, served area and Fresnel "
            "clearance",
            "\nMethod: free-space loss (ITU-R P.525) over the slant distance plus diffraction by "
            "the\n  delta-Bullington method of ITU-R P.526-15 4.5: Bullington's construction over "
            "the\n  terrain, plus the spherical-Earth loss (P.526 3.2) of the smooth-Earth "
            "effective\n  heights, minus Bullington over that smooth profile, when positive. The "
            "profile to a\n  cell is the sightline rule's terrain samples; antennas stand above "
            "the ground of the\n  two cells. No clutter, atmospheric absorption, tropospheric "
            "scatter or time\n  variability: a median, clear-air prediction. One engine "
            "(reference): every cell's\n  profile on its own, O(distance) per cell; the same "
            "result for any --threads.\nSites: with --sites each transmitter's level is EIRP + "
            "antenna pattern + receiver gain\n  - loss, the pattern -min(12(phi/phi3)^2 + "
            "12((theta+tilt)/theta3)^2, 25) dB (ITU-R\n  F.1336 form); -o is the loss from the "
            "best server, --level the strongest level.\nSummary: evaluated area, least, median and "
            "greatest loss, "
            "the area by loss band (or by\n  received level band with --eirp-dbm) and the served "
            "area with --min-level-dbm.\nCaution: signal layers are median predictions for "
            "planning, not licensed coverage.\n  DEMs omit buildings and vegetation; where a "
            "regulator prescribes its own method,\n  that method and licensed radio engineering "
            "prevail.\n"};
}

OptionTable SignalRun::declare() {
    SignalRunOptions& s = options;
    OptionTable t = commonOptions(s.common, kGeometryOptions | kOutputOptions);
    findOption(t, "--refraction").help =
        "refraction coefficient k, -1 <= k < 1; 0.25 (the 4/3 Earth of radio) for this command";
    t.push_back(OptionDecl("--tx", &s.tx,
                           "transmitter position X,Y in --crs (the antenna stands on the centre "
                           "of the cell that holds it)",
                           "Transmitter")
                    .excluding("--sites"));
    t.push_back(OptionDecl("--sites", &s.sites,
                           "CSV of transmitters (RFC 4180, UTF-8): name,x,y and optional height, "
                           "frequency_mhz, eirp_dbm, azimuth_deg, beamwidth_deg, tilt_deg, "
                           "gain_dbi",
                           "Transmitter")
                    .fileType());
    t.push_back(
        OptionDecl("--name", &s.name, "name of the transmitter in the summary", "Transmitter")
            .showDefault());
    t.push_back(OptionDecl("--tx-height", &s.tx_height,
                           "transmitting antenna above the ground, metres (> 0; suffix m, ft, "
                           "us-ft)",
                           "Transmitter")
                    .showDefault());
    t.push_back(OptionDecl("--rx-height", &s.rx_height,
                           "receiving antenna above the ground of each cell, metres (> 0)",
                           "Receiver")
                    .showDefault());
    t.push_back(
        OptionDecl("--frequency-mhz", &s.frequency_mhz,
                   "frequency, MHz, 30 to 50000 (where the method applies); with --sites for "
                   "the rows without frequency_mhz",
                   "Radio")
            .inUnit("MHz")
            .checkedBy(decimalCheck(kMinFrequencyMhz, kMaxFrequencyMhz, "MHz"))
            .noteGiven(&s.frequency_given));
    addGroundOptions(t, &s.ground_permittivity, &s.ground_conductivity, &s.polarization);
    t.push_back(OptionDecl("--eirp-dbm", &s.eirp_dbm,
                           "effective isotropic radiated power, dBm (-100 to 200), for --level "
                           "and --served",
                           "Radio")
                    .inUnit("dBm")
                    .checkedBy(decimalCheck(-100, 200, "dBm"))
                    .noteGiven(&s.eirp_given));
    t.push_back(OptionDecl("--rx-gain-dbi", &s.rx_gain_dbi,
                           "receiving antenna gain, dBi (-50 to 100)", "Radio")
                    .inUnit("dBi")
                    .showDefault()
                    .checkedBy(decimalCheck(-50, 100, "dBi")));
    t.push_back(OptionDecl("--min-level-dbm", &s.min_level_dbm,
                           "received level that serves a cell, dBm (-300 to 100; needs "
                           "--eirp-dbm)",
                           "Radio")
                    .inUnit("dBm")
                    .checkedBy(decimalCheck(-300, 100, "dBm"))
                    .noteGiven(&s.min_level_given));
    t.push_back(OptionDecl("-o,--output", &s.output,
                           "Float32 raster of the basic transmission loss, dB (NaN no data)",
                           "Output")
                    .fileType()
                    .mandatory());
    t.push_back(OptionDecl("--level", &s.level,
                           "Float32 raster of the received level, dBm: EIRP + receiver gain - "
                           "loss",
                           "Output")
                    .fileType());
    t.push_back(OptionDecl("--served", &s.served,
                           "Byte raster: 1 where the level reaches --min-level-dbm, 0 below, "
                           "255 no data",
                           "Output")
                    .fileType());
    t.push_back(OptionDecl("--best", &s.best,
                           "with --sites: UInt16 raster of the best server, the 0-based data row "
                           "of the CSV (65535 none)",
                           "Output")
                    .fileType());
    t.push_back(OptionDecl("--fresnel", &s.fresnel,
                           "Float32 raster of the worst clearance over the path in first Fresnel "
                           "zone radii (negative when blocked; 0.6 the usual fixed-link "
                           "criterion)",
                           "Output")
                    .fileType());
    return t;
}

RunReport SignalRun::run(const RunEnv& env) {
    const SignalRunOptions& s = options;
    if (s.tx.empty() == s.sites.empty())
        throw UsageError("give either --tx X,Y (one transmitter) or --sites FILE (several)");
    if (!s.sites.empty())
        return runSignalSites(env, s);
    if (!s.best.empty())
        throw UsageError("--best needs --sites: a best server among several transmitters");
    // Every check of the options first (exit 2), before any file is touched.
    if (!s.frequency_given)
        throw UsageError("--frequency-mhz is required with --tx (30 to 50000 MHz)");
    if (s.min_level_given && !s.eirp_given)
        throw UsageError("--min-level-dbm needs --eirp-dbm: a level needs the transmitted power");
    if (!s.level.empty() && !s.eirp_given)
        throw UsageError("--level needs --eirp-dbm: a level needs the transmitted power");
    if (!s.served.empty() && !s.min_level_given)
        throw UsageError("--served needs --min-level-dbm (and --eirp-dbm): the level that serves");
    const RadioCommon rc = checkRadioOptions(s);
    const double tx_h = rc.tx_h, rx_h = rc.rx_h;
    SignalOptions opt;
    opt.radio = rc.ground;
    opt.radio.frequency_mhz = s.frequency_mhz;
    validateRadioParams(opt.radio);
    opt.rx_height_m = rx_h;
    opt.want_fresnel = !s.fresnel.empty();
    const MapPoint given = parsePoint(s.tx, "--tx");

    const std::vector<NamedPath> outputs = {{"-o", s.output, OutputKind::Raster},
                                            {"--level", s.level, OutputKind::Raster},
                                            {"--served", s.served, OutputKind::Raster},
                                            {"--fresnel", s.fresnel, OutputKind::Raster}};
    RunContext ctx = prepareRun(env, "signal", s.common, outputs, {}, DemCells::Later);
    const Observer tx = placeObserver(ctx, "--tx", given.x, given.y, tx_h, s.name);
    readDemWindow(ctx, workWindow(ctx, {tx}));
    requireData(ctx, "--tx", given, tx);
    const double ground = groundAt(ctx, tx.col, tx.row);
    const GridGeometry& g = ctx.dem.geometry;
    opt.reach_m = ctx.reach_m;

    RunDescription& run = ctx.run;
    describeRadio(run, ctx, s, rc);
    run.extra["TRANSMITTER"] = tx.name;
    run.extra["TRANSMITTER_XY"] = fmtg(given.x) + "," + fmtg(given.y);
    run.extra["TRANSMITTER_CELL"] = std::to_string(tx.col) + "," + std::to_string(tx.row);
    run.extra["TRANSMITTER_GROUND_M"] = printfNumber("%.3f", ground);
    run.extra["TX_HEIGHT_M"] = fmtg(tx_h);
    run.extra["FREQUENCY_MHZ"] = fmtg(s.frequency_mhz);
    if (s.eirp_given)
        run.extra["EIRP_DBM"] = fmtg(s.eirp_dbm);

    const Observer tx_in = inWindow(ctx, tx);
    SignalGrids grids = referenceSignal(ctx.dem.z, g, ctx.earth, tx_in, opt, *ctx.progress);
    ctx.dem.z = Grid<float>();  // the elevations are no longer needed
    const SignalStats st = summarize(grids.loss_db, g, s);

    writeOneRasters(ctx, s, grids, tx.name);
    const std::string freq = fmtg(s.frequency_mhz) + " MHz";
    nlohmann::json j = summaryBase(run);
    j["outputs"] = outputsJson(s);
    const double eff_radius = ctx.earth.shape() == EarthShape::Flat
                                  ? std::numeric_limits<double>::infinity()
                                  : run.earth_radius_m / (1.0 - run.refraction);
    j["transmitter"] = {{"name", tx.name},  {"x", given.x},
                        {"y", given.y},     {"col", tx.col},
                        {"row", tx.row},    {"ground_m", summaryMetres(ground)},
                        {"height_m", tx_h}, {"antenna_m", summaryMetres(ground + tx_h)}};
    j["radio"] = radioJson(s, rc);
    j["radio"]["frequency_mhz"] = s.frequency_mhz;
    j["radio"]["effective_earth_radius_m"] = finiteOrNull(eff_radius);
    j["radio"]["eirp_dbm"] = s.eirp_given ? nlohmann::json(s.eirp_dbm) : nlohmann::json();
    const bool level = s.eirp_given;
    const auto& edges = level ? kLevelEdgesDbm : kLossEdgesDb;
    j["coverage"] = coverageJson(st, s, level);
    j["coverage"]["min_loss_db"] = finiteOrNull(st.min_loss_db);
    j["coverage"]["median_loss_db"] = finiteOrNull(st.median_loss_db);
    j["coverage"]["max_loss_db"] = finiteOrNull(st.max_loss_db);

    TextTable t("Signal from " + tx.name + " on " + ctx.dem.path);
    t.add("transmitter", fmtg(given.x) + ", " + fmtg(given.y) + " (cell " + std::to_string(tx.col) +
                             ", " + std::to_string(tx.row) + "), " + formatNumber(tx_h, 1) +
                             " m above " + formatNumber(ground, 1) + " m ground");
    t.add("receiver", formatNumber(rx_h, 2) + " m above the ground of each cell");
    t.add("radio", freq + ", " + toString(opt.radio.polarization) + ", ground eps_r " +
                       fmtg(s.ground_permittivity) + ", sigma " + fmtg(s.ground_conductivity) +
                       " S/m");
    t.add(
        "earth",
        run.earth_model + ", refraction k = " + fmtg(run.refraction) +
            (std::isfinite(eff_radius) ? ", effective radius " + formatDistance(eff_radius) : ""));
    t.add("reach", std::isfinite(ctx.reach_m) ? formatDistance(ctx.reach_m) : "unlimited");
    t.add("evaluated", formatArea(st.evaluated_area_m2) + " (" +
                           formatNumber(static_cast<double>(st.evaluated_cells), 0) + " cells)");
    t.add("loss", "min " + formatNumber(st.min_loss_db, 1) + " dB, median " +
                      formatNumber(st.median_loss_db, 1) + " dB, max " +
                      formatNumber(st.max_loss_db, 1) + " dB");
    if (s.min_level_given) {
        t.add("served", formatArea(st.served_area_m2) + " where the level reaches " +
                            fmtg(s.min_level_dbm) + " dBm (EIRP " + fmtg(s.eirp_dbm) +
                            " dBm, receiver gain " + fmtg(s.rx_gain_dbi) + " dBi)");
    }
    return finishRun(
        ctx, j,
        t.render() + "\n" +
            bandTable(level ? "Area by received level" : "Area by basic transmission loss",
                      level ? "level" : "loss", edges, st.band_area_m2, st.evaluated_area_m2,
                      level) +
            "\n");
}

}  // namespace lookfar::run
