// CoverageSet: one bit per cell over a window whose columns are whole 64-cell words of the grid.
//   word w of a row holds columns 64·w … 64·w + 63; bit b is column 64·w + b
#include "lookfar/siting/CoverageSet.hpp"

#include <algorithm>

#include "lookfar/core/Errors.hpp"

namespace lookfar {

CoverageSet::CoverageSet(int grid_width, int grid_height, int col_lo, int col_hi, int row_lo,
                         int row_hi)
    : grid_width_(grid_width), grid_height_(grid_height) {
    col_lo = std::max(col_lo, 0);
    col_hi = std::min(col_hi, grid_width - 1);
    row_lo = std::max(row_lo, 0);
    row_hi = std::min(row_hi, grid_height - 1);
    if (col_hi < col_lo || row_hi < row_lo)
        return;
    row_begin_ = row_lo;
    row_end_ = row_hi + 1;
    word_begin_ = col_lo / 64;
    word_end_ = col_hi / 64 + 1;
    words_ = word_end_ - word_begin_;
    bits_.assign(static_cast<std::size_t>(row_end_ - row_begin_) * words_, 0);
}

CoverageSet CoverageSet::wholeGrid(int grid_width, int grid_height) {
    return CoverageSet(grid_width, grid_height, 0, grid_width - 1, 0, grid_height - 1);
}

void CoverageSet::insert(int col, int row) {
    const int w = col / 64;
    if (row < row_begin_ || row >= row_end_ || col < 0 || w < word_begin_ || w >= word_end_ ||
        col >= grid_width_) {
        throw InternalError("CoverageSet::insert: cell outside the window");
    }
    bits_[static_cast<std::size_t>(row - row_begin_) * words_ + (w - word_begin_)] |=
        std::uint64_t{1} << (col % 64);
}

bool CoverageSet::contains(int col, int row) const {
    if (col < 0 || row < row_begin_ || row >= row_end_)
        return false;
    const int w = col / 64;
    if (w < word_begin_ || w >= word_end_)
        return false;
    return (word(row, w) >> (col % 64)) & 1u;
}

std::int64_t CoverageSet::count() const {
    std::int64_t n = 0;
    for (std::uint64_t b : bits_)
        n += __builtin_popcountll(b);
    return n;
}

void CoverageSet::unite(const CoverageSet& o) {
    if (o.empty())
        return;
    if (o.row_begin_ < row_begin_ || o.row_end_ > row_end_ || o.word_begin_ < word_begin_ ||
        o.word_end_ > word_end_) {
        throw InternalError("CoverageSet::unite: the other window is not inside this one");
    }
    for (int r = o.row_begin_; r < o.row_end_; ++r) {
        std::uint64_t* dst = bits_.data() + static_cast<std::size_t>(r - row_begin_) * words_ +
                             (o.word_begin_ - word_begin_);
        const std::uint64_t* src =
            o.bits_.data() + static_cast<std::size_t>(r - o.row_begin_) * o.words_;
        for (int w = 0; w < o.words_; ++w)
            dst[w] |= src[w];
    }
}

}  // namespace lookfar
