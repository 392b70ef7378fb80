#pragma once
// Length units and the parsing of lengths written by users ("100", "100m", "30ft", "12us-ft").
#include <cstddef>
#include <optional>
#include <string>

namespace lookfar {

inline constexpr double kMetresPerFoot = 0.3048;                   // international foot, exact
inline constexpr double kMetresPerUsSurveyFoot = 1200.0 / 3937.0;  // US survey foot, exact
inline constexpr double kPi = 3.14159265358979323846;
inline constexpr double kDegToRad = kPi / 180.0;
inline constexpr double kRadToDeg = 180.0 / kPi;
/// Speed of light in vacuum, m/s (SI, exact): wavelengths for the link and radio layers.
inline constexpr double kSpeedOfLightMps = 299792458.0;

/// A linear unit: its name as lookfar prints it and its length in metres.
struct LinearUnit {
    std::string name;  ///< "metre", "foot", "US survey foot", …
    double metres = 1.0;
};

/// Recognises unit names and abbreviations ("m", "metre", "meter", "ft", "foot", "feet",
/// "international foot", "us-ft", "US survey foot", "ftUS"); nullopt for anything else.
std::optional<LinearUnit> parseLinearUnit(const std::string& text);

/// The highest height above the ground lookfar takes, on the command line or in a CSV.
inline constexpr double kMaxHeightAboveGroundM = 1e5;
inline constexpr const char* kMaxHeightAboveGroundText = "100 km";

/// A length: a finite decimal number (parseDecimal) and an optional unit suffix, in any case:
/// m, km, ft, us-ft and the names parseLinearUnit knows (metre, feet, …), spaces allowed
/// between. Returns metres, or nullopt with the reason in `why` (a phrase that follows the
/// quoted text: "is not a length (write e.g. 30, 30m or 100ft)").
std::optional<double> lengthMetres(const std::string& text, std::string* why);

/// lengthMetres for an option: throws UsageError naming `what` (e.g. "--observer-height") and
/// the text (cut and escaped) when malformed or non-finite.
double parseLengthMetres(const std::string& text, const std::string& what);

/// Parses a finite decimal number, the whole of `text`: an optional sign, digits with an optional
/// decimal point, an optional exponent (e or E, optionally signed). No white space, hex, inf, nan
/// or other characters; nullopt also when the value overflows to infinity.
std::optional<double> parseDecimal(const std::string& text);

/// Parses a whole decimal number (optional sign, digits), the whole of `text`; nullopt when
/// malformed or beyond ±10^18.
std::optional<long long> parseWholeNumber(const std::string& text);

/// Length of the longest prefix of `text` that has the form of a decimal number (see
/// parseDecimal); 0 when there is none.
std::size_t decimalPrefixLength(const std::string& text);

/// Trims ASCII white space at both ends.
std::string trim(const std::string& text);

}  // namespace lookfar
