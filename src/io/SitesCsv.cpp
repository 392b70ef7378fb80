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

/// The header's columns by lower-case name; a column named twice is refused.
std::map<std::string, int> headerColumns(const CsvRecord& header, const std::string& path) {
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
    }
    return column_of;
}

int columnOf(const std::map<std::string, int>& column_of, const std::string& name) {
    const auto it = column_of.find(name);
    return it == column_of.end() ? -1 : it->second;
}

std::string headerText(const CsvRecord& header) {
    std::string found;
    for (std::size_t i = 0; i < header.fields.size(); ++i)
        found += (i ? "," : "") + header.fields[i];
    return found;
}

/// Every row has as many fields as the header; `optional` names a column that may be empty.
void requireFieldCount(const CsvRecord& row, std::size_t columns, const std::string& where,
                       const std::string& optional) {
    if (row.fields.size() == columns)
        return;
    throw InputError(where + ": " + std::to_string(row.fields.size()) +
                     (row.fields.size() == 1 ? " field" : " fields") + " where the header has " +
                     std::to_string(columns) + "; every row needs all the columns (an empty " +
                     optional + " is written as a trailing comma)");
}

double decimalField(const std::string& where, const std::string& what, const std::string& t) {
    const auto v = parseDecimal(t);
    if (!v)
        throw InputError(where + ": " + what + " '" + echoText(t) +
                         "' is not a finite decimal number");
    return *v;
}

/// A height above the ground: a length with an optional unit suffix, from 0 to the maximum.
double heightField(const std::string& where, const std::string& what, const std::string& t) {
    std::string why;
    const auto h = lengthMetres(t, &why);
    if (!h)
        throw InputError(where + ": " + what + " '" + echoText(t) + "' " + why);
    if (!(*h >= 0))
        throw InputError(where + ": " + what + " '" + echoText(t) + "' is negative");
    if (*h > kMaxHeightAboveGroundM) {
        throw InputError(where + ": " + what + " '" + echoText(t) + "' is over " +
                         kMaxHeightAboveGroundText + " above the ground");
    }
    return *h;
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
    const std::map<std::string, int> column_of = headerColumns(header, path);
    const int name_col = columnOf(column_of, "name"), x_col = columnOf(column_of, "x"),
              y_col = columnOf(column_of, "y"), h_col = columnOf(column_of, "height");
    if (name_col < 0 || x_col < 0 || y_col < 0) {
        throw InputError(at(path, header.line) +
                         ": the header must name the columns name,x,y (and optionally "
                         "height); found '" +
                         echoText(headerText(header)) + "'");
    }
    const std::size_t columns = header.fields.size();
    std::vector<Site> sites;
    for (std::size_t r = 1; r < records.size(); ++r) {
        const CsvRecord& row = records[r];
        const std::string where = at(path, row.line);
        requireFieldCount(row, columns, where, "height");
        Site s;
        s.line = row.line;
        s.name = row.fields[name_col];
        s.x = decimalField(where, "x", row.fields[x_col]);
        s.y = decimalField(where, "y", row.fields[y_col]);
        if (h_col >= 0 && !row.fields[h_col].empty())
            s.height_m = heightField(where, "height", row.fields[h_col]);
        if (s.name.empty())
            s.name = role + " " + std::to_string(sites.size() + 1);
        sites.push_back(s);
    }
    if (sites.empty())
        throw InputError(path + ": the " + role + "s file has a header but no " + role + "s");
    return sites;
}

std::vector<LinkPair> parsePairsCsv(const std::string& text, const std::string& path) {
    const std::vector<CsvRecord> records = parseCsvRecords(text, path);
    if (records.empty())
        throw InputError(path + ": the pairs file is empty (no header row)");
    const CsvRecord& header = records.front();
    const std::map<std::string, int> column_of = headerColumns(header, path);
    const char* const names[] = {"from_name", "from_x", "from_y", "from_height",
                                 "to_name",   "to_x",   "to_y",   "to_height"};
    int col[8];
    for (int k = 0; k < 8; ++k) {
        col[k] = columnOf(column_of, names[k]);
        if (col[k] < 0) {
            throw InputError(at(path, header.line) +
                             ": the header must name the columns from_name,from_x,from_y,"
                             "from_height,to_name,to_x,to_y,to_height (and optionally "
                             "frequency_mhz); '" +
                             names[k] + "' is missing in '" + echoText(headerText(header)) + "'");
        }
    }
    const int f_col = columnOf(column_of, "frequency_mhz");
    const std::size_t columns = header.fields.size();
    std::vector<LinkPair> pairs;
    for (std::size_t r = 1; r < records.size(); ++r) {
        const CsvRecord& row = records[r];
        const std::string where = at(path, row.line);
        requireFieldCount(row, columns, where, "frequency_mhz");
        for (int k : {1, 2, 3, 5, 6, 7}) {
            if (row.fields[col[k]].empty()) {
                throw InputError(where + ": " + names[k] +
                                 " is empty; every link needs the x, y and height of both ends");
            }
        }
        LinkPair p;
        p.line = row.line;
        const std::string number = std::to_string(pairs.size() + 1);
        p.from_name = row.fields[col[0]].empty() ? "from " + number : row.fields[col[0]];
        p.from_x = decimalField(where, "from_x", row.fields[col[1]]);
        p.from_y = decimalField(where, "from_y", row.fields[col[2]]);
        p.from_height_m = heightField(where, "from_height", row.fields[col[3]]);
        p.to_name = row.fields[col[4]].empty() ? "to " + number : row.fields[col[4]];
        p.to_x = decimalField(where, "to_x", row.fields[col[5]]);
        p.to_y = decimalField(where, "to_y", row.fields[col[6]]);
        p.to_height_m = heightField(where, "to_height", row.fields[col[7]]);
        if (f_col >= 0 && !row.fields[f_col].empty()) {
            const std::string& t = row.fields[f_col];
            const auto f = parseDecimal(t);
            if (!f || !(*f > 0)) {
                throw InputError(where + ": frequency_mhz '" + echoText(t) +
                                 "' is not a positive decimal frequency in MHz");
            }
            p.frequency_mhz = *f;
        }
        pairs.push_back(p);
    }
    if (pairs.empty())
        throw InputError(path + ": the pairs file has a header but no pairs");
    return pairs;
}

namespace {

std::string readCsvText(const std::string& path, const std::string& what) {
    std::ifstream in(path, std::ios::binary);
    if (!in)
        throw InputError(path + ": cannot open the " + what + " file");
    const std::string text((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
    if (in.bad())
        throw InputError(path + ": cannot read the " + what + " file");
    return text;
}

}  // namespace

std::vector<Site> readSitesCsv(const std::string& path, const std::string& role) {
    return parseSitesCsv(readCsvText(path, role + "s"), path, role);
}

std::vector<LinkPair> readPairsCsv(const std::string& path) {
    return parsePairsCsv(readCsvText(path, "pairs"), path);
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
