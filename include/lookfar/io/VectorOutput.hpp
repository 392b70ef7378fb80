#pragma once
// Vector outputs through OGR: points and lines (stations, sites, links) and the polygons of a
// class or count layer's connected areas, as a GeoPackage in the DEM's CRS or as RFC 7946
// GeoJSON (WGS 84 longitude/latitude, rings by the right-hand rule). Each is written to a
// temporary file first and handed to the run's OutputSet, like every other output.
#include <array>
#include <cstddef>
#include <cstdint>
#include <string>
#include <variant>
#include <vector>

#include "lookfar/core/Grid.hpp"
#include "lookfar/core/GridGeometry.hpp"

namespace lookfar {

enum class VectorFormat { GeoPackage, GeoJson };

/// The vector format a file name asks for, from its extension (case-insensitive): `.gpkg`, or
/// `.geojson`/`.json`. Throws UsageError naming `option`, the path and the formats lookfar
/// writes.
VectorFormat vectorFormatFor(const std::string& path, const std::string& option);

/// One attribute column.
struct VectorField {
    enum class Kind { Integer, Real, Text };
    std::string name;
    Kind kind = Kind::Text;
};
using VectorValue = std::variant<long long, double, std::string>;

/// What every vector output shares: its final path, layer name, CRS and columns.
struct VectorLayerSpec {
    std::string path;     ///< final path; the file is written to a temporary beside it
    std::string layer;    ///< layer name (GeoPackage table; GeoJSON "name")
    std::string crs_wkt;  ///< CRS of the coordinates given (the DEM's)
    std::vector<VectorField> fields;
    /// One line on how the layer was made (GeoPackage: layer description; GeoJSON: the
    /// collection's "description").
    std::string description;
};

/// A point (one vertex) or a line (two or more), in map coordinates of the spec's CRS, with one
/// value per field in the spec's order.
struct VectorFeature {
    std::vector<std::array<double, 2>> vertices;
    std::vector<VectorValue> values;
};

/// Writes `features` to a temporary file for spec.path and returns that file's path (hand it to
/// OutputSet::adopt). Throws OutputError (the message says when the disk is full).
std::string writeVectorFeatures(const VectorLayerSpec& spec,
                                const std::vector<VectorFeature>& features);

/// What writeAreaPolygons wrote.
struct AreaPolygons {
    std::string temp;          ///< the finished temporary file (hand it to OutputSet::adopt)
    std::size_t features = 0;  ///< polygons written
    std::size_t cells = 0;     ///< cells they cover
    double area_m2 = 0;        ///< sum of the features' area_m2
};

/// The polygons of the connected areas of `values`: every 4-connected set of cells of equal value
/// ≥ 0 becomes one polygon (with holes where other cells lie inside it); cells < 0 are left out.
/// Each feature carries its value (column spec.fields[0], Integer), its cell count `cells`, its
/// true ground area `area_m2` (the cells' GridGeometry::cellAreaM2, as the summaries count them),
/// then the values of spec.fields[1…] from `common` (the same for every feature, e.g. the
/// observers' names). Throws OutputError.
AreaPolygons writeAreaPolygons(const VectorLayerSpec& spec, const Grid<std::int32_t>& values,
                               const GridGeometry& geometry,
                               const std::vector<VectorValue>& common = {});

/// The value grid for writeAreaPolygons from a layer: keep(v) says which cells take part.
template <typename T, typename Keep>
Grid<std::int32_t> areaValues(const Grid<T>& layer, Keep keep) {
    Grid<std::int32_t> out(layer.width(), layer.height(), -1);
    for (std::size_t i = 0; i < layer.size(); ++i) {
        const T v = layer.data()[i];
        if (keep(v))
            out.data()[i] = static_cast<std::int32_t>(v);
    }
    return out;
}

}  // namespace lookfar
