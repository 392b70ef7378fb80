#pragma once
// The CSV of sites, stations and candidates (docs/design.md): a header row with columns
// name,x,y and an optional height (metres above ground; suffixes m, ft, us-ft accepted),
// comma-separated, fields may be quoted ("a, b" and "" inside quotes), UTF-8.
#include <optional>
#include <string>
#include <vector>

namespace lookfar {

struct Site {
    std::string name;
    double x = 0;
    double y = 0;
    std::optional<double> height_m;  ///< observer height for this site, if given
    int line = 0;                    ///< line of the file (header = line 1)
};

/// Reads `path`. Throws InputError naming the file, the line and the offending value for a
/// missing file, missing columns, an empty file, a malformed number or a non-finite or
/// negative height.
std::vector<Site> readSitesCsv(const std::string& path);

/// Splits one CSV record (RFC 4180 quoting); throws InputError on an unterminated quote.
std::vector<std::string> splitCsvRecord(const std::string& line, const std::string& path,
                                        int line_number);

/// Quotes a field for CSV output when it holds a comma, quote or newline.
std::string csvField(const std::string& value);

}  // namespace lookfar
