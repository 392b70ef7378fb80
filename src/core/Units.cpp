#include "lookfar/core/Units.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <cstdlib>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Text.hpp"

namespace lookfar {

std::string trim(const std::string& text) {
    auto begin = text.find_first_not_of(" \t\r\n");
    if (begin == std::string::npos)
        return "";
    auto end = text.find_last_not_of(" \t\r\n");
    return text.substr(begin, end - begin + 1);
}

std::size_t decimalPrefixLength(const std::string& text) {
    const auto digit = [&](std::size_t k) {
        return k < text.size() && text[k] >= '0' && text[k] <= '9';
    };
    std::size_t i = 0;
    if (i < text.size() && (text[i] == '+' || text[i] == '-'))
        ++i;
    std::size_t digits = 0;
    while (digit(i)) {
        ++i;
        ++digits;
    }
    if (i < text.size() && text[i] == '.') {
        ++i;
        while (digit(i)) {
            ++i;
            ++digits;
        }
    }
    if (digits == 0)
        return 0;
    // An exponent counts only when digits follow it ("10e" is 10 followed by "e").
    if (i < text.size() && (text[i] == 'e' || text[i] == 'E')) {
        std::size_t j = i + 1;
        if (j < text.size() && (text[j] == '+' || text[j] == '-'))
            ++j;
        if (digit(j)) {
            while (digit(j))
                ++j;
            i = j;
        }
    }
    return i;
}

std::optional<double> parseDecimal(const std::string& text) {
    if (text.empty() || decimalPrefixLength(text) != text.size())
        return std::nullopt;
    // The grammar above is a subset of strtod's in the C locale, which lookfar never changes.
    const double v = std::strtod(text.c_str(), nullptr);
    if (!std::isfinite(v))
        return std::nullopt;
    return v;
}

std::optional<long long> parseWholeNumber(const std::string& text) {
    std::size_t i = (!text.empty() && (text[0] == '+' || text[0] == '-')) ? 1 : 0;
    if (i == text.size() || text.size() - i > 18)
        return std::nullopt;
    long long v = 0;
    for (std::size_t k = i; k < text.size(); ++k) {
        if (text[k] < '0' || text[k] > '9')
            return std::nullopt;
        v = v * 10 + (text[k] - '0');
    }
    return text[0] == '-' ? -v : v;
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

std::optional<double> lengthMetres(const std::string& text, std::string* why) {
    const std::string t = trim(text);
    const std::size_t n = decimalPrefixLength(t);
    if (n == 0) {
        *why = "is not a length (write e.g. 30, 30m or 100ft)";
        return std::nullopt;
    }
    std::string suffix = trim(t.substr(n));
    std::transform(suffix.begin(), suffix.end(), suffix.begin(),
                   [](unsigned char c) { return std::tolower(c); });
    double factor = 1.0;
    if (suffix == "km" || suffix == "kilometre" || suffix == "kilometres" ||
        suffix == "kilometer" || suffix == "kilometers") {
        factor = 1000.0;
    } else if (!suffix.empty()) {
        const auto unit = parseLinearUnit(suffix);
        if (!unit) {
            *why =
                "has an unknown unit '" + echoText(t.substr(n), 20) + "' (use m, km, ft or us-ft)";
            return std::nullopt;
        }
        factor = unit->metres;
    }
    const auto value = parseDecimal(t.substr(0, n));
    if (!value || !std::isfinite(*value * factor)) {
        *why = "is not a finite length";
        return std::nullopt;
    }
    return *value * factor;
}

double parseLengthMetres(const std::string& text, const std::string& what) {
    std::string why;
    const auto metres = lengthMetres(text, &why);
    if (!metres)
        throw UsageError(what + ": '" + echoText(text) + "' " + why);
    return *metres;
}

}  // namespace lookfar
