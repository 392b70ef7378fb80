#pragma once
// Writing rasters through GDAL, safely: the raster goes to a temporary file in the output's
// folder, finished by finish() and renamed into place with the run's other outputs by an
// OutputSet (or by commit() alone); a writer destroyed before finish() (an error, Ctrl-C) removes
// its temporary file, so no partial file is ever left at the output path.
#include <array>
#include <cstdint>
#include <map>
#include <memory>
#include <string>
#include <vector>

#include "lookfar/core/GridGeometry.hpp"

namespace lookfar {

enum class PixelType { Byte, UInt16, Float32 };

/// How the file is laid out: a tiled GeoTIFF, or a cloud-optimised GeoTIFF (tiles and
/// overviews in the order a reader over HTTP fetches them; always with overviews).
enum class RasterLayout { GTiff, Cog };

/// Reduced-resolution copies inside the file: none, nearest (classes and counts keep their
/// values) or average (continuous values).
enum class Overviews { None, Nearest, Average };

/// One colour of a palette: red, green, blue, alpha (0 transparent … 255 opaque).
using Rgba = std::array<std::uint8_t, 4>;

struct RasterSpec {
    std::string path;
    int width = 0;
    int height = 0;
    int bands = 1;
    PixelType type = PixelType::Float32;
    double nodata = -9999.0;
    std::array<double, 6> geotransform{0, 1, 0, 0, 0, -1};
    std::string crs_wkt;
    std::vector<std::string> band_descriptions;   ///< one per band (may be empty)
    std::map<std::string, std::string> metadata;  ///< dataset metadata, e.g. LOOKFAR_*
    std::vector<std::string> creation_options;    ///< KEY=VALUE; defaults when empty
    std::string unit_type;                        ///< band unit type ("m", "deg"), optional
    /// Colour table of band 1 (Byte and UInt16 only): entry i colours value i. Empty: none.
    std::vector<Rgba> palette;
    RasterLayout layout = RasterLayout::GTiff;
    Overviews overviews = Overviews::None;  ///< a Cog layout without them uses Nearest
};

/// lookfar's colours for a visibility class layer (0 hidden, 1 visible or served, 255 no data),
/// docs/outputs.md: 0 slate blue-grey, 1 amber, 255 transparent.
std::vector<Rgba> classPalette();
/// lookfar's ramp for a count layer with counts 0…max_count and no data at 65535: 0 pale grey,
/// then from pale sand through copper to deep plum at max_count; no data transparent.
std::vector<Rgba> countPalette(int max_count);

/// lookfar's default GeoTIFF creation options for a pixel type: tiled, DEFLATE, predictor,
/// compressed on every processor.
std::vector<std::string> defaultCreationOptions(PixelType type);

/// Checks GeoTIFF creation options before any work: each KEY=VALUE must be one that GDAL's GeoTIFF
/// writer accepts with that value, and block sizes must be multiples of 16 (TIFF 6.0, section 15:
/// tile width and length). Throws UsageError naming `option` and the offending KEY=VALUE.
void checkCreationOptions(const std::vector<std::string>& options, const std::string& option);

/// Checks that a raster output's file name asks for a GeoTIFF: `.tif` or `.tiff`, any case.
/// Throws UsageError naming `option` and the path (lookfar writes its rasters as GeoTIFF only).
void checkRasterExtension(const std::string& path, const std::string& option);

/// Checks an output path before any work: its folder exists and is writable, it is not the
/// same file as any of `inputs` (compared as files), and it does not exist unless `overwrite`.
/// Throws OutputError naming the path.
void checkOutputPath(const std::string& path, const std::vector<std::string>& inputs,
                     bool overwrite);

class RasterWriter {
  public:
    explicit RasterWriter(RasterSpec spec);
    ~RasterWriter();
    RasterWriter(const RasterWriter&) = delete;
    RasterWriter& operator=(const RasterWriter&) = delete;

    const RasterSpec& spec() const { return spec_; }
    /// Writes `rows` full rows of band `band` (1-based) starting at `row0`; `data` holds
    /// rows × width values of the spec's pixel type (uint8_t, uint16_t or float).
    void writeRows(int band, int row0, int rows, const void* data);
    /// Writes a whole band.
    void writeBand(int band, const void* data) { writeRows(band, 0, spec_.height, data); }
    /// Writes a `width` × `height` window of band `band` (1-based) whose top-left cell is
    /// (col0, row0); value (c, r) of the window is data[r · line_stride + c], in elements of the
    /// spec's pixel type.
    void writeWindow(int band, int col0, int row0, int width, int height, const void* data,
                     int line_stride);
    /// Writes the blocks GDAL holds in its cache for this raster and drops them (keeps the
    /// memory of a raster written piece by piece bounded).
    void flush();
    /// Block size of the raster (columns, rows).
    void blockSize(int& cols, int& rows) const;
    /// Writes one whole block of band `band` (1-based), bypassing GDAL's block cache: `data` holds
    /// cols × rows values of the block (block size as blockSize(); values beyond the raster's edge
    /// are ignored). For rasters written block by block in many bands, GDAL's cache would keep a
    /// block per band.
    void writeBlock(int band, int block_col, int block_row, const void* data);
    /// Closes the file (its temporary is then complete) and hands the temporary file to the
    /// caller, who renames or removes it (OutputSet does). Throws OutputError (the message says
    /// when the disk is full); the writer then still removes its temporary.
    std::string finish();
    /// finish() and rename into place, for a run with this one output. Throws OutputError, or
    /// Interrupted when the run was interrupted (then nothing is renamed).
    void commit();

  private:
    void rewriteAsCog();

    RasterSpec spec_;
    std::string temp_path_;
    void* dataset_ = nullptr;  // GDALDatasetH
    bool handed_over_ = false;
};

}  // namespace lookfar
