#pragma once
// Reading back the CSV files lookfar writes: fields split on commas outside double quotes, a
// doubled quote inside quotes standing for one (RFC 4180), a trailing comma giving an empty last
// field.
#include <cstddef>
#include <sstream>
#include <string>
#include <vector>

#include "CliRunner.hpp"

namespace lookfar::testing {

/// The fields of one CSV line.
inline std::vector<std::string> csvFields(const std::string& line) {
    std::vector<std::string> out;
    std::string f;
    bool quoted = false;
    for (std::size_t i = 0; i < line.size(); ++i) {
        const char c = line[i];
        if (quoted) {
            if (c == '"' && i + 1 < line.size() && line[i + 1] == '"') {
                f += '"';
                ++i;
            } else if (c == '"') {
                quoted = false;
            } else {
                f += c;
            }
        } else if (c == '"') {
            quoted = true;
        } else if (c == ',') {
            out.push_back(f);
            f.clear();
        } else {
            f += c;
        }
    }
    out.push_back(f);
    return out;
}

/// Every line of the CSV file at `path` (header included), split into fields.
inline std::vector<std::vector<std::string>> readCsv(const std::string& path) {
    std::vector<std::vector<std::string>> rows;
    std::istringstream in(readFile(path));
    std::string line;
    while (std::getline(in, line))
        rows.push_back(csvFields(line));
    return rows;
}

}  // namespace lookfar::testing
