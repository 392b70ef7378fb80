#pragma once
// A readable, aligned table for the terminal: a title, then label/value rows or columns.
#include <string>
#include <vector>

namespace lookfar {

class TextTable {
  public:
    explicit TextTable(std::string title = "") : title_(std::move(title)) {}
    /// Column headers for a columnar table (leave unset for a two-column key/value table).
    void setHeader(std::vector<std::string> header) { header_ = std::move(header); }
    void addRow(std::vector<std::string> cells) { rows_.push_back(std::move(cells)); }
    /// A key/value row.
    void add(const std::string& key, const std::string& value) { rows_.push_back({key, value}); }
    /// Renders with columns padded to their widest cell (UTF-8 aware); numbers right-aligned.
    std::string render() const;

  private:
    std::string title_;
    std::vector<std::string> header_;
    std::vector<std::vector<std::string>> rows_;
};

/// `v` through printf's `format` (one double conversion).
std::string printfNumber(const char* format, double v);
/// Fixed-point formatting with thousands separators: 1234567.8 → "1 234 567.8".
std::string formatNumber(double value, int decimals);
/// Area in the most readable of m², ha, km².
std::string formatArea(double m2);
/// Distance in m below 10 km, else km.
std::string formatDistance(double m);

}  // namespace lookfar
