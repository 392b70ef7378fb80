#pragma once
// CoverageSet: a set of cells of a grid (e.g. the cells one site sees), held as one bit per
// cell over a window of the grid. The window's columns are widened to whole 64-column words of
// the full grid, so that sets over different windows line up word for word: counting the cells
// of one set not yet in another is a popcount of (a & ~b) per word.
#include <cstdint>
#include <vector>

namespace lookfar {

class CoverageSet {
  public:
    CoverageSet() = default;
    /// An empty set able to hold the cells of columns [col_lo, col_hi] and rows
    /// [row_lo, row_hi] (inclusive, clipped to the grid) of a grid_width × grid_height grid.
    CoverageSet(int grid_width, int grid_height, int col_lo, int col_hi, int row_lo, int row_hi);
    /// An empty set able to hold every cell of the grid.
    static CoverageSet wholeGrid(int grid_width, int grid_height);

    int gridWidth() const { return grid_width_; }
    int gridHeight() const { return grid_height_; }
    int rowBegin() const { return row_begin_; }    ///< first row of the window
    int rowEnd() const { return row_end_; }        ///< one past the last row
    int wordBegin() const { return word_begin_; }  ///< first 64-column word of the window
    int wordEnd() const { return word_end_; }      ///< one past the last word
    bool empty() const { return row_end_ <= row_begin_ || word_end_ <= word_begin_; }

    /// Adds a cell; it must lie inside the window.
    void insert(int col, int row);
    /// True when the cell is in the set (false outside the window).
    bool contains(int col, int row) const;
    /// Number of cells in the set.
    std::int64_t count() const;
    /// The 64-bit word `word` (grid word index, in [wordBegin, wordEnd)) of row `row` (in
    /// [rowBegin, rowEnd)); bit b is column 64·word + b.
    std::uint64_t word(int row, int word) const {
        return bits_[static_cast<std::size_t>(row - row_begin_) * words_ + (word - word_begin_)];
    }
    /// Adds every cell of `other`, whose window must lie inside this one's.
    void unite(const CoverageSet& other);
    /// Bytes held by the bits.
    std::size_t memoryBytes() const { return bits_.size() * sizeof(std::uint64_t); }

    /// Calls f(col, row) for every cell of the set, row by row, west to east.
    template <typename F>
    void forEachCell(F&& f) const {
        for (int r = row_begin_; r < row_end_; ++r) {
            for (int w = word_begin_; w < word_end_; ++w) {
                std::uint64_t bits = word(r, w);
                while (bits) {
                    const int b = __builtin_ctzll(bits);
                    f(64 * w + b, r);
                    bits &= bits - 1;
                }
            }
        }
    }

  private:
    int grid_width_ = 0, grid_height_ = 0;
    int row_begin_ = 0, row_end_ = 0;
    int word_begin_ = 0, word_end_ = 0;
    int words_ = 0;  ///< words per row of the window
    std::vector<std::uint64_t> bits_;
};

}  // namespace lookfar
