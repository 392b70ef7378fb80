// Bad input in every form a user can type it (issue 12): one sentence in lookfar's words naming
// the option, file, line or value, docs/design.md's exit code (2 usage, 3 input), nothing left
// behind.
// Expected behaviour is the project's contract (docs/design.md "Exit codes", "CSV of sites"); the
// byte rules of UTF-8 are RFC 3629.
#include <gtest/gtest.h>

#include <nlohmann/json.hpp>

#include <fstream>
#include <string>
#include <vector>

#include "../support/CliRunner.hpp"

using namespace lookfar::testing;

namespace {

const std::string kCone = testRaster("cone.tif");  // EPSG:32630, x 430000..433010
const std::string kDemo = testRaster("demo_coast.tif");

std::string writeText(const ScratchDir& dir, const std::string& name, const std::string& text) {
    const std::string path = dir.file(name);
    std::ofstream(path, std::ios::binary) << text;
    return path;
}

}  // namespace

// ----- item 1: text is UTF-8 -----------------------------------------------------------------

TEST(InputValidationCliTest, SiteNameThatIsNotUtf8IsBadInputNamingFileLineAndByte) {
    ScratchDir in, out;
    // "Béné" in Latin-1: the é is the single byte 0xE9, which UTF-8 never uses alone.
    const std::string csv =
        writeText(in, "latin1.csv", "name,x,y\nA,431500,5588500\nB\xE9n\xE9,431600,5588500\n");
    const std::vector<std::string> want = {"latin1.csv", "line 3", "0xE9", "UTF-8"};
    expectRefused({"viewshed", kCone, "--sites", csv, "-o", out.file("c.tif"), "--json", "--quiet"},
                  3, want, out);
    expectRefused({"intervis", kCone, "--stations", csv, "-o", out.file("m.csv"), "--quiet"}, 3,
                  want, out);
    expectRefused({"select", kCone, "--candidates", csv, "--count", "1", "-o", out.file("c.tif"),
                   "--csv", out.file("r.csv"), "--quiet"},
                  3, want, out);
}

