#include <gtest/gtest.h>

#include <fstream>

#include "../support/CliRunner.hpp"
#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Units.hpp"
#include "lookfar/io/Crs.hpp"
#include "lookfar/io/SitesCsv.hpp"

#include <string>

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

// ----- issue 12 items 9, 17a: finite decimal numbers, units in any case, one CSV reader ---------

// Numbers are decimals as written in docs/design.md; strtod would also take hex (C99 7.20.1.3),
// inf and nan, which lookfar refuses.
TEST(UnitsTest, OnlyFiniteDecimalNumbersAreNumbers) {
    EXPECT_EQ(parseDecimal("12"), 12.0);
    EXPECT_EQ(parseDecimal("-3.5"), -3.5);
    EXPECT_EQ(parseDecimal("+2"), 2.0);
    EXPECT_EQ(parseDecimal(".5"), 0.5);
    EXPECT_EQ(parseDecimal("5."), 5.0);
    EXPECT_EQ(parseDecimal("1e3"), 1000.0);
    EXPECT_EQ(parseDecimal("2.5E-1"), 0.25);
    for (const std::string bad : {"0x10", "0x1p10", "inf", "-infinity", "nan", "1e400", " 1", "1 ",
                                  "", ".", "e5", "1,5", "1e", "--1", "1.2.3"}) {
        EXPECT_FALSE(parseDecimal(bad).has_value()) << bad;
    }
    EXPECT_FALSE(parseDecimal(std::string("425087.5") + '\0' + "999").has_value());
    EXPECT_EQ(parseWholeNumber("-1"), -1);
    EXPECT_FALSE(parseWholeNumber("1.0").has_value());
    EXPECT_FALSE(parseWholeNumber("99999999999999999999").has_value());
}

TEST(UnitsTest, UnitSuffixesAreCaseInsensitiveForEveryUnit) {
    EXPECT_DOUBLE_EQ(parseLengthMetres("10KM", "--x"), 10000.0);
    EXPECT_DOUBLE_EQ(parseLengthMetres("10Km", "--x"), 10000.0);
    EXPECT_DOUBLE_EQ(parseLengthMetres("10FT", "--x"), 3.048);
    EXPECT_DOUBLE_EQ(parseLengthMetres("5M", "--x"), 5.0);
    EXPECT_NEAR(parseLengthMetres("3937US-FT", "--x"), 1200.0, 1e-9);
    EXPECT_THROW(parseLengthMetres("0x10", "--x"), UsageError);
    EXPECT_THROW(parseLengthMetres("1 0m", "--x"), UsageError);
}

TEST(UnitsTest, LengthThatOverflowsIsRefusedNamingTheOption) {
    try {
        parseLengthMetres("1e308km", "--reach");
        FAIL() << "no error";
    } catch (const UsageError& e) {
        EXPECT_NE(std::string(e.what()).find("--reach: '1e308km' is not a finite length"),
                  std::string::npos)
            << e.what();
    }
}

namespace {
/// The message of the InputError that reading `text` as a sites CSV throws ("" if none).
std::string csvError(const std::string& text) {
    try {
        parseSitesCsv(text, "s.csv");
    } catch (const InputError& e) {
        return e.what();
    }
    return "";
}
}  // namespace

// RFC 4180 section 2 rule 6: fields holding line breaks, quotes or commas are quoted; rule 7: a
// quote inside is doubled. The row after a two-line record starts on line 4.
TEST(SitesCsvTest, QuotedFieldMayHoldALineBreakAsRfc4180Allows) {
    const auto sites =
        parseSitesCsv("name,x,y\r\n\"North\r\nFell, \"\"old\"\"\",1,2\r\nB,3,4\r\n", "s.csv");
    ASSERT_EQ(sites.size(), 2u);
    EXPECT_EQ(sites[0].name, "North\r\nFell, \"old\"");
    EXPECT_EQ(sites[0].line, 2);
    EXPECT_EQ(sites[1].line, 4);
    EXPECT_EQ(csvError("name,x,y\n\"A,1,2\nB,3,4\n"),
              "s.csv, line 2: a quoted field opened here is not closed");
}

