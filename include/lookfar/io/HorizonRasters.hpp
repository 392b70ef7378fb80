#pragma once
// The horizon's rasters written as the engines deliver them: the angle and distance bands
// rectangle by rectangle (one band per direction), the sky-view factor and the dip tile core by
// tile core, with NaN written as the horizon no-data value and memory bounded whatever the
// number of directions. The run layer opens the writers and commits them (HorizonRun).
#include <cstddef>
#include <vector>

#include "lookfar/horizon/HorizonScan.hpp"
#include "lookfar/horizon/HorizonTiling.hpp"
#include "lookfar/io/RasterWriter.hpp"
#include "lookfar/stats/GridStats.hpp"

namespace lookfar {

constexpr float kHorizonNoData = -9999.0f;  // docs/design.md: horizon rasters use −9999

/// Creation options of a raster whose bands are written one direction after another
/// (band-interleaved 128 × 128 blocks, fastest DEFLATE), unless the user gave their own.
void streamingBandLayout(RasterSpec& spec);

/// Streams rectangles to the angle and distance rasters (either may be null), NaN → −9999, with
/// GDAL's cache flushed every few MiB so that memory stays bounded whatever N.
class HorizonRasterSink final : public HorizonSink {
  public:
    HorizonRasterSink(RasterWriter* angle, RasterWriter* distance);
    bool any_horizon = false;  ///< a cell of a rectangle written had a horizon

    bool wantsRectangles() const override { return angle_ || distance_; }
    void rectangle(int index, int col0, int row0, int width, int height, int stride,
                   const float* angle, const float* distance) override;
    void endDirection(int) override { flush(); }

  private:
    static constexpr std::size_t kFlushBytes = 2u << 20;
    void put(RasterWriter* w, int index, int col0, int row0, int width, int height, int stride,
             const float* data);
    void flush();
    int block_cols_ = 0, block_rows_ = 0;
    RasterWriter* angle_;
    RasterWriter* distance_;
    std::vector<float> buf_;
    std::size_t written_ = 0;
};

/// The outputs of the tiles: the angle and distance rasters through `rasters`, the sky-view factor
/// and the dip written tile core by tile core (NaN → −9999), their statistics summed exactly.
class HorizonTileWriter final : public TiledHorizonSink {
  public:
    HorizonTileWriter(RasterWriter* svf, RasterWriter* dip) : svf_(svf), dip_(dip) {}
    HorizonSink* rasters = nullptr;
    ExactGridStats svf_stats, dip_stats;

    void beginDirection(int index, double azimuth_deg) override {
        rasters->beginDirection(index, azimuth_deg);
    }
    void endDirection(int index) override { rasters->endDirection(index); }
    bool wantsRectangles() const override { return rasters->wantsRectangles(); }
    void rectangle(int index, int col0, int row0, int width, int height, int stride,
                   const float* angle, const float* distance) override {
        rasters->rectangle(index, col0, row0, width, height, stride, angle, distance);
    }
    void summary(int col0, int row0, int width, int height, int stride, const float* svf,
                 const float* dip) override;

  private:
    void write(RasterWriter* w, ExactGridStats& stats, int col0, int row0, int width, int height,
               int stride, const float* data);
    RasterWriter* svf_;
    RasterWriter* dip_;
    std::vector<float> buf_;
};

}  // namespace lookfar
