#pragma once
// The CSV of sites, stations and candidates (DESIGN.md), read the same way by every command:
// RFC 4180 (comma-separated; a field may be quoted, and a quoted field may hold commas, doubled
// quotes and line breaks), UTF-8 with an optional byte-order mark, CRLF or LF line ends. The
// header row names the columns name,x,y and an optional height (metres above ground; a unit
// suffix m, km, ft or us-ft allowed, in any case); other columns are ignored; a column named
// twice is refused. Every row has as many fields as the header. x and y are finite decimal
// numbers (no hex, inf or nan); a height is at most kMaxHeightAboveGroundM. Blank lines are
// skipped. Each refusal is an InputError naming the file, the line (header = line 1) and the
// value, cut and escaped (echoText).
#include <optional>
#include <string>
#include <vector>

namespace lookfar {

struct Site {
    std::string name;
    double x = 0;
    double y = 0;
    std::optional<double> height_m;  ///< observer height for this site, if given
    int line = 0;                    ///< line of the file where the row starts (header = line 1)
};

/// One record of a CSV file: its fields and the line it starts on.
struct CsvRecord {
    std::vector<std::string> fields;
    int line = 0;
};

/// Reads `path`. `role` names a row in messages ("site", "station", "candidate"). Throws
/// InputError for a missing file and for everything the rules above refuse.
std::vector<Site> readSitesCsv(const std::string& path, const std::string& role = "site");

/// The same rules on the text of a file; `path` and `role` are only used in messages.
std::vector<Site> parseSitesCsv(const std::string& text, const std::string& path,
                                const std::string& role = "site");

/// Splits the text of a CSV file into records (RFC 4180); `path` names the file in messages.
/// Refuses bytes that are not UTF-8, NUL bytes, an unclosed quoted field, and a quote inside an
/// unquoted field or text after a closing quote. A leading byte-order mark is dropped; records
/// that are blank (only spaces and tabs, unquoted) are skipped.
std::vector<CsvRecord> parseCsvRecords(const std::string& text, const std::string& path);

/// One row of a pairs CSV (`lookfar link --pairs`): the two ends of a link.
struct LinkPair {
    std::string from_name, to_name;
    double from_x = 0, from_y = 0, to_x = 0, to_y = 0;  ///< as given (in --crs)
    double from_height_m = 0, to_height_m = 0;          ///< above the ground, metres
    std::optional<double> frequency_mhz;                ///< MHz (> 0), if the row gives one
    int line = 0;  ///< line of the file where the row starts (header = line 1)
};

/// Reads a pairs CSV: the rules above, with the columns from_name, from_x, from_y, from_height,
/// to_name, to_x, to_y, to_height (all required; heights take unit suffixes) and an optional
/// frequency_mhz (a positive decimal, empty = none). Empty names become "from N" / "to N" (N the
/// pair's number). Throws InputError naming the file, the line and the field.
std::vector<LinkPair> readPairsCsv(const std::string& path);
/// The same rules on the text of a file; `path` is only used in messages.
std::vector<LinkPair> parsePairsCsv(const std::string& text, const std::string& path);

/// Quotes a field for CSV output when it holds a comma, quote or line break, or starts or ends
/// with white space (which an unquoted field loses when read): parseCsvRecords reads it back
/// as `value`.
std::string csvField(const std::string& value);

}  // namespace lookfar