TEST(InputValidationCliTest, Utf8SitesFileWithAByteOrderMarkIsRead) {
    ScratchDir in, out;
    const std::string csv =
        writeText(in, "bom.csv",
                  "\xEF\xBB\xBFname,x,y\nA,431500,5588500\nB\xC3\xA9n\xC3\xA9,431600,5588500\n");
    const CliResult r = runLookfar(
        {"viewshed", kCone, "--sites", csv, "-o", out.file("c.tif"), "--json", "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    EXPECT_NE(r.out.find("B\xC3\xA9n\xC3\xA9"), std::string::npos) << r.out;
}

TEST(InputValidationCliTest, NameOptionThatIsNotUtf8IsAUsageErrorNamingTheOption) {
    ScratchDir out;
    expectRefused({"viewshed", kCone, "--observer", "431500,5588500", "--name", "B\xE9n\xE9", "-o",
                   out.file("v.tif"), "--json", "--quiet"},
                  2, {"--name", "0xE9", "UTF-8"}, out);
}

TEST(InputValidationCliTest, PathsThatAreNotUtf8AreEscapedInTheJsonSummary) {
    ScratchDir dir;
    const std::string dem = dir.file("d\xE9m.tif");
    std::ofstream(dem, std::ios::binary) << readFile(kCone);
    const CliResult r =
        runLookfar({"viewshed", dem, "--observer", "431500,5588500", "-o", dir.file("v\xE9.tif"),
                    "--summary", dir.file("s\xE9.json"), "--json", "--quiet"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const auto j = nlohmann::json::parse(r.out);
    EXPECT_NE(j["dem"]["path"].get<std::string>().find("d\\xE9m.tif"), std::string::npos);
    EXPECT_NE(j["outputs"]["visibility"].get<std::string>().find("v\\xE9.tif"), std::string::npos);
    EXPECT_TRUE(nlohmann::json::accept(readFile(dir.file("s\xE9.json"))));
    EXPECT_TRUE(fileExists(dir.file("v\xE9.tif")));
}

// ----- items 4, 5, 8: options refused in lookfar's words ---------------------------------------

namespace {

/// Words of CLI11's own messages that must never reach a user.
void expectNoLibraryWords(const std::string& err) {
    for (const char* words : {"Could not convert", "not in range", "The following argument",
                              "At Most", "A subcommand is required", "excludes", "not in {"}) {
        EXPECT_EQ(err.find(words), std::string::npos) << err;
    }
}

std::vector<std::string> linkArgs(std::vector<std::string> extra) {
    std::vector<std::string> args = {"link",           kCone,    "--from", "431500,5588500", "--to",
                                     "432500,5588500", "--json", "--quiet"};
    args.insert(args.end(), extra.begin(), extra.end());
    return args;
}

}  // namespace

TEST(InputValidationCliTest, SelectCountZeroIsRefusedNotTakenAsNoCount) {
    ScratchDir out;
    expectRefused({"select", kDemo, "--candidates", testRaster("demo_sites.csv"), "--count", "0",
                   "--coverage", "50", "-o", out.file("c.tif"), "--quiet"},
                  2, {"--count must be at least 1"}, out);
}

TEST(InputValidationCliTest, EarthRadiusWithoutTheSphereModelIsAUsageError) {
    ScratchDir out;
    expectRefused(linkArgs({"--earth-radius", "1000km"}), 2,
                  {"--earth-radius needs --earth-model sphere"}, out);
    expectRefused(linkArgs({"--earth-model", "flat", "--earth-radius", "1000km"}), 2,
                  {"--earth-radius needs --earth-model sphere"}, out);
    // With the sphere it is used: the effective radius is R/(1 - k) (DESIGN.md, refraction).
    const CliResult r = runLookfar(
        linkArgs({"--earth-model", "sphere", "--earth-radius", "1000km", "--refraction", "0.2"}));
    ASSERT_EQ(r.exit_code, 0) << r.err;
    EXPECT_NEAR(nlohmann::json::parse(r.out)["effective_radius_m"].get<double>(), 1e6 / 0.8, 1e-6);
}

TEST(InputValidationCliTest, RefractionThatIsNotADecimalNamesTheOptionAndTheRange) {
    ScratchDir out;
    const CliResult r = runLookfar(linkArgs({"--refraction", "4/3"}));
    EXPECT_EQ(r.exit_code, 2);
    EXPECT_NE(firstLine(r.err).find("--refraction: '4/3' is not a decimal number"),
              std::string::npos)
        << r.err;
    EXPECT_NE(firstLine(r.err).find("from -1 to below 1"), std::string::npos) << r.err;
    expectNoLibraryWords(r.err);
}

// A K-factor K (effective radius over true radius) is 1/(1 - k), so K = 4/3 is k = 0.25 and
// K = 1.333 is k = 0.2498 (DESIGN.md: effective radius R/(1 - k); the 4/3 Earth of radio
// planning is ITU-R's effective Earth-radius factor for the standard atmosphere, from memory).
TEST(InputValidationCliTest, RefractionTypedAsAKFactorGetsTheHintThatFourThirdsIsQuarter) {
    const CliResult r = runLookfar(linkArgs({"--refraction", "1.333"}));
    EXPECT_EQ(r.exit_code, 2);
    EXPECT_NE(firstLine(r.err).find("K-factor"), std::string::npos) << r.err;
    EXPECT_NE(firstLine(r.err).find("0.2498"), std::string::npos) << r.err;
    EXPECT_NE(firstLine(r.err).find("k = 0.25"), std::string::npos) << r.err;
}

TEST(InputValidationCliTest, NumbersOutOfRangeNameTheOptionAndTheRangeInFewWords) {
    ScratchDir out;
    const std::vector<std::vector<std::string>> cases = {
        {"--threads", "-1", "--threads: '-1' is not a whole number from 0 to 1024"},
        {"--threads", "1e3", "--threads: '1e3' is not a whole number from 0 to 1024"},
        {"--band", "0", "--band: '0' is not a whole number from 1"},
        {"--earth-model", "round", "--earth-model: 'round' is not ellipsoid, sphere or flat"},
    };
    for (const auto& c : cases) {
        const CliResult r = runLookfar(linkArgs({c[0], c[1]}));
        EXPECT_EQ(r.exit_code, 2) << c[0];
        EXPECT_NE(firstLine(r.err).find(c[2]), std::string::npos) << r.err;
        EXPECT_LT(firstLine(r.err).size(), 160u) << r.err;
        expectNoLibraryWords(r.err);
    }
    const CliResult d =
        runLookfar({"horizon", kCone, "-o", out.file("h.tif"), "--directions", "1.5", "--quiet"});
    EXPECT_EQ(d.exit_code, 2);
    EXPECT_NE(firstLine(d.err).find("--directions: '1.5' is not a whole number from 1 to 3600"),
              std::string::npos)
        << d.err;
    EXPECT_TRUE(out.entries().empty());
}

TEST(InputValidationCliTest, UnexpectedArgumentsAreNamedWithTheCommand) {
    const CliResult r = runLookfar(linkArgs({"3", "--target-height"}));
    EXPECT_EQ(r.exit_code, 2);
    EXPECT_NE(firstLine(r.err).find("link does not take '3 --target-height'"), std::string::npos)
        << r.err;
    EXPECT_NE(r.err.find("lookfar help link"), std::string::npos) << r.err;
    expectNoLibraryWords(r.err);
    const CliResult twice = runLookfar(linkArgs({"--from", "431000,5588500"}));
    EXPECT_EQ(twice.exit_code, 2);
    EXPECT_NE(firstLine(twice.err).find("--from is given more than once"), std::string::npos)
        << twice.err;
}

TEST(InputValidationCliTest, HelpCommandPrintsTheHelpOfLookfarOrOfACommand) {
    const CliResult root = runLookfar({"help"});
    EXPECT_EQ(root.exit_code, 0) << root.err;
    EXPECT_EQ(root.out, runLookfar({"--help"}).out);
    EXPECT_NE(root.out.find("viewshed"), std::string::npos);
    // The cautions of docs/design.md, the radio one included, in lookfar's own --help.
    EXPECT_NE(root.out.find("Not for\nnavigation or safety-of-life decisions"), std::string::npos)
        << root.out;
    EXPECT_NE(root.out.find("Radio loss and level layers (signal) are median"), std::string::npos)
        << root.out;
    EXPECT_NE(root.out.find("licensed radio engineering prevail"), std::string::npos);
    const CliResult link = runLookfar({"help", "link"});
    EXPECT_EQ(link.exit_code, 0) << link.err;
    EXPECT_EQ(link.out, runLookfar({"link", "--help"}).out);
    EXPECT_NE(link.out.find("--frequency-mhz"), std::string::npos);
    const CliResult unknown = runLookfar({"help", "survey"});
    EXPECT_EQ(unknown.exit_code, 2);
    EXPECT_NE(firstLine(unknown.err).find("'survey' is not a command of lookfar"),
              std::string::npos)
        << unknown.err;
}

TEST(InputValidationCliTest, MissingOrUnknownCommandIsOurSentence) {
    const CliResult none = runLookfar({});
    EXPECT_EQ(none.exit_code, 2);
    EXPECT_NE(firstLine(none.err).find("no command given; the commands are info, viewshed"),
              std::string::npos)
        << none.err;
    expectNoLibraryWords(none.err);
    const CliResult unknown = runLookfar({"survey", kCone});
    EXPECT_EQ(unknown.exit_code, 2);
    EXPECT_NE(firstLine(unknown.err).find("'survey' is not a command of lookfar"),
              std::string::npos)
        << unknown.err;
}

// ----- items 9, 17a, 17b: one CSV reader, numbers, CRS strings ---------------------------------

TEST(InputValidationCliTest, DuplicateNamesAreRefusedTheSameWayByEveryCommand) {
    ScratchDir in, out;
    const std::string csv = writeText(
        in, "dup.csv", "name,x,y\nMast,431500,5588500\nHill,431000,5588000\nMast,431600,5588500\n");
    const std::vector<std::string> want = {"dup.csv, line 4", "'Mast' is already used on line 2"};
    expectRefused({"viewshed", kCone, "--sites", csv, "-o", out.file("c.tif"), "--quiet"}, 3, want,
                  out);
    expectRefused({"intervis", kCone, "--stations", csv, "-o", out.file("m.csv"), "--quiet"}, 3,
                  want, out);
    expectRefused(
        {"select", kCone, "--candidates", csv, "--count", "1", "-o", out.file("c.tif"), "--quiet"},
        3, want, out);
}

TEST(InputValidationCliTest, ShortRowAndRepeatedColumnAreBadInputNamingTheLine) {
    ScratchDir in, out;
    const std::string short_row =
        writeText(in, "short.csv", "name,x,y,height\nA,431500,5588500,10\nB,431600,5588500\n");
    expectRefused({"viewshed", kCone, "--sites", short_row, "-o", out.file("c.tif"), "--quiet"}, 3,
                  {"short.csv, line 3: 3 fields where the header has 4"}, out);
    const std::string twice = writeText(in, "twice.csv", "name,x,y,x\nA,431500,5588500,1\n");
    expectRefused({"intervis", kCone, "--stations", twice, "-o", out.file("m.csv"), "--quiet"}, 3,
                  {"twice.csv, line 1: the column 'x' is named twice"}, out);
}

TEST(InputValidationCliTest, OneHeightCapForTheOptionAndTheCsv) {
    ScratchDir in, out;
    expectRefused({"viewshed", kCone, "--observer", "431500,5588500", "--observer-height",
                   "100.5km", "-o", out.file("v.tif"), "--quiet"},
                  2, {"--observer-height", "over 100 km"}, out);
    const std::string csv =
        writeText(in, "tall.csv", "name,x,y,height\nA,431500,5588500,100.5KM\n");
    expectRefused({"viewshed", kCone, "--sites", csv, "-o", out.file("c.tif"), "--quiet"}, 3,
                  {"tall.csv, line 2: height '100.5KM' is over 100 km"}, out);
}

TEST(InputValidationCliTest, BlankReachIsRefusedNotUnlimited) {
    ScratchDir out;
    expectRefused({"viewshed", kCone, "--observer", "431500,5588500", "--reach", " ", "-o",
                   out.file("v.tif"), "--quiet"},
                  2, {"--reach", "blank"}, out);
}

// PROJ reads "+proj=… +type=crs" as a CRS and the same string without +type=crs as a coordinate
// operation (PROJ documentation, "PROJ strings", the type=crs parameter); lookfar appends it.
TEST(InputValidationCliTest, ProjStringIsAcceptedAsUsersWriteIt) {
    const std::vector<std::string> base = {"viewshed",       kCone,    "--observer",
                                           "431520,5588500", "--json", "--quiet"};
    ScratchDir a, b;
    auto plain = base;
    plain.insert(plain.end(), {"-o", a.file("v.tif")});
    auto with_crs = base;
    with_crs.insert(with_crs.end(),
                    {"-o", b.file("v.tif"), "--crs", "+proj=utm +zone=30 +datum=WGS84"});
    const CliResult r0 = runLookfar(plain), r1 = runLookfar(with_crs);
    ASSERT_EQ(r0.exit_code, 0) << r0.err;
    ASSERT_EQ(r1.exit_code, 0) << r1.err;
    const auto j0 = nlohmann::json::parse(r0.out)["observers"][0];
    const auto j1 = nlohmann::json::parse(r1.out)["observers"][0];
    EXPECT_EQ(j0["col"], j1["col"]);
    EXPECT_EQ(j0["row"], j1["row"]);
    EXPECT_EQ(j0["visible_cells"], j1["visible_cells"]);
}

TEST(InputValidationCliTest, PointThatCannotBeTransformedNamesTheOptionOrTheLine) {
    ScratchDir in, out;
    // Latitude 95° is no place on the Earth: PROJ cannot project it.
    expectRefused({"viewshed", kCone, "--crs", "EPSG:4326", "--observer", "-3.9,95", "-o",
                   out.file("v.tif"), "--quiet"},
                  3, {"--observer -3.9,95 cannot be transformed"}, out);
    const std::string csv = writeText(in, "ll.csv", "name,x,y\nPole,-3.9,95\n");
    expectRefused({"viewshed", kCone, "--crs", "EPSG:4326", "--sites", csv, "-o", out.file("c.tif"),
                   "--quiet"},
                  3, {"ll.csv, line 2: site 'Pole' at -3.9,95 cannot be transformed"}, out);
}

TEST(InputValidationCliTest, MissingStationsFileIsCalledTheStationsFile) {
    ScratchDir in, out;
    expectRefused(
        {"intervis", kCone, "--stations", in.file("none.csv"), "-o", out.file("m.csv"), "--quiet"},
        3, {"none.csv: cannot open the stations file"}, out);
}

// Item 6: a creation option GDAL's GeoTIFF writer would not take is refused before any work.
TEST(InputValidationCliTest, CreationOptionsAreRefusedBeforeAnyWork) {
    ScratchDir out;
    expectRefused({"viewshed", kCone, "--observer", "431500,5588500", "-o", out.file("v.tif"),
                   "--co", "COMPRESS=BOGUS"},
                  2, {"--co COMPRESS=BOGUS"}, out);
    expectRefused({"horizon", kCone, "-o", out.file("h.tif"), "--co", "BLOCKXSIZE=100"}, 2,
                  {"--co BLOCKXSIZE=100", "multiple of 16"}, out);
}
