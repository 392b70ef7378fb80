// Exact statistics of a grid given piece by piece (see GridStats.hpp).
#include "lookfar/stats/GridStats.hpp"

#include <cmath>

namespace lookfar {

void ExactGridStats::add(const float* data, int width, int height, std::size_t stride) {
    for (int r = 0; r < height; ++r) {
        const float* row = data + r * stride;
        for (int c = 0; c < width; ++c) {
            const float v = row[c];
            if (std::isnan(v))
                continue;
            ++cells_;
            sum_ += static_cast<Sum>(std::ldexp(static_cast<double>(v), 64));
            if (!(v >= min_))
                min_ = v;
            if (!(v <= max_))
                max_ = v;
        }
    }
}

double ExactGridStats::mean() const {
    if (cells_ == 0)
        return std::numeric_limits<double>::quiet_NaN();
    return std::ldexp(static_cast<double>(sum_), -64) / static_cast<double>(cells_);
}

}  // namespace lookfar
