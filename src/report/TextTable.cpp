#include "lookfar/report/TextTable.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>

namespace lookfar {

namespace {
std::size_t displayWidth(const std::string& s) {
    std::size_t n = 0;
    for (unsigned char c : s) {
        if ((c & 0xC0) != 0x80)
            ++n;
    }
    return n;
}
bool looksNumeric(const std::string& s) {
    if (s.empty())
        return false;
    char c = s[0];
    return (c >= '0' && c <= '9') || c == '-' || c == '+' || c == '.';
}
}  // namespace

std::string TextTable::render() const {
    std::size_t ncols = header_.size();
    for (const auto& r : rows_)
        ncols = std::max(ncols, r.size());
    std::vector<std::size_t> width(ncols, 0);
    auto measure = [&](const std::vector<std::string>& r) {
        for (std::size_t i = 0; i < r.size(); ++i)
            width[i] = std::max(width[i], displayWidth(r[i]));
    };
    measure(header_);
    for (const auto& r : rows_)
        measure(r);
    auto line = [&](const std::vector<std::string>& r, bool header) {
        std::string out = "  ";
        for (std::size_t i = 0; i < ncols; ++i) {
            std::string cell = i < r.size() ? r[i] : "";
            std::string pad(width[i] - displayWidth(cell), ' ');
            bool right = !header_.empty() && !header && i > 0 && looksNumeric(cell);
            out += right ? pad + cell : cell + pad;
            if (i + 1 < ncols)
                out += "  ";
        }
        while (!out.empty() && out.back() == ' ')
            out.pop_back();
        return out + "\n";
    };
    std::string out;
    if (!title_.empty())
        out += title_ + "\n";
    if (!header_.empty()) {
        out += line(header_, true);
        std::size_t total = 0;
        for (auto w : width)
            total += w + 2;
        out += "  " + std::string(total > 2 ? total - 2 : 0, '-') + "\n";
    }
    for (const auto& r : rows_)
        out += line(r, false);
    return out;
}

std::string printfNumber(const char* format, double v) {
    char buf[64];
    std::snprintf(buf, sizeof buf, format, v);
    return buf;
}

std::string formatNumber(double value, int decimals) {
    if (!std::isfinite(value))
        return std::isnan(value) ? "n/a" : (value > 0 ? "∞" : "-∞");
    char buf[64];
    std::snprintf(buf, sizeof buf, "%.*f", decimals, std::fabs(value));
    std::string s = buf;
    auto dot = s.find('.');
    std::string whole = dot == std::string::npos ? s : s.substr(0, dot);
    std::string frac = dot == std::string::npos ? "" : s.substr(dot);
    std::string grouped;
    int count = 0;
    for (auto it = whole.rbegin(); it != whole.rend(); ++it) {
        if (count && count % 3 == 0 && whole.size() > 4)
            grouped.insert(grouped.begin(), ' ');
        grouped.insert(grouped.begin(), *it);
        ++count;
    }
    bool negative = value < 0 && std::stod(buf) != 0.0;
    return (negative ? "-" : "") + grouped + frac;
}

std::string formatArea(double m2) {
    if (m2 >= 1e6)
        return formatNumber(m2 / 1e6, 3) + " km²";
    if (m2 >= 1e4)
        return formatNumber(m2 / 1e4, 2) + " ha";
    return formatNumber(m2, 0) + " m²";
}

std::string formatDistance(double m) {
    if (!std::isfinite(m))
        return "unlimited";
    if (m >= 10000)
        return formatNumber(m / 1000, 2) + " km";
    return formatNumber(m, 0) + " m";
}

}  // namespace lookfar
