#pragma once
// Number formatting the commands share in their CSVs, tables and messages.
#include <string>

#include <nlohmann/json.hpp>

#include "lookfar/report/TextTable.hpp"  // printfNumber, formatNumber

namespace lookfar::run {

/// The same, or "" when `v` is not finite (an empty CSV field).
std::string printfFinite(const char* format, double v);
/// `v` with 10 significant digits (%.10g), for coordinates in CSVs and tables.
std::string fmtg(double v);
/// A reach for tables: a distance ("5 km"), or "unlimited" when not finite.
std::string reachText(double reach_m);
/// An azimuth in [0, 360).
double wrap360(double az);

/// `j` with every string and key made valid UTF-8 (a byte that breaks UTF-8 becomes \xNN), so
/// that a path given as bytes can be echoed in JSON.
nlohmann::json jsonSafe(const nlohmann::json& j);

}  // namespace lookfar::run
