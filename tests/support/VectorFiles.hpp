#pragma once
// Reading back the vector layers lookfar writes, through OGR (the library every GIS reads them
// with): each feature's attributes as text, its vertices (points and lines) or, for polygons,
// OGR's planar area, the exterior ring's signed area as stored and the number of holes.
#include <gdal.h>
#include <gtest/gtest.h>
#include <ogr_api.h>

#include <array>
#include <map>
#include <string>
#include <vector>

namespace lookfar::testing {

struct VectorFeatureRead {
    std::map<std::string, std::string> fields;
    double x = 0, y = 0;                          ///< first vertex (points and lines)
    std::vector<std::array<double, 2>> vertices;  ///< points and lines
    double planar_area = 0;                       ///< polygons: OGR_G_Area
    double ring_signed_area = 0;  ///< polygons: exterior ring, shoelace (> 0 counter-clockwise)
    int holes = 0;
};

/// Signed area of a ring as its vertices are stored (shoelace formula).
inline double shoelace(OGRGeometryH ring) {
    double s = 0;
    const int n = OGR_G_GetPointCount(ring);
    for (int i = 0; i + 1 < n; ++i)
        s += OGR_G_GetX(ring, i) * OGR_G_GetY(ring, i + 1) -
             OGR_G_GetX(ring, i + 1) * OGR_G_GetY(ring, i);
    return s / 2;
}

/// The features of the first layer of `path`; a test failure (and none) when OGR cannot open it.
inline std::vector<VectorFeatureRead> readVectorFeatures(const std::string& path) {
    GDALAllRegister();
    std::vector<VectorFeatureRead> out;
    GDALDatasetH ds = GDALOpenEx(path.c_str(), GDAL_OF_VECTOR, nullptr, nullptr, nullptr);
    EXPECT_NE(ds, nullptr) << path;
    if (!ds)
        return out;
    OGRLayerH layer = GDALDatasetGetLayer(ds, 0);
    OGRFeatureDefnH defn = OGR_L_GetLayerDefn(layer);
    OGR_L_ResetReading(layer);
    while (OGRFeatureH f = OGR_L_GetNextFeature(layer)) {
        VectorFeatureRead rf;
        for (int i = 0; i < OGR_FD_GetFieldCount(defn); ++i)
            rf.fields[OGR_Fld_GetNameRef(OGR_FD_GetFieldDefn(defn, i))] =
                OGR_F_GetFieldAsString(f, i);
        if (OGRGeometryH g = OGR_F_GetGeometryRef(f)) {
            if (wkbFlatten(OGR_G_GetGeometryType(g)) == wkbPolygon) {
                rf.planar_area = OGR_G_Area(g);
                rf.ring_signed_area = shoelace(OGR_G_GetGeometryRef(g, 0));
                rf.holes = OGR_G_GetGeometryCount(g) - 1;
            } else {
                for (int i = 0; i < OGR_G_GetPointCount(g); ++i)
                    rf.vertices.push_back({OGR_G_GetX(g, i), OGR_G_GetY(g, i)});
                if (!rf.vertices.empty())
                    rf.x = rf.vertices[0][0], rf.y = rf.vertices[0][1];
            }
        }
        out.push_back(rf);
        OGR_F_Destroy(f);
    }
    GDALClose(ds);
    return out;
}

}  // namespace lookfar::testing
