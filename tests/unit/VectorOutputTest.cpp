// Vector outputs: area polygons, points and lines read back with OGR (the library every GIS reads
// them with). Outside checks: the polygons' areas by OGR's own planar area on a projected grid
// (exact for cell-aligned outlines); RFC 7946 §3.1.6 (exterior rings counter-clockwise, holes
// clockwise) and §4 (WGS 84 longitude/latitude), with the expected longitude/latitude of a corner
// from PROJ (through OGR's coordinate transformation).
#include <cpl_conv.h>
#include <gdal.h>
#include <gtest/gtest.h>
#include <ogr_api.h>
#include <ogr_srs_api.h>

#include <cmath>
#include <map>

#include "../support/CliRunner.hpp"
#include "../support/VectorFiles.hpp"
#include "lookfar/core/Errors.hpp"
#include "lookfar/io/OutputSet.hpp"
#include "lookfar/io/VectorOutput.hpp"

using namespace lookfar;
using namespace lookfar::testing;

namespace {

// UTM zone 30N, 10 m cells, origin (400000, 5600000).
const std::array<double, 6> kGt{400000.0, 10.0, 0.0, 5600000.0, 0.0, -10.0};

std::string utm30nWkt() {
    OGRSpatialReferenceH s = OSRNewSpatialReference(nullptr);
    OSRImportFromEPSG(s, 32630);
    char* wkt = nullptr;
    OSRExportToWkt(s, &wkt);
    std::string out = wkt;
    CPLFree(wkt);
    OSRRelease(s);
    return out;
}

Grid<std::int32_t> gridFrom(const std::vector<std::string>& rows) {
    Grid<std::int32_t> g(static_cast<int>(rows[0].size()), static_cast<int>(rows.size()), -1);
    for (int r = 0; r < g.height(); ++r)
        for (int c = 0; c < g.width(); ++c)
            g(c, r) = rows[r][c] == '.' ? -1 : rows[r][c] - '0';
    return g;
}

// Longitude/latitude of a UTM 30N point, by PROJ through OGR.
std::array<double, 2> lonLatOfUtm30n(double x, double y) {
    OGRSpatialReferenceH utm = OSRNewSpatialReference(nullptr),
                         wgs = OSRNewSpatialReference(nullptr);
    OSRImportFromEPSG(utm, 32630);
    OSRImportFromEPSG(wgs, 4326);
    OSRSetAxisMappingStrategy(wgs, OAMS_TRADITIONAL_GIS_ORDER);
    OSRSetAxisMappingStrategy(utm, OAMS_TRADITIONAL_GIS_ORDER);
    OGRCoordinateTransformationH ct = OCTNewCoordinateTransformation(utm, wgs);
    EXPECT_TRUE(OCTTransform(ct, 1, &x, &y, nullptr));
    OCTDestroyCoordinateTransformation(ct);
    OSRRelease(utm);
    OSRRelease(wgs);
    return {x, y};
}

VectorLayerSpec areaSpec(const std::string& path) {
    return {path,
            "visible",
            utm30nWkt(),
            {{"count", VectorField::Kind::Integer}, {"sites", VectorField::Kind::Text}},
            "test areas"};
}

}  // namespace

TEST(VectorOutputTest, FormatFollowsTheExtension) {
    EXPECT_EQ(vectorFormatFor("a.gpkg", "--polygons"), VectorFormat::GeoPackage);
    EXPECT_EQ(vectorFormatFor("dir.v1/A.GeoJSON", "--polygons"), VectorFormat::GeoJson);
    EXPECT_EQ(vectorFormatFor("a.json", "--points"), VectorFormat::GeoJson);
    try {
        vectorFormatFor("dir.gpkg/areas.shp", "--polygons");
        FAIL() << "a .shp output was accepted";
    } catch (const UsageError& e) {
        const std::string m = e.what();
        EXPECT_NE(m.find("--polygons dir.gpkg/areas.shp"), std::string::npos) << m;
        EXPECT_NE(m.find(".gpkg"), std::string::npos) << m;
        EXPECT_NE(m.find(".geojson"), std::string::npos) << m;
    }
}

// Connected areas of equal value, 4-connected: a ring with a hole, a separate area of another
// value, and two cells touching only at a corner (two features).
TEST(VectorOutputTest, AreasAreTracedWithTheirCountsAndTrueAreas) {
    ScratchDir dir;
    const auto values = gridFrom({
        "111..2",
        "1.1..2",
        "111...",
        "....1.",
        ".....1",
    });
    GridGeometry geom(values.width(), values.height(), kGt, false, 1.0, Ellipsoid::wgs84());
    const auto out = writeAreaPolygons(areaSpec(dir.file("a.gpkg")), values, geom,
                                       {std::string("Merrowdun Hill; Quarrel Knap")});
    EXPECT_EQ(out.features, 4u);
    EXPECT_EQ(out.cells, 12u);
    EXPECT_DOUBLE_EQ(out.area_m2, 1200.0);
    OutputSet set;
    set.adopt(out.temp, dir.file("a.gpkg"));
    set.commit();

    const auto features = readVectorFeatures(dir.file("a.gpkg"));
    ASSERT_EQ(features.size(), 4u);
    double total = 0;
    for (const auto& f : features) {
        EXPECT_EQ(f.fields.at("sites"), "Merrowdun Hill; Quarrel Knap");
        const double area = std::stod(f.fields.at("area_m2"));
        // OGR's planar area of the traced outline equals the cells' area (projected grid).
        EXPECT_NEAR(f.planar_area, area, 1e-6);
        EXPECT_DOUBLE_EQ(area, 100.0 * std::stod(f.fields.at("cells")));
        total += area;
        if (f.fields.at("cells") == "8") {
            EXPECT_EQ(f.fields.at("count"), "1");
            EXPECT_EQ(f.holes, 1);
        }
        if (f.fields.at("count") == "2") {
            EXPECT_EQ(f.fields.at("cells"), "2");
        }
    }
    EXPECT_DOUBLE_EQ(total, out.area_m2);
    EXPECT_EQ(dir.entries().size(), 1u);  // no temporary left
}

