#include "lookfar/io/RasterWriter.hpp"

#include <cpl_string.h>
#include <gdal.h>
#include <ogr_srs_api.h>
#include <sys/stat.h>
#include <unistd.h>

#include <algorithm>
#include <atomic>
#include <cerrno>
#include <cstdio>
#include <cstdlib>

#include "GdalSupport.hpp"
#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Progress.hpp"
#include "lookfar/core/Text.hpp"
#include "lookfar/io/OutputSet.hpp"

namespace lookfar {

namespace {

GDALDataType gdalType(PixelType t) {
    switch (t) {
        case PixelType::Byte:
            return GDT_Byte;
        case PixelType::UInt16:
            return GDT_UInt16;
        case PixelType::Float32:
            return GDT_Float32;
    }
    return GDT_Float32;
}

const char* resamplingName(Overviews o) {
    return o == Overviews::Average ? "AVERAGE" : "NEAREST";
}

// Overview factors 2, 4, 8, … until the smallest level fits in one 256-cell block.
std::vector<int> overviewFactors(int width, int height) {
    std::vector<int> f;
    const int longest = std::max(width, height);
    for (int k = 2; (longest + k / 2 - 1) / (k / 2) > 256; k *= 2)
        f.push_back(k);
    return f;
}

std::uint8_t mix(std::uint8_t a, std::uint8_t b, double t) {
    return static_cast<std::uint8_t>(a + (b - a) * t + 0.5);
}

}  // namespace

std::vector<Rgba> classPalette() {
    std::vector<Rgba> p(256, Rgba{0, 0, 0, 0});
    p[0] = {96, 108, 128, 255};  // hidden: slate blue-grey
    p[1] = {238, 170, 40, 255};  // visible: amber
    return p;
}

std::vector<Rgba> countPalette(int max_count) {
    // Three stops of our own: pale sand, copper, deep plum.
    const Rgba stops[3] = {{240, 224, 176, 255}, {196, 110, 50, 255}, {84, 28, 84, 255}};
    std::vector<Rgba> p(static_cast<std::size_t>(std::max(max_count, 1)) + 1);
    p[0] = {200, 200, 200, 255};
    for (int v = 1; v <= max_count; ++v) {
        const double t = max_count > 1 ? 2.0 * (v - 1) / (max_count - 1) : 1.0;
        const int i = t >= 1.0 ? 1 : 0;
        const double u = t - i;
        p[v] = {mix(stops[i][0], stops[i + 1][0], u), mix(stops[i][1], stops[i + 1][1], u),
                mix(stops[i][2], stops[i + 1][2], u), 255};
    }
    // No data (65535) stays transparent: GDAL pads the table with {0, 0, 0, 0}.
    return p;
}

std::vector<std::string> defaultCreationOptions(PixelType type) {
    return {"TILED=YES", "BLOCKXSIZE=256", "BLOCKYSIZE=256", "COMPRESS=DEFLATE",
            type == PixelType::Float32 ? "PREDICTOR=3" : "PREDICTOR=2", "BIGTIFF=IF_SAFER",
            // Blocks are compressed on every processor (the file's pixels are the same as on one).
            "NUM_THREADS=ALL_CPUS"};
}

void checkCreationOptions(const std::vector<std::string>& options, const std::string& option) {
    io_detail::ensureGdal();
    GDALDriverH drv = GDALGetDriverByName("GTiff");
    for (const auto& co : options) {
        std::string key, value;
        if (!splitKeyValue(co, &key, &value))
            throw UsageError(option + ": '" + echoText(co) +
                             "' is not KEY=VALUE (a KEY of letters, digits and _)");
        if (EQUAL(key.c_str(), "BLOCKXSIZE") || EQUAL(key.c_str(), "BLOCKYSIZE")) {
            char* end = nullptr;
            const long n = std::strtol(value.c_str(), &end, 10);
            if (value.empty() || *end != '\0' || n < 16 || n > 4096 || n % 16 != 0)
                throw UsageError(option + " " + echoText(co) +
                                 ": GeoTIFF blocks are 16 to 4096 cells, a multiple of 16");
        }
        char** one = CSLAddString(nullptr, co.c_str());
        CPLErrorReset();
        const int ok = GDALValidateCreationOptions(drv, one);
        CSLDestroy(one);
        if (!ok) {
            const std::string why = io_detail::lastGdalError();
            throw UsageError(option + " " + echoText(co) +
                             ": GDAL's GeoTIFF writer does not take it" +
                             (why.empty() ? std::string() : " (" + echoText(why) + ")"));
        }
    }
}

void checkRasterExtension(const std::string& path, const std::string& option) {
    const auto slash = path.find_last_of('/');
    const auto dot = path.find_last_of('.');
    std::string ext;
    if (dot != std::string::npos && (slash == std::string::npos || dot > slash))
        ext = path.substr(dot);
    if (EQUAL(ext.c_str(), ".tif") || EQUAL(ext.c_str(), ".tiff"))
        return;
    throw UsageError(option + " " + echoText(path) +
                     ": lookfar writes rasters as GeoTIFF; give the file name a .tif extension");
}

void checkOutputPath(const std::string& path, const std::vector<std::string>& inputs,
                     bool overwrite) {
    if (path.empty())
        throw OutputError("an output path is empty");
    std::string folder = folderOf(path);
    struct stat fst {};
    if (stat(folder.c_str(), &fst) != 0 || !S_ISDIR(fst.st_mode)) {
        throw OutputError(path + ": the folder '" + folder + "' does not exist");
    }
    if (access(folder.c_str(), W_OK) != 0) {
        throw OutputError(path + ": the folder '" + folder + "' is not writable");
    }
    struct stat ost {};
    if (stat(path.c_str(), &ost) == 0) {
        for (const auto& in : inputs) {
            struct stat ist {};
            if (!in.empty() && stat(in.c_str(), &ist) == 0 && ist.st_dev == ost.st_dev &&
                ist.st_ino == ost.st_ino) {
                throw OutputError(path + ": the output is the same file as the input '" + in +
                                  "'; choose another output path");
            }
        }
        if (S_ISDIR(ost.st_mode))
            throw OutputError(path + ": the output path is a folder");
        if (!overwrite) {
            throw OutputError(path + ": the file exists; give --overwrite to replace it");
        }
        if (access(path.c_str(), W_OK) != 0) {
            throw OutputError(path + ": the existing file is not writable");
        }
    }
}

RasterWriter::RasterWriter(RasterSpec spec) : spec_(std::move(spec)) {
    io_detail::ensureGdal();
    GDALDriverH drv = GDALGetDriverByName("GTiff");
    if (!drv)
        throw InternalError("GDAL has no GTiff driver");
    temp_path_ = temporaryPathFor(spec_.path, ".tif");
    std::vector<std::string> opts = spec_.creation_options.empty()
                                        ? defaultCreationOptions(spec_.type)
                                        : spec_.creation_options;
    if (!spec_.creation_options.empty()) {
        // User options are added to the defaults; a user KEY replaces the default KEY.
        std::vector<std::string> merged;
        for (const auto& d : defaultCreationOptions(spec_.type)) {
            std::string key = d.substr(0, d.find('='));
            bool replaced = false;
            for (const auto& u : spec_.creation_options) {
                if (EQUAL(u.substr(0, u.find('=')).c_str(), key.c_str()))
                    replaced = true;
            }
            if (!replaced)
                merged.push_back(d);
        }
        merged.insert(merged.end(), spec_.creation_options.begin(), spec_.creation_options.end());
        opts = merged;
    }
    char** copts = nullptr;
    for (const auto& o : opts)
        copts = CSLAddString(copts, o.c_str());
    GDALDatasetH ds = GDALCreate(drv, temp_path_.c_str(), spec_.width, spec_.height, spec_.bands,
                                 gdalType(spec_.type), copts);
    CSLDestroy(copts);
    if (!ds) {
        std::remove(temp_path_.c_str());
        throw OutputError(spec_.path + ": cannot create the raster (" + io_detail::lastGdalError() +
                          ")");
    }
    dataset_ = ds;
    GDALSetGeoTransform(ds, spec_.geotransform.data());
    if (!spec_.crs_wkt.empty())
        GDALSetProjection(ds, spec_.crs_wkt.c_str());
    for (const auto& [key, value] : spec_.metadata) {
        GDALSetMetadataItem(ds, key.c_str(), value.c_str(), nullptr);
    }
    for (int b = 1; b <= spec_.bands; ++b) {
        GDALRasterBandH band = GDALGetRasterBand(ds, b);
        GDALSetRasterNoDataValue(band, spec_.nodata);
        if (static_cast<int>(spec_.band_descriptions.size()) >= b) {
            GDALSetDescription(band, spec_.band_descriptions[b - 1].c_str());
        }
        if (!spec_.unit_type.empty())
            GDALSetRasterUnitType(band, spec_.unit_type.c_str());
    }
    if (!spec_.palette.empty() && spec_.type != PixelType::Float32) {
        GDALColorTableH table = GDALCreateColorTable(GPI_RGB);
        for (std::size_t i = 0; i < spec_.palette.size(); ++i) {
            const GDALColorEntry e{spec_.palette[i][0], spec_.palette[i][1], spec_.palette[i][2],
                                   spec_.palette[i][3]};
            GDALSetColorEntry(table, static_cast<int>(i), &e);
        }
        GDALRasterBandH band = GDALGetRasterBand(ds, 1);
        GDALSetRasterColorTable(band, table);
        GDALSetRasterColorInterpretation(band, GCI_PaletteIndex);
        GDALDestroyColorTable(table);
    }
}

RasterWriter::~RasterWriter() {
    if (dataset_)
        GDALClose(static_cast<GDALDatasetH>(dataset_));
    if (!handed_over_)
        std::remove(temp_path_.c_str());
}

void RasterWriter::writeRows(int band, int row0, int rows, const void* data) {
    if (!dataset_)
        throw InternalError("write to a closed raster " + spec_.path);
    GDALRasterBandH b = GDALGetRasterBand(static_cast<GDALDatasetH>(dataset_), band);
    if (GDALRasterIO(b, GF_Write, 0, row0, spec_.width, rows, const_cast<void*>(data), spec_.width,
                     rows, gdalType(spec_.type), 0, 0) != CE_None) {
        throw OutputError(spec_.path + ": writing failed (" + io_detail::lastGdalError() + ")");
    }
}

void RasterWriter::writeWindow(int band, int col0, int row0, int width, int height,
                               const void* data, int line_stride) {
    if (!dataset_)
        throw InternalError("write to a closed raster " + spec_.path);
    GDALRasterBandH b = GDALGetRasterBand(static_cast<GDALDatasetH>(dataset_), band);
    const GDALDataType type = gdalType(spec_.type);
    const int bytes = GDALGetDataTypeSizeBytes(type);
    if (GDALRasterIO(b, GF_Write, col0, row0, width, height, const_cast<void*>(data), width, height,
                     type, bytes, line_stride * bytes) != CE_None) {
        throw OutputError(spec_.path + ": writing failed (" + io_detail::lastGdalError() + ")");
    }
}

void RasterWriter::flush() {
    if (!dataset_)
        return;
    CPLErrorReset();
    GDALFlushCache(static_cast<GDALDatasetH>(dataset_));
    if (CPLGetLastErrorType() >= CE_Failure) {
        throw OutputError(spec_.path + ": writing failed (" + io_detail::lastGdalError() + ")");
    }
}

void RasterWriter::blockSize(int& cols, int& rows) const {
    cols = rows = 0;
    if (!dataset_)
        return;
    GDALGetBlockSize(GDALGetRasterBand(static_cast<GDALDatasetH>(dataset_), 1), &cols, &rows);
}

void RasterWriter::writeBlock(int band, int block_col, int block_row, const void* data) {
    if (!dataset_)
        throw InternalError("write to a closed raster " + spec_.path);
    GDALRasterBandH b = GDALGetRasterBand(static_cast<GDALDatasetH>(dataset_), band);
    if (GDALWriteBlock(b, block_col, block_row, const_cast<void*>(data)) != CE_None) {
        throw OutputError(spec_.path + ": writing failed (" + io_detail::lastGdalError() + ")");
    }
}

std::string RasterWriter::finish() {
    if (!dataset_)
        throw InternalError("finish of a closed raster " + spec_.path);
    GDALDatasetH ds = static_cast<GDALDatasetH>(dataset_);
    dataset_ = nullptr;
    CPLErrorReset();
    errno = 0;
    const bool cog = spec_.layout == RasterLayout::Cog;
    if (!cog && spec_.overviews != Overviews::None) {
        auto factors = overviewFactors(spec_.width, spec_.height);
        if (!factors.empty() && GDALBuildOverviews(ds, resamplingName(spec_.overviews),
                                                   static_cast<int>(factors.size()), factors.data(),
                                                   0, nullptr, nullptr, nullptr) != CE_None) {
            const std::string why = io_detail::lastGdalError();
            GDALClose(ds);
            throw OutputError(spec_.path + ": building the overviews failed (" +
                              writeFailureReason(spec_.path, why, errno) + ")");
        }
    }
    GDALFlushCache(ds);
    GDALClose(ds);
    int err = errno;
    if (CPLGetLastErrorType() >= CE_Failure) {
        throw OutputError(spec_.path + ": finishing the file failed (" +
                          writeFailureReason(spec_.path, io_detail::lastGdalError(), err) + ")");
    }
    if (cog)
        rewriteAsCog();
    handed_over_ = true;
    return temp_path_;
}

void RasterWriter::rewriteAsCog() {
    // The COG driver only copies: the finished GeoTIFF is copied into the cloud-optimised
    // layout (overviews built on the way), then removed.
    GDALDriverH drv = GDALGetDriverByName("COG");
    if (!drv)
        throw InternalError("GDAL has no COG driver");
    const std::string plain = temp_path_;
    const std::string cog_temp = temporaryPathFor(spec_.path, ".tif");
    GDALDatasetH src = GDALOpen(plain.c_str(), GA_ReadOnly);
    if (!src)
        throw OutputError(spec_.path + ": reopening the finished file failed (" +
                          io_detail::lastGdalError() + ")");
    const Overviews o = spec_.overviews == Overviews::None ? Overviews::Nearest : spec_.overviews;
    char** copts = nullptr;
    copts = CSLSetNameValue(copts, "COMPRESS", "DEFLATE");
    copts = CSLSetNameValue(copts, "PREDICTOR", "YES");
    copts = CSLSetNameValue(copts, "BLOCKSIZE", "256");
    copts = CSLSetNameValue(copts, "BIGTIFF", "IF_SAFER");
    copts = CSLSetNameValue(copts, "NUM_THREADS", "ALL_CPUS");
    copts = CSLSetNameValue(copts, "RESAMPLING", resamplingName(o));
    copts = CSLSetNameValue(copts, "OVERVIEW_RESAMPLING", resamplingName(o));
    for (const auto& u : spec_.creation_options) {
        const auto eq = u.find('=');
        if (eq != std::string::npos)
            copts = CSLSetNameValue(copts, u.substr(0, eq).c_str(), u.substr(eq + 1).c_str());
    }
    CPLErrorReset();
    errno = 0;
    GDALDatasetH out = GDALCreateCopy(drv, cog_temp.c_str(), src, FALSE, copts, nullptr, nullptr);
    CSLDestroy(copts);
    GDALClose(src);
    std::remove(plain.c_str());
    temp_path_ = cog_temp;
    if (out)
        GDALClose(out);
    const int err = errno;
    if (!out || CPLGetLastErrorType() >= CE_Failure) {
        std::remove(cog_temp.c_str());
        throw OutputError(spec_.path + ": writing the cloud-optimised GeoTIFF failed (" +
                          writeFailureReason(spec_.path, io_detail::lastGdalError(), err) + ")");
    }
}

void RasterWriter::commit() {
    OutputSet one;
    one.addRaster(*this);
    one.commit();
}

}  // namespace lookfar
