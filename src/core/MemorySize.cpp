#include "lookfar/core/MemorySize.hpp"

#include <unistd.h>

#include <cctype>
#include <cmath>
#include <cstdio>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Text.hpp"
#include "lookfar/core/Units.hpp"

namespace lookfar {

std::int64_t parseMemorySize(const std::string& given, const std::string& what) {
    const std::string text = trim(given);
    auto refuse = [&]() -> std::int64_t {
        throw UsageError(what + ": '" + echoText(given) +
                         "' is not a memory size: give a number with K, M, G or T (binary "
                         "units: 512M is 512 MiB), e.g. 512M or 2G");
    };
    const std::size_t n = decimalPrefixLength(text);
    if (n == 0)
        return refuse();
    const std::optional<double> number = parseDecimal(text.substr(0, n));
    if (!number || !std::isfinite(*number) || *number < 0)
        return refuse();
    std::string unit = text.substr(n);
    while (!unit.empty() && unit.front() == ' ')
        unit.erase(0, 1);
    for (char& c : unit)
        c = static_cast<char>(std::toupper(static_cast<unsigned char>(c)));
    double scale = 0;
    const char* units[] = {"", "K", "M", "G", "T"};
    for (int i = 0; i < 5 && scale == 0; ++i) {
        const std::string u = units[i];
        const double s = std::ldexp(1.0, 10 * i);
        if (unit == u || (i > 0 && (unit == u + "B" || unit == u + "IB")) ||
            (i == 0 && unit == "B"))
            scale = s;
    }
    if (scale == 0)
        return refuse();
    const double bytes = std::floor(*number * scale);
    if (!(bytes >= 1) || bytes > 9.0e18)
        return refuse();
    return static_cast<std::int64_t>(bytes);
}

std::string formatMemorySize(std::int64_t bytes) {
    const char* units[] = {"bytes", "KiB", "MiB", "GiB", "TiB"};
    double v = static_cast<double>(bytes);
    int i = 0;
    while (v >= 1024 && i < 4) {
        v /= 1024;
        ++i;
    }
    char buf[64];
    if (i == 0)
        std::snprintf(buf, sizeof buf, "%lld bytes", static_cast<long long>(bytes));
    else if (v == std::floor(v))
        std::snprintf(buf, sizeof buf, "%.0f %s", v, units[i]);
    else
        std::snprintf(buf, sizeof buf, "%.1f %s", v, units[i]);
    return buf;
}

std::int64_t physicalMemoryBytes() {
    const long pages = sysconf(_SC_PHYS_PAGES);
    const long page = sysconf(_SC_PAGESIZE);
    if (pages <= 0 || page <= 0)
        return 0;
    return static_cast<std::int64_t>(pages) * page;
}

std::int64_t defaultMemoryBudget() {
    const std::int64_t p = physicalMemoryBytes();
    return p > 0 ? p / 2 : std::int64_t(1) << 30;
}

}  // namespace lookfar
