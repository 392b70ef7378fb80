#include "lookfar/io/VectorOutput.hpp"

#include <cpl_string.h>
#include <gdal.h>
#include <gdal_alg.h>
#include <ogr_api.h>
#include <ogr_srs_api.h>

#include <algorithm>
#include <cctype>
#include <cerrno>
#include <cstdio>
#include <numeric>

#include "GdalSupport.hpp"
#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Progress.hpp"
#include "lookfar/io/OutputSet.hpp"

namespace lookfar {

namespace {

std::string lowerExtension(const std::string& path) {
    const auto slash = path.find_last_of('/');
    const auto dot = path.find_last_of('.');
    if (dot == std::string::npos || (slash != std::string::npos && dot < slash))
        return "";
    std::string ext = path.substr(dot);
    std::transform(ext.begin(), ext.end(), ext.begin(),
                   [](unsigned char c) { return static_cast<char>(std::tolower(c)); });
    return ext;
}

// A spatial reference that reads coordinates as x = easting or longitude, y = northing or
// latitude (the order of GDAL's geotransform), whatever the CRS's official axis order.
struct Srs {
    OGRSpatialReferenceH h = nullptr;
    explicit Srs(const std::string& wkt) {
        if (wkt.empty())
            return;
        h = OSRNewSpatialReference(wkt.c_str());
        if (h)
            OSRSetAxisMappingStrategy(h, OAMS_TRADITIONAL_GIS_ORDER);
    }
    ~Srs() {
        if (h)
            OSRRelease(h);
    }
    Srs(const Srs&) = delete;
    Srs& operator=(const Srs&) = delete;
};

// A vector dataset being written to its temporary file; removed unless finished.
class VectorFile {
  public:
    explicit VectorFile(const VectorLayerSpec& spec) : spec_(spec) {
        io_detail::ensureGdal();
        format_ = vectorFormatFor(spec.path, "output");
        const bool gpkg = format_ == VectorFormat::GeoPackage;
        GDALDriverH drv = GDALGetDriverByName(gpkg ? "GPKG" : "GeoJSON");
        if (!drv)
            throw InternalError(std::string("GDAL has no ") + (gpkg ? "GPKG" : "GeoJSON") +
                                " driver");
        if (!gpkg && spec.crs_wkt.empty())
            throw OutputError(spec.path +
                              ": GeoJSON is in WGS 84 longitude/latitude, and the DEM has no CRS "
                              "to convert from; write a .gpkg instead");
        temp_ = temporaryPathFor(spec.path, gpkg ? ".gpkg" : ".geojson");
        ds_ = GDALCreate(drv, temp_.c_str(), 0, 0, 0, GDT_Unknown, nullptr);
        if (!ds_)
            fail("cannot create the file");
        Srs srs(spec.crs_wkt);
        char** lco = nullptr;
        if (!gpkg) {
            lco = CSLSetNameValue(lco, "RFC7946", "YES");
            lco = CSLSetNameValue(lco, "WRITE_NAME", "YES");
        }
        if (!spec.description.empty())
            lco = CSLSetNameValue(lco, "DESCRIPTION", spec.description.c_str());
        layer_ = GDALDatasetCreateLayer(ds_, spec.layer.c_str(), srs.h, wkbUnknown, lco);
        CSLDestroy(lco);
        if (!layer_)
            fail("cannot create the layer");
        for (const auto& f : spec.fields)
            addField(f);
        if (gpkg)
            GDALDatasetStartTransaction(ds_, FALSE);
    }
    ~VectorFile() {
        if (ds_)
            GDALClose(ds_);
        if (!finished_)
            std::remove(temp_.c_str());
    }
    VectorFile(const VectorFile&) = delete;
    VectorFile& operator=(const VectorFile&) = delete;

    OGRLayerH layer() const { return layer_; }
    const VectorLayerSpec& spec() const { return spec_; }

    void addField(const VectorField& f) {
        OGRFieldType t = f.kind == VectorField::Kind::Integer ? OFTInteger64
                         : f.kind == VectorField::Kind::Real  ? OFTReal
                                                              : OFTString;
        OGRFieldDefnH d = OGR_Fld_Create(f.name.c_str(), t);
        const OGRErr e = OGR_L_CreateField(layer_, d, TRUE);
        OGR_Fld_Destroy(d);
        if (e != OGRERR_NONE)
            fail("cannot add the column '" + f.name + "'");
    }

    // Sets field `i` of `feature` to `v`.
    static void setValue(OGRFeatureH feature, int i, const VectorValue& v) {
        if (const auto* n = std::get_if<long long>(&v))
            OGR_F_SetFieldInteger64(feature, i, *n);
        else if (const auto* x = std::get_if<double>(&v))
            OGR_F_SetFieldDouble(feature, i, *x);
        else
            OGR_F_SetFieldString(feature, i, std::get<std::string>(v).c_str());
    }

