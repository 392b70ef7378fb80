#include <gtest/gtest.h>

#include <fstream>

#include "../support/CliRunner.hpp"
#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Units.hpp"
#include "lookfar/io/Crs.hpp"
#include "lookfar/io/SitesCsv.hpp"

using namespace lookfar;
using lookfar::testing::ScratchDir;

// The international foot is 0.3048 m and the US survey foot 1200/3937 m (both exact by
// definition; NIST).
TEST(UnitsTest, LengthsWithSuffixes) {
    EXPECT_DOUBLE_EQ(parseLengthMetres("100", "--x"), 100.0);
    EXPECT_DOUBLE_EQ(parseLengthMetres("100ft", "--x"), 30.48);
    EXPECT_DOUBLE_EQ(parseLengthMetres("100 m", "--x"), 100.0);
    EXPECT_NEAR(parseLengthMetres("3937us-ft", "--x"), 1200.0, 1e-9);
    EXPECT_DOUBLE_EQ(parseLengthMetres("8km", "--x"), 8000.0);
    EXPECT_THROW(parseLengthMetres("tall", "--x"), UsageError);
    EXPECT_THROW(parseLengthMetres("10 furlongs", "--x"), UsageError);
    EXPECT_THROW(parseLengthMetres("nan", "--x"), UsageError);
    EXPECT_THROW(parseLengthMetres("inf", "--x"), UsageError);
}

TEST(UnitsTest, PointParsing) {
    MapPoint p = parsePoint("431250.5, 5612400", "--observer");
    EXPECT_DOUBLE_EQ(p.x, 431250.5);
    EXPECT_DOUBLE_EQ(p.y, 5612400);
    EXPECT_THROW(parsePoint("431250", "--observer"), UsageError);
    EXPECT_THROW(parsePoint("a,b", "--observer"), UsageError);
    EXPECT_THROW(parsePoint("1,nan", "--observer"), UsageError);
}

namespace {
std::string writeCsv(const ScratchDir& dir, const std::string& text) {
    std::string path = dir.file("sites.csv");
    std::ofstream(path) << text;
    return path;
}
}  // namespace

TEST(SitesCsvTest, ReadsQuotedNamesAndHeights) {
    ScratchDir dir;
    auto sites = readSitesCsv(
        writeCsv(dir, "name,x,y,height\n\"Fell, North\",1,2,30\nB,3,4,\nC,5,6,100ft\n"));
    ASSERT_EQ(sites.size(), 3u);
    EXPECT_EQ(sites[0].name, "Fell, North");
    EXPECT_DOUBLE_EQ(*sites[0].height_m, 30.0);
    EXPECT_FALSE(sites[1].height_m.has_value());
    EXPECT_DOUBLE_EQ(*sites[2].height_m, 30.48);
    EXPECT_EQ(sites[2].line, 4);
}

TEST(SitesCsvTest, ErrorsNameFileLineAndValue) {
    ScratchDir dir;
    try {
        readSitesCsv(writeCsv(dir, "name,x,y\nA,1,2\nB,abc,4\n"));
        FAIL() << "no error";
    } catch (const InputError& e) {
        std::string m = e.what();
        EXPECT_NE(m.find("sites.csv"), std::string::npos) << m;
        EXPECT_NE(m.find("line 3"), std::string::npos) << m;
        EXPECT_NE(m.find("abc"), std::string::npos) << m;
    }
    EXPECT_THROW(readSitesCsv(writeCsv(dir, "")), InputError);
    EXPECT_THROW(readSitesCsv(writeCsv(dir, "name,x,y\n")), InputError);
    EXPECT_THROW(readSitesCsv(writeCsv(dir, "label,east,north\nA,1,2\n")), InputError);
    EXPECT_THROW(readSitesCsv(writeCsv(dir, "name,x,y,height\nA,1,2,-5\n")), InputError);
    EXPECT_THROW(readSitesCsv(writeCsv(dir, "name,x,y\n\"A,1,2\n")), InputError);
    EXPECT_THROW(readSitesCsv(dir.file("missing.csv")), InputError);
}