// RFC 4180 section 2 rule 4: each line should contain the same number of fields.
TEST(SitesCsvTest, ShortOrLongRowIsMalformedNamingTheLine) {
    EXPECT_NE(csvError("name,x,y,height\nA,1,2,3\nB,1,2\n")
                  .find("s.csv, line 3: 3 fields where "
                        "the header has 4"),
              std::string::npos);
    EXPECT_NE(csvError("name,x,y\nA,1,2,3\n").find("line 2: 4 fields where the header has 3"),
              std::string::npos);
    // An empty height is a field: the row is complete and takes --observer-height.
    EXPECT_FALSE(parseSitesCsv("name,x,y,height\nA,1,2,\n", "s.csv")[0].height_m.has_value());
}

TEST(SitesCsvTest, ColumnNamedTwiceIsRefused) {
    EXPECT_EQ(csvError("name,x,y,X\nA,1,2,3\n"),
              "s.csv, line 1: the column 'x' is named twice (columns 2 and 4)");
}

TEST(SitesCsvTest, NumbersAreFiniteDecimalsAndHeightsShareTheOptionCap) {
    EXPECT_NE(csvError("name,x,y\nA,0x10,2\n").find("x '0x10' is not a finite decimal number"),
              std::string::npos);
    EXPECT_NE(csvError("name,x,y\nA,1,nan\n").find("y 'nan' is not"), std::string::npos);
    EXPECT_NE(csvError("name,x,y,height\nA,1,2,0x1p10\n").find("line 2: height '0x1p10'"),
              std::string::npos);
    const std::string nul = std::string("name,x,y\nA,425087.5") + '\0' + "999,2\n";
    EXPECT_NE(csvError(nul).find("line 2: a NUL byte at byte 11"), std::string::npos);
    // The cap of --observer-height (kMaxHeightAboveGroundM, 100 km) holds in the CSV too.
    EXPECT_DOUBLE_EQ(*parseSitesCsv("name,x,y,height\nA,1,2,100km\n", "s.csv")[0].height_m, 1e5);
    EXPECT_NE(csvError("name,x,y,height\nA,1,2,1e300\n").find("over 100 km above the ground"),
              std::string::npos);
    EXPECT_NE(csvError("name,x,y,height\nA,1,2,1e308km\n").find("is not a finite length"),
              std::string::npos);
}

TEST(SitesCsvTest, StrayQuotesAreRefusedNotGuessed) {
    EXPECT_NE(csvError("name,x,y\nO\"Hara,1,2\n").find("line 2: a quote inside the unquoted field"),
              std::string::npos);
    EXPECT_NE(csvError("name,x,y\n\"A\"B,1,2\n").find("line 2: text after the closing quote"),
              std::string::npos);
    EXPECT_EQ(parseSitesCsv("name,x,y\n \"A\" ,1,2\n", "s.csv")[0].name, "A");
}

TEST(SitesCsvTest, EchoedTextIsCutAndEscaped) {
    const std::string huge = "name,x,y," + std::string(5'000'000, 'h') + "\x1B[2J\nA,1,2\n";
    const std::string m = csvError("label,x,y," + std::string(5000, 'h') + "\nA,1,2\n");
    EXPECT_LT(m.size(), 300u) << m;
    EXPECT_NE(m.find("…"), std::string::npos) << m;
    const std::string esc = csvError("name,x,y\nA,1\x1B[2J,2\n");
    EXPECT_NE(esc.find("'1\\x1B[2J'"), std::string::npos) << esc;
    EXPECT_EQ(esc.find('\x1B'), std::string::npos) << esc;
    EXPECT_NE(csvError(huge).find("line 2: 3 fields where the header has 4"), std::string::npos);
}

// What lookfar writes with csvField reads back as the same text (RFC 4180 quoting), also when a
// name starts or ends with a space, which an unquoted field loses.
TEST(SitesCsvTest, WrittenFieldsReadBackAsTheSameName) {
    for (const std::string name : {"Fell", " Fell", "Fell ", "a, b", "say \"hi\"", "two\nlines"}) {
        const auto back = parseSitesCsv("name,x,y\n" + csvField(name) + ",1,2\n", "s.csv");
        ASSERT_EQ(back.size(), 1u);
        EXPECT_EQ(back[0].name, name);
    }
    EXPECT_EQ(csvField("Fell"), "Fell");
    EXPECT_EQ(csvField(" Fell"), "\" Fell\"");
}

namespace {
/// The message of the InputError that reading `text` as a pairs CSV throws ("" if none).
std::string pairsError(const std::string& text) {
    try {
        parsePairsCsv(text, "p.csv");
    } catch (const InputError& e) {
        return e.what();
    }
    return "";
}
const char* const kPairsHeader =
    "from_name,from_x,from_y,from_height,to_name,to_x,to_y,to_height,frequency_mhz\n";
}  // namespace

