#pragma once
// A command's options as the run layer declares them, without any parser.
//
// Each command keeps its values in a plain struct whose member initialisers are the defaults
// (the one place where defaults live). A declaration table, built over one such struct, gives
// every option its names, the field it fills, its help text, unit, range check and group; the
// CLI turns each row into a CLI11 option and other callers (the Python module) can fill the
// struct's fields directly and run the same checks.
#include <functional>
#include <string>
#include <utility>
#include <variant>
#include <vector>

#include "lookfar/earth/EarthModel.hpp"

namespace lookfar::run {

/// A check of an option's text before conversion: "" when the text passes, else the sentence
/// that follows "--flag: " in the message ("'-1' is not a whole number from 0 to 1024").
using ValueCheck = std::function<std::string(const std::string&)>;

/// A whole number from `lo` to `hi`; `note` is appended to the message, e.g. "(0: every core)".
ValueCheck wholeNumberCheck(long long lo, long long hi, const std::string& note = "");
/// A finite decimal number from `lo` to `hi` (both included); `unit` follows the range.
ValueCheck decimalCheck(double lo, double hi, const std::string& unit);
/// The refraction coefficient: a decimal number with −1 ≤ k < 1, with a hint when a K-factor
/// (effective radius ÷ true radius, e.g. 1.333) is typed where k is meant.
ValueCheck refractionCheck();
/// One of `names` (the text exactly).
ValueCheck oneOfCheck(const std::vector<std::string>& names);

/// The field an option fills.
using OptionField = std::variant<std::string*, int*, double*, bool*, std::vector<std::string>*>;

/// One option of a command.
struct OptionDecl {
    std::string names;  ///< "--reach", "-o,--output"; a positional argument has no dash: "DEM"
    OptionField field;
    std::string help;
    std::string group;      ///< heading in --help ("Geometry", "Output" …)
    std::string unit;       ///< unit of a value ("m", "MHz", "deg"), "" for none
    std::string type_name;  ///< "FILE" for paths: taken as the bytes given, not checked as UTF-8
    bool required = false;
    bool show_default = false;  ///< --help shows the field's default value
    ValueCheck check;           ///< empty: no check while parsing
    std::string excludes;       ///< the flag of an option that cannot be given with this one
    bool* given = nullptr;      ///< set when the option is given (where a value cannot say so)

    OptionDecl(std::string names_, OptionField field_, std::string help_, std::string group_ = "")
        : names(std::move(names_)),
          field(field_),
          help(std::move(help_)),
          group(std::move(group_)) {}
    // Setters for the rest, to be chained: option(…).fileType().mandatory().
    OptionDecl& inUnit(std::string u) { return unit = std::move(u), *this; }
    OptionDecl& typeName(std::string t) { return type_name = std::move(t), *this; }
    OptionDecl& fileType() { return typeName("FILE"); }
    OptionDecl& mandatory() { return required = true, *this; }
    OptionDecl& showDefault() { return show_default = true, *this; }
    OptionDecl& checkedBy(ValueCheck c) { return check = std::move(c), *this; }
    OptionDecl& excluding(std::string flag) { return excludes = std::move(flag), *this; }
    OptionDecl& noteGiven(bool* g) { return given = g, *this; }

    /// The long name ("--output" of "-o,--output"), or the positional name.
    std::string flag() const;
};

using OptionTable = std::vector<OptionDecl>;

/// The row of `table` whose flag is `flag` (InternalError when none).
OptionDecl& findOption(OptionTable& table, const std::string& flag);
/// Removes the row of `flag` (InternalError when none).
void removeOption(OptionTable& table, const std::string& flag);

/// Most worker threads --threads accepts.
inline constexpr int kMaxThreads = 1024;

/// Which of the common options a command takes.
enum CommonSet : unsigned {
    kGeometryOptions = 1u << 0,  ///< --refraction --earth-model --earth-radius --reach
    kHeightOptions = 1u << 1,    ///< --observer-height --target-height
    kOutputOptions = 1u << 2,    ///< --co --extent --format --overviews (raster outputs)
    kMethodOption = 1u << 3,     ///< --method
    kAllCommon = 0xFFu,
};

/// The options docs/design.md calls shared, as given (heights and lengths as text: they take
/// unit suffixes and are parsed by the run).
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
    std::string format = "GTiff";  ///< --format: GTiff, or COG (cloud-optimised, with overviews)
    bool overviews = false;        ///< --overviews: internal overviews in a GTiff
    std::string memory;            ///< --memory: empty = half of the physical memory
};

/// The DEM argument and the common options of `which` over `o`, in the order --help lists them.
/// With kOutputOptions, an empty `o.extent` becomes its default "dem".
OptionTable commonOptions(CommonOptions& o, unsigned which);

/// Appends the ground's electrical constants of the radio commands (signal, link), in the group
/// "Radio": --ground-permittivity (1 to 100), --ground-conductivity (S/m, 0 to 100) and
/// --polarization (vertical or horizontal), filling the three fields.
void addGroundOptions(OptionTable& table, double* permittivity, double* conductivity_s_m,
                      std::string* polarization);

/// Parses a non-negative, finite height option (exit 2 otherwise); `flag` names it.
double parseHeightOption(const std::string& text, const std::string& flag);
/// Parses --reach: empty = unlimited, else a positive length.
double parseReachOption(const std::string& text);
/// Parses --earth-radius (1 km to 100 000 km); empty = the mean Earth radius. Refused unless
/// `earth_model` is "sphere": the other models take no radius.
double parseEarthRadiusOption(const std::string& text, const std::string& earth_model);

}  // namespace lookfar::run
