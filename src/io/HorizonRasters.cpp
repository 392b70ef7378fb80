// The horizon's rasters written as the engines deliver them (see HorizonRasters.hpp).
#include "lookfar/io/HorizonRasters.hpp"

#include <strings.h>

#include <algorithm>
#include <cmath>
#include <cstring>

namespace lookfar {

void streamingBandLayout(RasterSpec& spec) {
    // Bands are written one direction after another: band-interleaved blocks are written once
    // each (pixel interleaving would rewrite every block N times). The fast engine delivers
    // 128 × 128 tiles: blocks of that size are written whole, once, and the band of tiles
    // waiting for their last line stays small.
    auto given = [&](const char* key) {
        for (const auto& co : spec.creation_options) {
            if (strncasecmp(co.c_str(), key, std::strlen(key)) == 0)
                return true;
        }
        return false;
    };
    if (!given("INTERLEAVE="))
        spec.creation_options.push_back("INTERLEAVE=BAND");
    // DEFLATE's fastest level: angles and distances are noisy floats that shrink by about
    // 16 % at any level, and level 6 took 2.4 times as long (2048² × 8, -o and --distance:
    // 8.4 s against 3.5 s, files 1.5 % smaller).
    if (!given("ZLEVEL="))
        spec.creation_options.push_back("ZLEVEL=1");
    if (!given("TILED=") && !given("BLOCKXSIZE=") && !given("BLOCKYSIZE=")) {
        spec.creation_options.push_back("BLOCKXSIZE=128");
        spec.creation_options.push_back("BLOCKYSIZE=128");
    }
}

HorizonRasterSink::HorizonRasterSink(RasterWriter* angle, RasterWriter* distance)
    : angle_(angle), distance_(distance) {
    for (RasterWriter* w : {angle, distance}) {
        if (w)
            w->blockSize(block_cols_, block_rows_);
    }
}

void HorizonRasterSink::rectangle(int index, int col0, int row0, int width, int height, int stride,
                                  const float* angle, const float* distance) {
    put(angle_, index, col0, row0, width, height, stride, angle);
    put(distance_, index, col0, row0, width, height, stride, distance);
    written_ += static_cast<std::size_t>(width) * height * 4;
    if (written_ > kFlushBytes)
        flush();
}

void HorizonRasterSink::put(RasterWriter* w, int index, int col0, int row0, int width, int height,
                            int stride, const float* data) {
    if (!w)
        return;
    // A rectangle that is one block of the raster is written as a block, past GDAL's cache
    // (which would keep one block per band: memory growing with N); others as a window.
    const bool block = block_cols_ > 0 && col0 % block_cols_ == 0 && row0 % block_rows_ == 0 &&
                       width <= block_cols_ && height <= block_rows_ &&
                       (width == block_cols_ || col0 + width == w->spec().width) &&
                       (height == block_rows_ || row0 + height == w->spec().height);
    const int out_w = block ? block_cols_ : width;
    buf_.assign(static_cast<std::size_t>(out_w) * (block ? block_rows_ : height), kHorizonNoData);
    for (int r = 0; r < height; ++r) {
        for (int c = 0; c < width; ++c) {
            const float v = data[static_cast<std::size_t>(r) * stride + c];
            any_horizon = any_horizon || !std::isnan(v);
            buf_[static_cast<std::size_t>(r) * out_w + c] = std::isnan(v) ? kHorizonNoData : v;
        }
    }
    if (block)
        w->writeBlock(index + 1, col0 / block_cols_, row0 / block_rows_, buf_.data());
    else
        w->writeWindow(index + 1, col0, row0, width, height, buf_.data(), width);
}

void HorizonRasterSink::flush() {
    if (angle_)
        angle_->flush();
    if (distance_)
        distance_->flush();
    written_ = 0;
}

void HorizonTileWriter::summary(int col0, int row0, int width, int height, int stride,
                                const float* svf, const float* dip) {
    write(svf_, svf_stats, col0, row0, width, height, stride, svf);
    write(dip_, dip_stats, col0, row0, width, height, stride, dip);
}

void HorizonTileWriter::write(RasterWriter* w, ExactGridStats& stats, int col0, int row0, int width,
                              int height, int stride, const float* data) {
    if (!w || !data)
        return;
    stats.add(data, width, height, static_cast<std::size_t>(stride));
    // Written a row of the raster's blocks at a time: the copy with −9999 for NaN stays one
    // strip, not the whole core (a 6272² core held 150 MiB more than the tile plan counts).
    int block_cols = 0, block_rows = 0;
    w->blockSize(block_cols, block_rows);
    const int strip = block_rows > 0 ? block_rows : 128;
    for (int top = 0; top < height;) {
        const int rows = std::min(height - top, strip - (row0 + top) % strip);
        buf_.resize(static_cast<std::size_t>(width) * rows);
        for (int r = 0; r < rows; ++r) {
            const float* in = data + static_cast<std::size_t>(top + r) * stride;
            for (int c = 0; c < width; ++c)
                buf_[static_cast<std::size_t>(r) * width + c] =
                    std::isnan(in[c]) ? kHorizonNoData : in[c];
        }
        w->writeWindow(1, col0, row0 + top, width, rows, buf_.data(), width);
        top += rows;
    }
    w->flush();
}

}  // namespace lookfar
