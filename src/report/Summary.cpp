#include "lookfar/report/Summary.hpp"

#include <cmath>
#include <cstdio>

#include "lookfar/Version.hpp"

namespace lookfar {

double summaryMetres(double metres) {
    return std::isfinite(metres) ? std::round(metres * 1000.0) / 1000.0 : metres;
}

nlohmann::json finiteOrNull(double value) {
    if (!std::isfinite(value))
        return nullptr;
    return value;
}

nlohmann::json summaryBase(const RunDescription& run) {
    nlohmann::json j;
    j["tool"] = "lookfar";
    j["version"] = kVersion;
    j["command"] = run.command;
    j["command_line"] = run.command_line;
    j["dem"] = {
        {"path", run.dem_path},     {"crs", run.crs_code.empty() ? run.crs_name : run.crs_code},
        {"crs_name", run.crs_name}, {"width", run.width},
        {"height", run.height},     {"cell_size_m", run.cell_size_m}};
    j["parameters"] = {{"refraction", run.refraction},
                       {"earth_model", run.earth_model},
                       {"earth_radius_m", finiteOrNull(run.earth_radius_m)},
                       {"reach_m", finiteOrNull(run.reach_m)},
                       {"observer_height_m", run.observer_height_m},
                       {"target_height_m", run.target_height_m},
                       {"method", run.method}};
    return j;
}

std::map<std::string, std::string> rasterMetadata(const RunDescription& run) {
    auto num = [](double v) {
        if (!std::isfinite(v))
            return std::string("unlimited");
        char buf[64];
        std::snprintf(buf, sizeof buf, "%.10g", v);
        return std::string(buf);
    };
    std::map<std::string, std::string> m;
    m["LOOKFAR_VERSION"] = kVersion;
    m["LOOKFAR_COMMAND"] = run.command;
    m["LOOKFAR_COMMAND_LINE"] = run.command_line;
    m["LOOKFAR_DEM"] = run.dem_path;
    m["LOOKFAR_EARTH_MODEL"] = run.earth_model;
    m["LOOKFAR_EARTH_RADIUS_M"] = num(run.earth_radius_m);
    m["LOOKFAR_REFRACTION"] = num(run.refraction);
    m["LOOKFAR_OBSERVER_HEIGHT_M"] = num(run.observer_height_m);
    m["LOOKFAR_TARGET_HEIGHT_M"] = num(run.target_height_m);
    m["LOOKFAR_REACH_M"] = num(run.reach_m);
    m["LOOKFAR_METHOD"] = run.method;
    for (const auto& [k, v] : run.extra)
        m["LOOKFAR_" + k] = v;
    return m;
}

}  // namespace lookfar
