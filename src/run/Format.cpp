#include "lookfar/run/Format.hpp"

#include <cmath>
#include <cstdio>

#include "lookfar/core/Text.hpp"
#include "lookfar/report/TextTable.hpp"

namespace lookfar::run {

std::string printfFinite(const char* format, double v) {
    return std::isfinite(v) ? printfNumber(format, v) : std::string();
}

std::string reachText(double reach_m) {
    return std::isfinite(reach_m) ? formatDistance(reach_m) : "unlimited";
}

std::string fmtg(double v) {
    return printfNumber("%.10g", v);
}

double wrap360(double az) {
    az = std::fmod(az, 360.0);
    if (az < 0)
        az += 360.0;
    return az >= 360.0 ? 0.0 : az;
}

nlohmann::json jsonSafe(const nlohmann::json& j) {
    if (j.is_string())
        return escapeInvalidUtf8(j.get<std::string>());
    if (j.is_array()) {
        nlohmann::json out = nlohmann::json::array();
        for (const auto& v : j)
            out.push_back(jsonSafe(v));
        return out;
    }
    if (j.is_object()) {
        nlohmann::json out = nlohmann::json::object();
        for (auto it = j.begin(); it != j.end(); ++it)
            out[escapeInvalidUtf8(it.key())] = jsonSafe(it.value());
        return out;
    }
    return j;
}

}  // namespace lookfar::run
