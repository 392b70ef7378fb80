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

/// A command that must fail with `code`, its first line holding every `needles`, and nothing
/// written into `out`.
void expectRefused(const std::vector<std::string>& args, int code,
                   const std::vector<std::string>& needles, const ScratchDir& out) {
    const CliResult r = runLookfar(args);
    EXPECT_EQ(r.exit_code, code) << r.err;
    for (const auto& n : needles)
        EXPECT_NE(firstLine(r.err).find(n), std::string::npos) << "no '" << n << "' in " << r.err;
    EXPECT_EQ(r.err.find("internal error"), std::string::npos) << r.err;
    EXPECT_TRUE(out.entries().empty()) << "left behind: " << out.entries().front();
}

}  // namespace

// ----- item 1: text is UTF-8 -----------------------------------------------------------------

TEST(InputValidationCliTest, SiteNameThatIsNotUtf8IsBadInputNamingFileLineAndByte) {
    ScratchDir in, out;
    // "Béné" in Latin-1: the é is the single byte 0xE9, which UTF-8 never uses alone.
    const std::string csv =
        writeText(in, "latin1.csv", "name,x,y\nA,431500,5588500\nB\xE9n\xE9,431600,5588500\n");
    const std::vector<std::string> want = {"latin1.csv", "line 3", "0xE9", "UTF-8"};
    expectRefused({"viewshed", kCone, "--sites", csv, "-o", out.file("c.tif"), "--json",
                   "--quiet"},
                  3, want, out);
    expectRefused({"intervis", kCone, "--stations", csv, "-o", out.file("m.csv"), "--quiet"}, 3,
                  want, out);
    expectRefused({"select", kCone, "--candidates", csv, "--count", "1", "-o",
                   out.file("c.tif"), "--csv", out.file("r.csv"), "--quiet"},
                  3, want, out);
}

TEST(InputValidationCliTest, Utf8SitesFileWithAByteOrderMarkIsRead) {
    ScratchDir in, out;
    const std::string csv = writeText(
        in, "bom.csv", "\xEF\xBB\xBFname,x,y\nA,431500,5588500\nB\xC3\xA9n\xC3\xA9,431600,5588500\n");
    const CliResult r = runLookfar({"viewshed", kCone, "--sites", csv, "-o", out.file("c.tif"),
                                    "--json", "--quiet"});
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
    EXPECT_NE(j["outputs"]["visibility"].get<std::string>().find("v\\xE9.tif"),
              std::string::npos);
    EXPECT_TRUE(nlohmann::json::accept(readFile(dir.file("s\xE9.json"))));
    EXPECT_TRUE(fileExists(dir.file("v\xE9.tif")));
}
