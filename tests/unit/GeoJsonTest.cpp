// GeoJSON lines as RFC 7946 wants them: longitudes within [−180°, 180°] (§4: "longitude,
// latitude" in WGS 84 degrees) and a line that crosses the antimeridian cut in two at it
// (§3.1.9, whose own example cuts at ±180° into a MultiLineString).
#include <gtest/gtest.h>

#include "lookfar/report/GeoJson.hpp"

using namespace lookfar;

TEST(GeoJson, SegmentAwayFromTheAntimeridianIsOneLineStringAsGiven) {
    const nlohmann::json g = geoJsonSegment(-1.25, 50.5, -1.0, 50.75);
    EXPECT_EQ(g["type"], "LineString");
    EXPECT_EQ(g["coordinates"].dump(), "[[-1.25,50.5],[-1.0,50.75]]");
}

TEST(GeoJson, LongitudesPast180AreWrapped) {
    const nlohmann::json g = geoJsonSegment(180.25, 10.0, 180.5, 10.5);
    EXPECT_EQ(g["type"], "LineString");
    EXPECT_DOUBLE_EQ(g["coordinates"][0][0].get<double>(), -179.75);
    EXPECT_DOUBLE_EQ(g["coordinates"][1][0].get<double>(), -179.5);
}

TEST(GeoJson, SegmentCrossingTheAntimeridianIsCutAtIt) {
    // 179.75 → 180.25 (= −179.75): the cut is halfway in longitude, latitude 10.5 there.
    const nlohmann::json g = geoJsonSegment(179.75, 10.0, 180.25, 11.0);
    ASSERT_EQ(g["type"], "MultiLineString");
    EXPECT_EQ(g["coordinates"].dump(),
              "[[[179.75,10.0],[180.0,10.5]],[[-180.0,10.5],[-179.75,11.0]]]");
    // The same line given the other way round is cut at the same place.
    const nlohmann::json back = geoJsonSegment(-179.75, 11.0, 179.75, 10.0);
    EXPECT_EQ(back["coordinates"].dump(),
              "[[[-179.75,11.0],[-180.0,10.5]],[[180.0,10.5],[179.75,10.0]]]");
}

TEST(GeoJson, CoordinatesHaveAtMostSevenDecimals) {
    EXPECT_DOUBLE_EQ(geoJsonRound(1.234567891), 1.2345679);
    const nlohmann::json g = geoJsonSegment(0.123456789, 1.0, 0.2, 1.0);
    EXPECT_DOUBLE_EQ(g["coordinates"][0][0].get<double>(), 0.1234568);
}
