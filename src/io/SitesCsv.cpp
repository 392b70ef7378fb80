#include "lookfar/io/SitesCsv.hpp"

#include <algorithm>
#include <cctype>
#include <cstdio>
#include <fstream>
#include <iterator>
#include <map>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Text.hpp"
#include "lookfar/core/Units.hpp"

namespace lookfar {

namespace {

std::string lower(std::string s) {
    std::transform(s.begin(), s.end(), s.begin(), [](unsigned char c) { return std::tolower(c); });
    return s;
}

std::string at(const std::string& path, int line) {
    return path + ", line " + std::to_string(line);
}

/// The text is UTF-8 and has no NUL byte; otherwise names the line and the byte in it.
void checkBytes(const std::string& text, const std::string& path) {
    const std::size_t bad = invalidUtf8Offset(text);
    const std::size_t nul = text.find('\0');
    const std::size_t first = std::min(bad, nul);
    if (first == std::string::npos)
        return;
    const int line = 1 + static_cast<int>(std::count(text.begin(), text.begin() + first, '\n'));
    const std::size_t newline = first == 0 ? std::string::npos : text.rfind('\n', first - 1);
    const std::size_t column = first - (newline == std::string::npos ? 0 : newline + 1) + 1;
    if (first == nul) {
        throw InputError(at(path, line) + ": a NUL byte at byte " + std::to_string(column) +
                         " of the line; a sites file is text");
    }
    char hex[8];
    std::snprintf(hex, sizeof hex, "0x%02X", static_cast<unsigned char>(text[first]));
    throw InputError(at(path, line) + ": the text is not UTF-8 (byte " + hex + " at byte " +
                     std::to_string(column) + " of the line); save the file as UTF-8");
}

bool blank(const std::string& s) {
    return s.find_first_not_of(" \t") == std::string::npos;
}

}  // namespace

std::vector<CsvRecord> parseCsvRecords(const std::string& input, const std::string& path) {
    const bool bom = input.rfind("\xEF\xBB\xBF", 0) == 0;
    const std::string text = bom ? input.substr(3) : input;
    checkBytes(text, path);
    std::vector<CsvRecord> records;
    CsvRecord record;
    std::string field;
    bool quoted_field = false;  // the current field was quoted (and is closed)
    bool any_quote = false;     // the current record has a quoted field
    int line = 1;
    record.line = 1;
    const auto endField = [&] {
        record.fields.push_back(quoted_field ? field : trim(field));
        field.clear();
        quoted_field = false;
    };
    const auto endRecord = [&] {
        endField();
        const bool empty = !any_quote && record.fields.size() == 1 && blank(record.fields[0]);
        if (!empty)
            records.push_back(std::move(record));
        record = CsvRecord();
        any_quote = false;
    };
    std::size_t i = 0;
    while (i < text.size()) {
        const char c = text[i];
        if (c == '"') {
            if (quoted_field || !blank(field)) {
                throw InputError(at(path, line) + ": a quote inside the unquoted field '" +
                                 echoText(trim(field) + "\"") +
                                 "'; quote the whole field and double the quote inside it");
            }
            const int opened = line;
            field.clear();
            ++i;
            for (;;) {
                if (i >= text.size()) {
                    throw InputError(at(path, opened) +
                                     ": a quoted field opened here is not closed");
                }
                if (text[i] == '"') {
                    if (i + 1 < text.size() && text[i + 1] == '"') {
                        field += '"';
                        i += 2;
                        continue;
                    }
                    ++i;
                    break;
                }
                if (text[i] == '\n')
                    ++line;
                field += text[i++];
            }
            quoted_field = true;
            any_quote = true;
            // Only spaces may follow the closing quote before the separator.
            while (i < text.size() && (text[i] == ' ' || text[i] == '\t'))
                ++i;
            if (i < text.size() && text[i] != ',' && text[i] != '\n' &&
                !(text[i] == '\r' && i + 1 < text.size() && text[i + 1] == '\n')) {
                throw InputError(at(path, line) + ": text after the closing quote of '" +
                                 echoText(field) + "'; a quoted field ends at a comma");
            }
            continue;
        }
        if (c == ',') {
            endField();
        } else if (c == '\n') {
            endRecord();
            ++line;
            record.line = line;
        } else if (c == '\r' && i + 1 < text.size() && text[i + 1] == '\n') {
            // CRLF: the LF ends the record.
        } else {
            if (quoted_field) {
                throw InputError(at(path, line) + ": text after the closing quote of '" +
                                 echoText(field) + "'; a quoted field ends at a comma");
            }
            field += c;
        }
        ++i;
    }
    if (!field.empty() || quoted_field || !record.fields.empty())
        endRecord();
    return records;
}

std::vector<Site> parseSitesCsv(const std::string& text, const std::string& path,
                                const std::string& role) {
    const std::vector<CsvRecord> records = parseCsvRecords(text, path);
    if (records.empty())
        throw InputError(path + ": the " + role + "s file is empty (no header row)");
    const CsvRecord& header = records.front();
    int name_col = -1, x_col = -1, y_col = -1, h_col = -1;
    std::map<std::string, int> column_of;
    for (int i = 0; i < static_cast<int>(header.fields.size()); ++i) {
        const std::string h = lower(header.fields[i]);
        if (h.empty())
            continue;
        auto [it, fresh] = column_of.emplace(h, i);
        if (!fresh) {
            throw InputError(at(path, header.line) + ": the column '" + echoText(h) +
                             "' is named twice (columns " + std::to_string(it->second + 1) +
                             " and " + std::to_string(i + 1) + ")");
        }
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
        std::string found;
        for (std::size_t i = 0; i < header.fields.size(); ++i)
            found += (i ? "," : "") + header.fields[i];
        throw InputError(at(path, header.line) +
                         ": the header must name the columns name,x,y (and optionally "
                         "height); found '" +
                         echoText(found) + "'");
    }
    const std::size_t columns = header.fields.size();
    std::vector<Site> sites;
    for (std::size_t r = 1; r < records.size(); ++r) {
        const CsvRecord& row = records[r];
        const std::string where = at(path, row.line);
        if (row.fields.size() != columns) {
            throw InputError(where + ": " + std::to_string(row.fields.size()) +
                             (row.fields.size() == 1 ? " field" : " fields") +
                             " where the header has " + std::to_string(columns) +
                             "; every row needs all the columns (an "
                             "empty height is written as a trailing comma)");
        }
        Site s;
        s.line = row.line;
        s.name = row.fields[name_col];
        auto number = [&](int col, const char* what) {
            const std::string& t = row.fields[col];
            const auto v = parseDecimal(t);
            if (!v) {
                throw InputError(where + ": " + what + " '" + echoText(t) +
                                 "' is not a finite decimal number");
            }
            return *v;
        };
        s.x = number(x_col, "x");
        s.y = number(y_col, "y");
        if (h_col >= 0 && !row.fields[h_col].empty()) {
            const std::string& t = row.fields[h_col];
            std::string why;
            const auto h = lengthMetres(t, &why);
            if (!h)
                throw InputError(where + ": height '" + echoText(t) + "' " + why);
            if (!(*h >= 0))
                throw InputError(where + ": height '" + echoText(t) + "' is negative");
            if (*h > kMaxHeightAboveGroundM) {
                throw InputError(where + ": height '" + echoText(t) + "' is over " +
                                 kMaxHeightAboveGroundText + " above the ground");
            }
            s.height_m = *h;
        }
        if (s.name.empty())
            s.name = role + " " + std::to_string(sites.size() + 1);
        sites.push_back(s);
    }
    if (sites.empty())
        throw InputError(path + ": the " + role + "s file has a header but no " + role + "s");
    return sites;
}

std::vector<Site> readSitesCsv(const std::string& path, const std::string& role) {
    std::ifstream in(path, std::ios::binary);
    if (!in)
        throw InputError(path + ": cannot open the " + role + "s file");
    const std::string text((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
    if (in.bad())
        throw InputError(path + ": cannot read the " + role + "s file");
    return parseSitesCsv(text, path, role);
}

std::string csvField(const std::string& value) {
    // Unquoted fields are trimmed when read: keep spaces at the ends inside quotes.
    const bool edge_space = !value.empty() && (trim(value.substr(0, 1)).empty() ||
                                               trim(value.substr(value.size() - 1)).empty());
    if (value.find_first_of(",\"\n\r") == std::string::npos && !edge_space)
        return value;
    std::string out = "\"";
    for (char c : value) {
        if (c == '"')
            out += '"';
        out += c;
    }
    return out + "\"";
}

}  // namespace lookfar
