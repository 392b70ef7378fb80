#include "lookfar/run/Options.hpp"

#include <cmath>
#include <limits>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Text.hpp"
#include "lookfar/core/Units.hpp"
#include "lookfar/run/Format.hpp"

namespace lookfar::run {

ValueCheck wholeNumberCheck(long long lo, long long hi, const std::string& note) {
    return [lo, hi, note](const std::string& text) -> std::string {
        const auto v = parseWholeNumber(trim(text));
        if (v && *v >= lo && *v <= hi)
            return "";
        return "'" + echoText(text) + "' is not a whole number from " + std::to_string(lo) +
               " to " + std::to_string(hi) + (note.empty() ? "" : " " + note);
    };
}

ValueCheck decimalCheck(double lo, double hi, const std::string& unit) {
    return [lo, hi, unit](const std::string& text) -> std::string {
        const auto v = parseDecimal(trim(text));
        if (v && *v >= lo && *v <= hi)
            return "";
        return "'" + echoText(text) + "' is not a number from " + printfNumber("%g", lo) + " to " +
               printfNumber("%g", hi) + (unit.empty() ? "" : " " + unit);
    };
}

ValueCheck refractionCheck() {
    return [](const std::string& text) -> std::string {
        const auto k = parseDecimal(trim(text));
        if (!k) {
            return "'" + echoText(text) +
                   "' is not a decimal number; k is from -1 to below 1, e.g. 0.13 (light over "
                   "land) or 0.25 (radio, a 4/3 Earth)";
        }
        if (*k >= -1.0 && *k < 1.0)
            return "";
        std::string message = echoText(text) + " is outside -1 <= k < 1";
        if (*k > 1.0 && *k <= 4.0) {
            message +=
                "; if it is the K-factor (effective over true Earth radius), k = 1 - 1/K "
                "= " +
                printfNumber("%.4g", 1.0 - 1.0 / *k) + " (a 4/3 Earth is k = 0.25)";
        } else if (*k >= 1.0) {
            message += " (k >= 1 bends sightlines as much as the Earth curves: ducting)";
        }
        return message;
    };
}

ValueCheck oneOfCheck(const std::vector<std::string>& names) {
    return [names](const std::string& text) -> std::string {
        std::string list;
        for (std::size_t i = 0; i < names.size(); ++i) {
            if (text == names[i])
                return "";
            list += (i == 0 ? "" : i + 1 == names.size() ? " or " : ", ") + names[i];
        }
        return "'" + echoText(text) + "' is not " + list;
    };
}

std::string OptionDecl::flag() const {
    const auto comma = names.rfind(',');
    return comma == std::string::npos ? names : names.substr(comma + 1);
}

OptionDecl& findOption(OptionTable& table, const std::string& flag) {
    for (OptionDecl& d : table)
        if (d.flag() == flag)
            return d;
    throw InternalError("no option " + flag + " is declared");
}

void removeOption(OptionTable& table, const std::string& flag) {
    const OptionDecl* row = &findOption(table, flag);
    table.erase(table.begin() + (row - table.data()));
}

namespace {

/// --observer-height, --target-height, --reach, --refraction, --earth-model, --earth-radius.
void addGeometryOptions(OptionTable& t, CommonOptions& o, unsigned which) {
    if (which & kHeightOptions) {
        t.push_back(OptionDecl("--observer-height", &o.observer_height,
                               "eye above the ground, metres (suffix m, ft or us-ft allowed)",
                               "Geometry")
                        .inUnit("m")
                        .showDefault());
        t.push_back(OptionDecl("--target-height", &o.target_height,
                               "target point above the ground of each cell, metres", "Geometry")
                        .inUnit("m")
                        .showDefault());
    }
    if (!(which & kGeometryOptions))
        return;
    t.push_back(OptionDecl("--reach", &o.reach,
                           "farthest distance considered, metres (default unlimited)", "Geometry")
                    .inUnit("m"));
    t.push_back(OptionDecl("--refraction", &o.refraction,
                           "refraction coefficient k, -1 <= k < 1; 0.13 light over land, 0.25 "
                           "radio (4/3 Earth)",
                           "Geometry")
                    .showDefault()
                    .checkedBy(refractionCheck()));
    t.push_back(OptionDecl("--earth-model", &o.earth_model,
                           "ellipsoid (radius along each sightline, from the CRS), sphere, or flat",
                           "Geometry")
                    .showDefault()
                    .checkedBy(oneOfCheck({"ellipsoid", "sphere", "flat"})));
    t.push_back(OptionDecl("--earth-radius", &o.earth_radius,
                           "radius of --earth-model sphere (only with it), metres, 1 km to "
                           "100 000 km (default 6371008.8, the mean Earth radius)",
                           "Geometry")
                    .inUnit("m"));
}

/// --summary, --json, --quiet, --overwrite, then --co and --extent for raster outputs.
void addOutputOptions(OptionTable& t, CommonOptions& o, unsigned which) {
    t.push_back(
        OptionDecl("--summary", &o.summary, "also write the summary as JSON to this file", "Output")
            .fileType());
    t.push_back(OptionDecl("--json", &o.json,
                           "print the summary as JSON on stdout instead of the table", "Output"));
    t.push_back(OptionDecl("--quiet", &o.quiet, "no progress on stderr", "Output"));
    t.push_back(OptionDecl("--overwrite", &o.overwrite, "replace existing output files", "Output"));
    if (!(which & kOutputOptions))
        return;
    t.push_back(OptionDecl("--co", &o.creation_options,
                           "GDAL creation option KEY=VALUE for output GeoTIFFs (repeatable; "
                           "default tiled, DEFLATE, predictor, compressed on every processor)",
                           "Output"));
    if (o.extent.empty())
        o.extent = "dem";
    t.push_back(OptionDecl("--extent", &o.extent,
                           "grid of the output rasters: dem (the DEM's whole grid; only the blocks "
                           "within --reach are written, the rest read as no data) or reach (only "
                           "the window of cells within --reach, on the DEM's grid lines; the "
                           "whole DEM without --reach)",
                           "Output")
                    .showDefault()
                    .typeName("dem|reach")
                    .checkedBy(oneOfCheck({"dem", "reach"})));
    t.push_back(OptionDecl("--format", &o.format,
                           "layout of the output rasters: GTiff (tiled GeoTIFF) or COG "
                           "(cloud-optimised GeoTIFF, always with overviews; written whole, so "
                           "--extent dem writes every block)",
                           "Output")
                    .showDefault()
                    .typeName("GTiff|COG")
                    .checkedBy(oneOfCheck({"GTiff", "COG"})));
    t.push_back(OptionDecl("--overviews", &o.overviews,
                           "add internal overviews (reduced copies for quick display): nearest "
                           "for classes and counts, average for continuous values",
                           "Output"));
}

}  // namespace

OptionTable commonOptions(CommonOptions& o, unsigned which) {
    OptionTable t;
    t.push_back(OptionDecl("DEM", &o.dem, "digital elevation model (any raster GDAL reads)")
                    .fileType()
                    .mandatory());
    if (which & kGeometryOptions) {  // the commands that take coordinates (not info)
        t.push_back(OptionDecl("--crs", &o.crs,
                               "CRS of coordinates on the command line and in CSVs (default: the "
                               "DEM's), x/easting/longitude first, e.g. EPSG:4326",
                               "Coordinates"));
    }
    addGeometryOptions(t, o, which);
    t.push_back(OptionDecl("--z-unit", &o.z_unit,
                           "unit of the DEM's elevations when the band does not say (m, ft, us-ft)",
                           "Input"));
    t.push_back(OptionDecl("--band", &o.band, "band of the DEM to read", "Input")
                    .showDefault()
                    .checkedBy(wholeNumberCheck(1, 65535)));
    if (which & kMethodOption) {
        t.push_back(OptionDecl("--method", &o.method,
                               "engine: fast (default), or reference (the sightline rule cell by "
                               "cell: same result, slow)",
                               "Engine")
                        .showDefault()
                        .checkedBy(oneOfCheck({"fast", "reference"})));
    }
    t.push_back(OptionDecl("--threads", &o.threads,
                           (which & kOutputOptions)
                               ? "worker threads, for the engines and for compressing GeoTIFFs, "
                                 "1 to 1024 (default or 0: all cores)"
                               : "worker threads, 1 to 1024 (default or 0: all cores)",
                           "Engine")
                    .checkedBy(wholeNumberCheck(0, kMaxThreads, "(0: every core)")));
    t.push_back(OptionDecl("--memory", &o.memory,
                           "memory budget, e.g. 512M or 2G (binary units): bounds the DEM cells "
                           "held, the tiles, the engines and GDAL's cache (default: half of the "
                           "physical memory)",
                           "Engine")
                    .typeName("SIZE"));
    addOutputOptions(t, o, which);
    return t;
}

void addGroundOptions(OptionTable& t, double* permittivity, double* conductivity_s_m,
                      std::string* polarization) {
    t.push_back(OptionDecl("--ground-permittivity", permittivity,
                           "relative permittivity of the ground, 1 to 100 (land 22, sea 80)",
                           "Radio")
                    .showDefault()
                    .checkedBy(decimalCheck(1, 100, "")));
    t.push_back(OptionDecl("--ground-conductivity", conductivity_s_m,
                           "conductivity of the ground, S/m, 0 to 100 (land 0.003, sea 5)", "Radio")
                    .inUnit("S/m")
                    .showDefault()
                    .checkedBy(decimalCheck(0, 100, "S/m")));
    t.push_back(OptionDecl("--polarization", polarization, "vertical or horizontal", "Radio")
                    .showDefault()
                    .checkedBy(oneOfCheck({"vertical", "horizontal"})));
}

double parseHeightOption(const std::string& text, const std::string& flag) {
    const double h = parseLengthMetres(text, flag);
    if (!(h >= 0)) {
        throw UsageError(flag + ": " + echoText(text) + " is negative; heights are above ground");
    }
    if (h > kMaxHeightAboveGroundM) {
        throw UsageError(flag + ": " + echoText(text) + " is over " + kMaxHeightAboveGroundText +
                         " above the ground");
    }
    return h;
}

double parseReachOption(const std::string& text) {
    if (text.empty())
        return std::numeric_limits<double>::infinity();  // not given
    if (trim(text).empty()) {
        throw UsageError(
            "--reach: the value is blank; give a distance such as 10km, or leave "
            "--reach out for no limit");
    }
    const double r = parseLengthMetres(text, "--reach");
    if (!(r > 0))
        throw UsageError("--reach: " + echoText(text) + " must be a positive distance");
    return r;
}

double parseEarthRadiusOption(const std::string& text, const std::string& earth_model) {
    if (text.empty())
        return EarthModel::kMeanRadiusM;
    if (earth_model != "sphere") {
        throw UsageError("--earth-radius needs --earth-model sphere: " +
                         std::string(earth_model == "flat"
                                         ? "a flat Earth has no radius"
                                         : "the ellipsoid's radii come from the DEM's CRS"));
    }
    const double r = parseLengthMetres(text, "--earth-radius");
    if (!(r >= 1e3 && r <= 1e8)) {
        throw UsageError("--earth-radius: " + echoText(text) + " is outside 1 km to 100 000 km");
    }
    return r;
}

}  // namespace lookfar::run
