#include "lookfar/io/SitesCsv.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <cstdlib>
#include <fstream>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Text.hpp"
#include "lookfar/core/Units.hpp"

namespace lookfar {

std::vector<std::string> splitCsvRecord(const std::string& line, const std::string& path,
                                        int line_number) {
    std::vector<std::string> fields;
    std::string field;
    bool quoted = false;
    for (std::size_t i = 0; i < line.size(); ++i) {
        char c = line[i];
        if (quoted) {
            if (c == '"') {
                if (i + 1 < line.size() && line[i + 1] == '"') {
                    field += '"';
                    ++i;
                } else {
                    quoted = false;
                }
            } else {
                field += c;
            }
        } else if (c == '"') {
            quoted = true;
        } else if (c == ',') {
            fields.push_back(field);
            field.clear();
        } else {
            field += c;
        }
    }
    if (quoted) {
        throw InputError(path + ", line " + std::to_string(line_number) +
                         ": a quoted field is not closed");
    }
    fields.push_back(field);
    return fields;
}

std::string csvField(const std::string& value) {
    if (value.find_first_of(",\"\n\r") == std::string::npos)
        return value;
    std::string out = "\"";
    for (char c : value) {
        if (c == '"')
            out += '"';
        out += c;
    }
    return out + "\"";
}

namespace {
std::string lower(std::string s) {
    std::transform(s.begin(), s.end(), s.begin(), [](unsigned char c) { return std::tolower(c); });
    return s;
}
}  // namespace

std::vector<Site> readSitesCsv(const std::string& path) {
    std::ifstream in(path, std::ios::binary);
    if (!in)
        throw InputError(path + ": cannot open the sites file");
    std::string line;
    int line_number = 0;
    int name_col = -1, x_col = -1, y_col = -1, h_col = -1;
    bool header_seen = false;
    std::vector<Site> sites;
    while (std::getline(in, line)) {
        ++line_number;
        if (!line.empty() && line.back() == '\r')
            line.pop_back();
        if (line_number == 1 && line.rfind("\xEF\xBB\xBF", 0) == 0)
            line.erase(0, 3);  // BOM
        if (invalidUtf8Offset(line) != std::string::npos) {
            throw InputError(path + ", line " + std::to_string(line_number) +
                             ": the text is not UTF-8 (" + describeInvalidUtf8(line) +
                             " of the line); save the file as UTF-8");
        }
        if (trim(line).empty())
            continue;
        auto fields = splitCsvRecord(line, path, line_number);
        if (!header_seen) {
            header_seen = true;
            for (int i = 0; i < static_cast<int>(fields.size()); ++i) {
                std::string h = lower(trim(fields[i]));
                if (h == "name")
                    name_col = i;
                if (h == "x")
                    x_col = i;
                if (h == "y")
                    y_col = i;
                if (h == "height")
                    h_col = i;
            }
            if (name_col < 0 || x_col < 0 || y_col < 0) {
                throw InputError(path + ", line " + std::to_string(line_number) +
                                 ": the header must name the columns name,x,y (and optionally "
                                 "height); found '" +
                                 line + "'");
            }
            continue;
        }
        auto need = std::max({name_col, x_col, y_col, h_col});
        if (static_cast<int>(fields.size()) <= std::max({name_col, x_col, y_col})) {
            throw InputError(path + ", line " + std::to_string(line_number) + ": expected " +
                             std::to_string(need + 1) + " fields, found " +
                             std::to_string(fields.size()) + " in '" + line + "'");
        }
        Site s;
        s.line = line_number;
        s.name = trim(fields[name_col]);
        auto number = [&](int col, const char* what) {
            std::string t = trim(fields[col]);
            char* end = nullptr;
            double v = std::strtod(t.c_str(), &end);
            if (t.empty() || *end != '\0' || !std::isfinite(v)) {
                throw InputError(path + ", line " + std::to_string(line_number) + ": " + what +
                                 " '" + t + "' is not a finite number");
            }
            return v;
        };
        s.x = number(x_col, "x");
        s.y = number(y_col, "y");
        if (h_col >= 0 && h_col < static_cast<int>(fields.size()) && !trim(fields[h_col]).empty()) {
            std::string t = trim(fields[h_col]);
            double h;
            try {
                h = parseLengthMetres(t, "height");
            } catch (const UsageError&) {
                throw InputError(path + ", line " + std::to_string(line_number) + ": height '" + t +
                                 "' is not a length (write e.g. 30, 30m or 100ft)");
            }
            if (!(h >= 0)) {
                throw InputError(path + ", line " + std::to_string(line_number) + ": height '" + t +
                                 "' is negative");
            }
            s.height_m = h;
        }
        if (s.name.empty())
            s.name = "site " + std::to_string(sites.size() + 1);
        sites.push_back(s);
    }
    if (!header_seen)
        throw InputError(path + ": the sites file is empty (no header row)");
    if (sites.empty())
        throw InputError(path + ": the sites file has a header but no sites");
    return sites;
}

}  // namespace lookfar
