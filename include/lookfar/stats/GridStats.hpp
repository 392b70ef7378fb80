#pragma once
// Statistics of a grid of results given piece by piece (tiles, blocks): the same bits whatever
// the pieces and their order, so a tiled run and one over the whole grid report the same figures.
#include <cstddef>
#include <cstdint>
#include <limits>

namespace lookfar {

/// Count, mean, smallest and largest of the cells with data (not NaN) of a summary grid given
/// piece by piece: the same bits whatever the pieces and their order (the sum is exact, in fixed
/// point of 2^-64; values under 2^-64 in size count as 0).
class ExactGridStats {
  public:
    /// The `width` × `height` cells at data[r · stride + c].
    void add(const float* data, int width, int height, std::size_t stride);
    std::int64_t cells() const { return cells_; }
    double mean() const;  ///< NaN when no cell has data
    double min() const { return min_; }
    double max() const { return max_; }

  private:
    __extension__ typedef __int128 Sum;
    Sum sum_ = 0;
    std::int64_t cells_ = 0;
    double min_ = std::numeric_limits<double>::quiet_NaN();
    double max_ = std::numeric_limits<double>::quiet_NaN();
};

}  // namespace lookfar