    // Adds `feature` (which keeps belonging to the caller).
    void add(OGRFeatureH feature) {
        if (OGR_L_CreateFeature(layer_, feature) != OGRERR_NONE)
            fail("writing a feature failed");
    }

    // Closes the file and returns its temporary path.
    std::string finish() {
        CPLErrorReset();
        errno = 0;
        if (format_ == VectorFormat::GeoPackage && GDALDatasetCommitTransaction(ds_) != OGRERR_NONE)
            fail("writing failed");
        GDALClose(ds_);
        ds_ = nullptr;
        const int err = errno;
        if (CPLGetLastErrorType() >= CE_Failure)
            throw OutputError(spec_.path + ": finishing the file failed (" +
                              writeFailureReason(spec_.path, io_detail::lastGdalError(), err) +
                              ")");
        finished_ = true;
        return temp_;
    }

  private:
    [[noreturn]] void fail(const std::string& what) {
        const int err = errno;
        throw OutputError(spec_.path + ": " + what + " (" +
                          writeFailureReason(spec_.path, io_detail::lastGdalError(), err) + ")");
    }

    const VectorLayerSpec& spec_;
    VectorFormat format_ = VectorFormat::GeoPackage;
    std::string temp_;
    GDALDatasetH ds_ = nullptr;
    OGRLayerH layer_ = nullptr;
    bool finished_ = false;
};

struct Feature {
    OGRFeatureH h;
    explicit Feature(OGRLayerH layer) : h(OGR_F_Create(OGR_L_GetLayerDefn(layer))) {}
    ~Feature() { OGR_F_Destroy(h); }
    Feature(const Feature&) = delete;
    Feature& operator=(const Feature&) = delete;
};

// Union–find over provisional labels.
std::int32_t findRoot(std::vector<std::int32_t>& parent, std::int32_t a) {
    while (parent[a] != a) {
        parent[a] = parent[parent[a]];
        a = parent[a];
    }
    return a;
}

// Labels the 4-connected areas of equal value ≥ 0 with 1…n (0 = left out), two passes.
std::int32_t labelAreas(const Grid<std::int32_t>& values, Grid<std::int32_t>& labels) {
    const int w = values.width(), h = values.height();
    labels = Grid<std::int32_t>(w, h, 0);
    std::vector<std::int32_t> parent{0};
    for (int r = 0; r < h; ++r) {
        for (int c = 0; c < w; ++c) {
            const std::int32_t v = values(c, r);
            if (v < 0)
                continue;
            const std::int32_t left = (c > 0 && values(c - 1, r) == v) ? labels(c - 1, r) : 0;
            const std::int32_t up = (r > 0 && values(c, r - 1) == v) ? labels(c, r - 1) : 0;
            if (!left && !up) {
                const auto next = static_cast<std::int32_t>(parent.size());
                parent.push_back(next);
                labels(c, r) = next;
            } else if (left && up) {
                const std::int32_t a = findRoot(parent, left), b = findRoot(parent, up);
                parent[std::max(a, b)] = std::min(a, b);
                labels(c, r) = std::min(a, b);
            } else {
                labels(c, r) = left ? left : up;
            }
        }
    }
    // Final labels numbered in order of first appearance (top row first).
    std::vector<std::int32_t> final_label(parent.size(), 0);
    std::int32_t count = 0;
    for (std::size_t i = 1; i < parent.size(); ++i) {
        const std::int32_t root = findRoot(parent, static_cast<std::int32_t>(i));
        if (root == static_cast<std::int32_t>(i))
            final_label[i] = ++count;
        else
            final_label[i] = final_label[root];
    }
    for (auto& l : labels.cells())
        l = final_label[l];
    return count;
}

}  // namespace

VectorFormat vectorFormatFor(const std::string& path, const std::string& option) {
    const std::string ext = lowerExtension(path);
    if (ext == ".gpkg")
        return VectorFormat::GeoPackage;
    if (ext == ".geojson" || ext == ".json")
        return VectorFormat::GeoJson;
    throw UsageError(option + " " + path +
                     ": lookfar writes vector layers as .gpkg (GeoPackage, in the DEM's CRS) or "
                     ".geojson (WGS 84 longitude/latitude); give one of these extensions");
}

std::string writeVectorFeatures(const VectorLayerSpec& spec,
                                const std::vector<VectorFeature>& features) {
    VectorFile file(spec);
    for (const auto& f : features) {
        Feature feature(file.layer());
        for (std::size_t i = 0; i < f.values.size() && i < spec.fields.size(); ++i)
            VectorFile::setValue(feature.h, static_cast<int>(i), f.values[i]);
        OGRGeometryH g = OGR_G_CreateGeometry(f.vertices.size() == 1 ? wkbPoint : wkbLineString);
        for (const auto& v : f.vertices)
            OGR_G_AddPoint_2D(g, v[0], v[1]);
        OGR_F_SetGeometryDirectly(feature.h, g);
        file.add(feature.h);
    }
    return file.finish();
}

AreaPolygons writeAreaPolygons(const VectorLayerSpec& spec, const Grid<std::int32_t>& values,
                               const GridGeometry& geometry,
                               const std::vector<VectorValue>& common) {
    if (spec.fields.empty())
        throw InternalError("writeAreaPolygons: the spec names no value column");
    Grid<std::int32_t> labels;
    const std::int32_t n = labelAreas(values, labels);
    std::vector<std::int32_t> value_of(n + 1, 0);
    std::vector<std::size_t> cells_of(n + 1, 0);
    std::vector<double> area_of(n + 1, 0.0);
    for (int r = 0; r < labels.height(); ++r) {
        const double cell_area = geometry.cellAreaM2(r);
        for (int c = 0; c < labels.width(); ++c) {
            const std::int32_t l = labels(c, r);
            if (!l)
                continue;
            value_of[l] = values(c, r);
            ++cells_of[l];
            area_of[l] += cell_area;
        }
    }

    // The labels as a raster in memory, traced into polygons in the DEM's CRS.
    io_detail::ensureGdal();
    GDALDatasetH mem = GDALCreate(GDALGetDriverByName("MEM"), "", labels.width(), labels.height(),
                                  1, GDT_Int32, nullptr);
    GDALDatasetH traced =
        GDALCreate(GDALGetDriverByName("Memory"), "", 0, 0, 0, GDT_Unknown, nullptr);
    struct Closer {
        GDALDatasetH a, b;
        ~Closer() {
            if (a)
                GDALClose(a);
            if (b)
                GDALClose(b);
        }
    } closer{mem, traced};
    if (!mem || !traced)
        throw InternalError("GDAL cannot make an in-memory dataset");
    auto gt = geometry.geotransform();
    GDALSetGeoTransform(mem, gt.data());
    GDALRasterBandH band = GDALGetRasterBand(mem, 1);
    if (GDALRasterIO(band, GF_Write, 0, 0, labels.width(), labels.height(), labels.data(),
                     labels.width(), labels.height(), GDT_Int32, 0, 0) != CE_None)
        throw InternalError("GDAL cannot hold the area labels: " + io_detail::lastGdalError());
    OGRLayerH outline = GDALDatasetCreateLayer(traced, "outline", nullptr, wkbPolygon, nullptr);
    OGRFieldDefnH label_field = OGR_Fld_Create("label", OFTInteger);
    OGR_L_CreateField(outline, label_field, TRUE);
    OGR_Fld_Destroy(label_field);
    // The band is its own mask: label 0 (cells left out) makes no polygon.
    if (GDALPolygonize(band, band, outline, 0, nullptr, nullptr, nullptr) != CE_None)
        throw InternalError("tracing the areas failed: " + io_detail::lastGdalError());

    VectorFile file(spec);
    const int cells_field = static_cast<int>(spec.fields.size());
    file.addField({"cells", VectorField::Kind::Integer});
    file.addField({"area_m2", VectorField::Kind::Real});
    AreaPolygons out;
    OGR_L_ResetReading(outline);
    while (OGRFeatureH traced_feature = OGR_L_GetNextFeature(outline)) {
        const int l = OGR_F_GetFieldAsInteger(traced_feature, 0);
        if (l > 0 && l <= n) {
            Feature feature(file.layer());
            OGR_F_SetFieldInteger64(feature.h, 0, value_of[l]);
            for (std::size_t i = 0; i < common.size() && i + 1 < spec.fields.size(); ++i)
                VectorFile::setValue(feature.h, static_cast<int>(i + 1), common[i]);
            OGR_F_SetFieldInteger64(feature.h, cells_field, static_cast<long long>(cells_of[l]));
            OGR_F_SetFieldDouble(feature.h, cells_field + 1, area_of[l]);
            OGR_F_SetGeometry(feature.h, OGR_F_GetGeometryRef(traced_feature));
            file.add(feature.h);
            ++out.features;
            out.cells += cells_of[l];
            out.area_m2 += area_of[l];
        }
        OGR_F_Destroy(traced_feature);
        if (interruptFlag().load())
            throw Interrupted();
    }
    out.temp = file.finish();
    return out;
}

}  // namespace lookfar
