#pragma once
// Grid<T>: a row-major raster of width × height cells held in memory. Cell (col, row) is at
// index row * width + col; row 0 is the top (north) of the raster.
#include <cstddef>
#include <vector>

namespace lookfar {

template <typename T>
class Grid {
  public:
    Grid() = default;
    Grid(int width, int height, T fill = T{})
        : width_(width), height_(height), cells_(static_cast<std::size_t>(width) * height, fill) {}

    int width() const { return width_; }
    int height() const { return height_; }
    std::size_t size() const { return cells_.size(); }
    bool empty() const { return cells_.empty(); }

    bool contains(int col, int row) const {
        return col >= 0 && row >= 0 && col < width_ && row < height_;
    }
    std::size_t index(int col, int row) const {
        return static_cast<std::size_t>(row) * width_ + col;
    }

    T& operator()(int col, int row) { return cells_[index(col, row)]; }
    const T& operator()(int col, int row) const { return cells_[index(col, row)]; }

    T* data() { return cells_.data(); }
    const T* data() const { return cells_.data(); }
    T* row(int r) { return cells_.data() + static_cast<std::size_t>(r) * width_; }
    const T* row(int r) const { return cells_.data() + static_cast<std::size_t>(r) * width_; }

    std::vector<T>& cells() { return cells_; }
    const std::vector<T>& cells() const { return cells_; }

    void fill(T value) { cells_.assign(cells_.size(), value); }

  private:
    int width_ = 0;
    int height_ = 0;
    std::vector<T> cells_;
};

}  // namespace lookfar
