#include "FuzzTargets.hpp"

#include <cmath>
#include <cstdio>
#include <cstdlib>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Text.hpp"
#include "lookfar/core/Units.hpp"
#include "lookfar/io/Crs.hpp"
#include "lookfar/io/SitesCsv.hpp"

namespace lookfar::fuzz {

namespace {

/// A broken invariant: say which and abort (libFuzzer keeps the input as a crash).
void require(bool ok, const char* what) {
    if (!ok) {
        std::fprintf(stderr, "fuzz invariant broken: %s\n", what);
        std::abort();
    }
}

/// A message of lookfar: one line, valid UTF-8, no control bytes, of bounded size whatever the
/// input (echoed text is cut to 60 characters).
void requireGoodMessage(const std::string& m) {
    require(!m.empty(), "empty message");
    require(m.size() < 1024, "message longer than 1 KiB");
    require(invalidUtf8Offset(m) == std::string::npos, "message is not UTF-8");
    for (unsigned char c : m)
        require(c >= 0x20 && c != 0x7F, "control byte in a message");
}

std::string text(const std::uint8_t* data, std::size_t size) {
    return std::string(reinterpret_cast<const char*>(data), size);
}

}  // namespace

int sitesCsv(const std::uint8_t* data, std::size_t size) {
    try {
        const std::vector<Site> sites = parseSitesCsv(text(data, size), "fuzz.csv");
        require(!sites.empty(), "no sites and no error");
        for (const Site& s : sites) {
            require(std::isfinite(s.x) && std::isfinite(s.y), "non-finite coordinate");
            require(!s.height_m || (*s.height_m >= 0 && *s.height_m <= kMaxHeightAboveGroundM),
                    "height outside 0 to the cap");
            require(s.line >= 2, "a site on the header line");
            require(invalidUtf8Offset(s.name) == std::string::npos, "name is not UTF-8");
            // What lookfar writes in its CSVs reads back as the same name.
            const auto back = parseSitesCsv("name,x,y\n" + csvField(s.name) + ",1,2\n", "back");
            require(back.size() == 1 && back[0].name == s.name, "csvField does not round-trip");
        }
    } catch (const InputError& e) {
        requireGoodMessage(e.what());
    }
    return 0;
}

int point(const std::uint8_t* data, std::size_t size) {
    try {
        const MapPoint p = parsePoint(text(data, size), "--at");
        require(std::isfinite(p.x) && std::isfinite(p.y), "non-finite point");
    } catch (const UsageError& e) {
        requireGoodMessage(e.what());
    }
    return 0;
}

int length(const std::uint8_t* data, std::size_t size) {
    const std::string t = text(data, size);
    // Numbers: finite, and the value strtod gives for the same text.
    if (const auto v = parseDecimal(t)) {
        require(std::isfinite(*v), "non-finite decimal");
        char* end = nullptr;
        const double c = std::strtod(t.c_str(), &end);
        require(end == t.c_str() + t.size() && c == *v, "strtod reads the decimal otherwise");
    }
    if (const auto w = parseWholeNumber(t))
        require(parseDecimal(t) == static_cast<double>(*w), "whole number is not its decimal");
    std::string why;
    if (const auto m = lengthMetres(t, &why))
        require(std::isfinite(*m), "non-finite length");
    else
        require(!why.empty(), "refused length without a reason");
    try {
        require(std::isfinite(parseLengthMetres(t, "--reach")), "non-finite length");
    } catch (const UsageError& e) {
        requireGoodMessage(e.what());
    }
    // Echoed and escaped text.
    const std::string echo = echoText(t);
    require(invalidUtf8Offset(echo) == std::string::npos, "echoText is not UTF-8");
    for (unsigned char c : echo)
        require(c >= 0x20 && c != 0x7F, "control byte in echoText");
    require(echo.size() <= 60 * 4 + 3, "echoText longer than 60 characters");
    const std::string escaped = escapeInvalidUtf8(t);
    require(invalidUtf8Offset(escaped) == std::string::npos, "escapeInvalidUtf8 is not UTF-8");
    require(invalidUtf8Offset(t) != std::string::npos || escaped == t,
            "escapeInvalidUtf8 changed valid text");
    return 0;
}

int creationOption(const std::uint8_t* data, std::size_t size) {
    const std::string t = text(data, size);
    std::string key, value;
    if (splitKeyValue(t, &key, &value)) {
        require(!key.empty() && key + "=" + value == t, "KEY=VALUE does not rebuild the text");
        require(key.find('=') == std::string::npos, "'=' inside the key");
    }
    return 0;
}

int crs(const std::uint8_t* data, std::size_t size) {
    const std::string t = text(data, size);
    // A transform is not built here: PROJ's search for operations takes about 0.2 s a call
    // under the sanitizers, which would leave a few hundred inputs per run.
    const std::string as_given = crsAsPROJUnderstandsIt(t);
    require(as_given.compare(0, t.size(), t) == 0, "the CRS text was changed, not extended");
    try {
        validateCrs(t, "--crs");
        try {
            const Ellipsoid e = ellipsoidOfCrs(t);
            require(e.a > 0 && std::isfinite(e.a) && e.f >= 0 && e.f < 1,
                    "ellipsoid with a bad axis or flattening");
        } catch (const InputError& e) {
            requireGoodMessage(e.what());
        }
    } catch (const UsageError& e) {
        requireGoodMessage(e.what());
    }
    return 0;
}

const std::vector<NamedTarget>& allTargets() {
    static const std::vector<NamedTarget> targets = {{"sites_csv", sitesCsv},
                                                     {"point", point},
                                                     {"length", length},
                                                     {"creation_option", creationOption},
                                                     {"crs", crs}};
    return targets;
}

}  // namespace lookfar::fuzz