// RFC 7946: longitude/latitude on WGS 84, exterior rings counter-clockwise, holes clockwise.
TEST(VectorOutputTest, GeoJsonIsLongitudeLatitudeWithRightHandRings) {
    ScratchDir dir;
    const auto values = gridFrom({"111", "1.1", "111"});
    GridGeometry geom(3, 3, kGt, false, 1.0, Ellipsoid::wgs84());
    const auto out = writeAreaPolygons(areaSpec(dir.file("ring.geojson")), values, geom,
                                       {std::string("Tollan Rigg")});
    OutputSet set;
    set.adopt(out.temp, dir.file("ring.geojson"));
    set.commit();
    const std::string text = readFile(dir.file("ring.geojson"));
    EXPECT_EQ(text.find("\"crs\""), std::string::npos) << "RFC 7946 has no crs member";

    // The north-west corner (400000, 5600000) of UTM 30N in longitude/latitude.
    const auto corner = lonLatOfUtm30n(400000, 5600000);

    GDALAllRegister();
    GDALDatasetH ds =
        GDALOpenEx(dir.file("ring.geojson").c_str(), GDAL_OF_VECTOR, nullptr, nullptr, nullptr);
    ASSERT_NE(ds, nullptr);
    OGRLayerH layer = GDALDatasetGetLayer(ds, 0);
    OGRFeatureH f = OGR_L_GetNextFeature(layer);
    ASSERT_NE(f, nullptr);
    OGRGeometryH poly = OGR_F_GetGeometryRef(f);
    ASSERT_EQ(OGR_G_GetGeometryCount(poly), 2);
    EXPECT_GT(shoelace(OGR_G_GetGeometryRef(poly, 0)), 0) << "exterior ring counter-clockwise";
    EXPECT_LT(shoelace(OGR_G_GetGeometryRef(poly, 1)), 0) << "hole clockwise";
    OGRGeometryH outer = OGR_G_GetGeometryRef(poly, 0);
    bool corner_found = false;  // coordinates are written with 7 decimals
    for (int i = 0; i < OGR_G_GetPointCount(outer); ++i)
        corner_found |= std::abs(OGR_G_GetX(outer, i) - corner[0]) < 1e-7 &&
                        std::abs(OGR_G_GetY(outer, i) - corner[1]) < 1e-7;
    EXPECT_TRUE(corner_found) << corner[0] << ", " << corner[1];
    OGR_F_Destroy(f);
    GDALClose(ds);
}

TEST(VectorOutputTest, PointsAndLinesKeepTheirValuesAndCoordinates) {
    ScratchDir dir;
    VectorLayerSpec spec{dir.file("stations.gpkg"),
                         "stations",
                         utm30nWkt(),
                         {{"name", VectorField::Kind::Text},
                          {"sees", VectorField::Kind::Integer},
                          {"height_m", VectorField::Kind::Real}},
                         ""};
    std::vector<VectorFeature> points{
        {{{425087.5, 5597212.5}}, {std::string("Merrowdun Hill"), 3LL, 25.0}},
        {{{426937.5, 5594387.5}}, {std::string("Quarrel Knap"), 0LL, 20.5}},
    };
    OutputSet set;
    set.adopt(writeVectorFeatures(spec, points), spec.path);
    spec.path = dir.file("links.geojson");
    spec.layer = "links";
    std::vector<VectorFeature> lines{
        {{{425087.5, 5597212.5}, {426937.5, 5594387.5}}, {std::string("a"), 1LL, 2.0}}};
    set.adopt(writeVectorFeatures(spec, lines), spec.path);
    set.commit();

    const auto p = readVectorFeatures(dir.file("stations.gpkg"));
    ASSERT_EQ(p.size(), 2u);
    EXPECT_EQ(p[0].fields.at("name"), "Merrowdun Hill");
    EXPECT_EQ(p[0].fields.at("sees"), "3");
    EXPECT_DOUBLE_EQ(std::stod(p[1].fields.at("height_m")), 20.5);
    ASSERT_EQ(p[1].vertices.size(), 1u);
    EXPECT_DOUBLE_EQ(p[1].vertices[0][0], 426937.5);
    EXPECT_DOUBLE_EQ(p[1].vertices[0][1], 5594387.5);
    const auto l = readVectorFeatures(dir.file("links.geojson"));
    ASSERT_EQ(l.size(), 1u);
    ASSERT_EQ(l[0].vertices.size(), 2u);
    const auto start = lonLatOfUtm30n(425087.5, 5597212.5);
    EXPECT_NEAR(l[0].vertices[0][0], start[0], 1e-7);
    EXPECT_NEAR(l[0].vertices[0][1], start[1], 1e-7);
}

TEST(VectorOutputTest, AFailedWriteLeavesNothing) {
    ScratchDir dir;
    VectorLayerSpec spec{dir.file("missing/areas.gpkg"),
                         "areas",
                         utm30nWkt(),
                         {{"count", VectorField::Kind::Integer}},
                         ""};
    GridGeometry geom(2, 1, kGt, false, 1.0, Ellipsoid::wgs84());
    EXPECT_THROW(writeAreaPolygons(spec, gridFrom({"11"}), geom), OutputError);
    EXPECT_TRUE(dir.entries().empty());
}
