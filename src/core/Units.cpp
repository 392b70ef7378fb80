#include "lookfar/core/Units.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <cstdlib>

#include "lookfar/core/Errors.hpp"

namespace lookfar {

std::string trim(const std::string& text) {
    auto begin = text.find_first_not_of(" \t\r\n");
    if (begin == std::string::npos)
        return "";
    auto end = text.find_last_not_of(" \t\r\n");
    return text.substr(begin, end - begin + 1);
}

std::optional<LinearUnit> parseLinearUnit(const std::string& text) {
    std::string t = trim(text);
    std::transform(t.begin(), t.end(), t.begin(), [](unsigned char c) { return std::tolower(c); });
    if (t == "m" || t == "metre" || t == "meter" || t == "metres" || t == "meters") {
        return LinearUnit{"metre", 1.0};
    }
    if (t == "ft" || t == "foot" || t == "feet" || t == "international foot" ||
        t == "international feet") {
        return LinearUnit{"foot", kMetresPerFoot};
    }
    if (t == "us-ft" || t == "usft" || t == "ftus" || t == "us survey foot" ||
        t == "us survey feet" || t == "foot_us" || t == "us_survey_foot") {
        return LinearUnit{"US survey foot", kMetresPerUsSurveyFoot};
    }
    return std::nullopt;
}

double parseLengthMetres(const std::string& text, const std::string& what) {
    std::string t = trim(text);
    const char* begin = t.c_str();
    char* end = nullptr;
    double value = std::strtod(begin, &end);
    if (end == begin) {
        throw UsageError(what + ": '" + text + "' is not a length (write e.g. 30, 30m or 100ft)");
    }
    std::string suffix = trim(std::string(end));
    double factor = 1.0;
    if (suffix == "km") {
        factor = 1000.0;
    } else if (!suffix.empty()) {
        auto unit = parseLinearUnit(suffix);
        if (!unit) {
            throw UsageError(what + ": unknown unit '" + suffix + "' in '" + text +
                             "' (use m, km, ft or us-ft)");
        }
        factor = unit->metres;
    }
    if (!std::isfinite(value)) {
        throw UsageError(what + ": '" + text + "' is not a finite length");
    }
    return value * factor;
}

}  // namespace lookfar