// Issue 14 item 6: the pairs CSV of `link --pairs` follows the sites CSV's rules (RFC 4180,
// UTF-8 with an optional byte-order mark, CRLF or LF, heights with unit suffixes, header names
// in any case and order); frequency_mhz is optional, and empty takes --frequency-mhz.
TEST(PairsCsvTest, ReadsEveryColumnWithTheSitesRules) {
    const std::string text = std::string("\xEF\xBB\xBF") +
                             "To_Name,to_x,to_y,to_height,FROM_NAME,from_x,from_y,from_height,"
                             "frequency_mhz\r\n"
                             "\"Fell, North\",3,4,10ft,A,1,2,30,2400\r\n"
                             "\r\n"
                             ",5,6,1km,,7,8,0,\r\n";
    const auto pairs = parsePairsCsv(text, "p.csv");
    ASSERT_EQ(pairs.size(), 2u);
    EXPECT_EQ(pairs[0].from_name, "A");
    EXPECT_EQ(pairs[0].to_name, "Fell, North");
    EXPECT_EQ(pairs[0].from_x, 1);
    EXPECT_EQ(pairs[0].from_y, 2);
    EXPECT_EQ(pairs[0].to_x, 3);
    EXPECT_EQ(pairs[0].to_y, 4);
    EXPECT_EQ(pairs[0].from_height_m, 30);
    EXPECT_DOUBLE_EQ(pairs[0].to_height_m, 3.048);  // the international foot, exact
    EXPECT_EQ(*pairs[0].frequency_mhz, 2400);
    EXPECT_EQ(pairs[0].line, 2);
    EXPECT_EQ(pairs[1].line, 4);  // the blank line is skipped but counted
    EXPECT_EQ(pairs[1].from_name, "from 2");
    EXPECT_EQ(pairs[1].to_name, "to 2");
    EXPECT_EQ(pairs[1].to_height_m, 1000);
    EXPECT_FALSE(pairs[1].frequency_mhz.has_value());
    // Without the frequency column at all.
    EXPECT_FALSE(parsePairsCsv("from_name,from_x,from_y,from_height,to_name,to_x,to_y,to_height\n"
                               "A,1,2,3,B,4,5,6\n",
                               "p.csv")[0]
                     .frequency_mhz.has_value());
}

// Bad rows: one sentence naming the file, the line and the field.
TEST(PairsCsvTest, BadRowNamesTheFileTheLineAndTheField) {
    const std::string h = kPairsHeader;
    EXPECT_EQ(pairsError(h + "A,1,2,3,B,4,5,6,900\nA,1,2,3,B,4,5,6\n"),
              "p.csv, line 3: 8 fields where the header has 9; every row needs all the columns "
              "(an empty frequency_mhz is written as a trailing comma)");
    EXPECT_EQ(pairsError(h + "A,1,x2,3,B,4,5,6,900\n"),
              "p.csv, line 2: from_y 'x2' is not a finite decimal number");
    EXPECT_EQ(pairsError(h + "A,1,2,3,B,4,5,,900\n"),
              "p.csv, line 2: to_height is empty; every link needs the x, y and height of both "
              "ends");
    EXPECT_EQ(pairsError(h + "A,1,2,tall,B,4,5,6,900\n"),
              "p.csv, line 2: from_height 'tall' is not a length (write e.g. 30, 30m or 100ft)");
    EXPECT_EQ(pairsError(h + "A,1,2,-3,B,4,5,6,900\n"),
              "p.csv, line 2: from_height '-3' is negative");
    EXPECT_EQ(pairsError(h + "A,1,2,3,B,4,5,6,0\n"),
              "p.csv, line 2: frequency_mhz '0' is not a positive decimal frequency in MHz");
    EXPECT_NE(pairsError("from_name,from_x,from_y,from_height,to_name,to_x,to_y\nA,1,2,3,B,4,5\n")
                  .find("p.csv, line 1: the header must name the columns"),
              std::string::npos);
    EXPECT_NE(pairsError("from_name,from_x,from_y,from_height,to_name,to_x,to_y\n")
                  .find("'to_height' is missing"),
              std::string::npos);
    EXPECT_EQ(pairsError(h), "p.csv: the pairs file has a header but no pairs");
    EXPECT_EQ(pairsError(""), "p.csv: the pairs file is empty (no header row)");
}
