// The outputs of a run are renamed into place together or not at all (issue: a failed run loses
// nothing and leaves nothing). Common practice for atomic file replacement (write a temporary in
// the same folder, rename over the target: POSIX rename(2) is atomic per file), no outside value.
#include <gtest/gtest.h>
#include <sys/stat.h>

#include <fstream>

#include "../support/CliRunner.hpp"
#include "lookfar/core/Errors.hpp"
#include "lookfar/io/OutputSet.hpp"
#include "lookfar/io/RasterWriter.hpp"

using lookfar::OutputSet;
using namespace lookfar::testing;

namespace {
void writeText(const std::string& path, const std::string& text) {
    std::ofstream(path, std::ios::binary) << text;
}
}  // namespace

TEST(OutputSetTest, NothingIsRenamedBeforeCommitAndAllAfter) {
    ScratchDir dir;
    writeText(dir.file("a.csv"), "earlier a");
    {
        OutputSet set;
        set.addText(dir.file("a.csv"), "new a");
        set.addText(dir.file("b.json"), "new b");
        EXPECT_EQ(readFile(dir.file("a.csv")), "earlier a");
        EXPECT_FALSE(fileExists(dir.file("b.json")));
        set.commit();
    }
    EXPECT_EQ(readFile(dir.file("a.csv")), "new a");
    EXPECT_EQ(readFile(dir.file("b.json")), "new b");
    EXPECT_EQ(dir.entries().size(), 2u);  // no temporary, no kept earlier file
}

TEST(OutputSetTest, ASetDroppedWithoutCommitLeavesNothing) {
    ScratchDir dir;
    writeText(dir.file("a.csv"), "earlier a");
    {
        OutputSet set;
        set.addText(dir.file("a.csv"), "new a");
        set.addText(dir.file("b.json"), "new b");
    }
    EXPECT_EQ(readFile(dir.file("a.csv")), "earlier a");
    EXPECT_EQ(dir.entries(), std::vector<std::string>{"a.csv"});
}

// The third rename fails (its target has become a non-empty folder): the first output is put
// back to its earlier content, the second (new) one removed, and no temporary is left.
TEST(OutputSetTest, AFailedRenamePutsEveryEarlierFileBack) {
    ScratchDir dir;
    writeText(dir.file("a.tif"), "earlier a");
    OutputSet set;
    set.addText(dir.file("a.tif"), "new a");
    set.addText(dir.file("b.tif"), "new b");
    set.addText(dir.file("c.tif"), "new c");
    ASSERT_EQ(mkdir(dir.file("c.tif").c_str(), 0755), 0);
    writeText(dir.file("c.tif") + "/inside", "x");
    try {
        set.commit();
        FAIL() << "commit should fail";
    } catch (const lookfar::OutputError& e) {
        EXPECT_NE(std::string(e.what()).find("c.tif"), std::string::npos) << e.what();
        EXPECT_NE(std::string(e.what()).find("no output of this run was written"),
                  std::string::npos)
            << e.what();
    }
    EXPECT_EQ(readFile(dir.file("a.tif")), "earlier a");
    EXPECT_FALSE(fileExists(dir.file("b.tif")));
    auto names = dir.entries();
    std::sort(names.begin(), names.end());
    EXPECT_EQ(names, (std::vector<std::string>{"a.tif", "c.tif"}));
}

TEST(OutputSetTest, SameFileComparesFilesNotStrings) {
    ScratchDir dir;
    EXPECT_TRUE(lookfar::sameFile(dir.file("x.tif"), dir.path() + "/./x.tif"));
    EXPECT_TRUE(lookfar::sameFile(
        dir.file("x.tif"),
        dir.path() + "/../" + dir.path().substr(dir.path().rfind('/') + 1) + "/x.tif"));
    EXPECT_FALSE(lookfar::sameFile(dir.file("x.tif"), dir.file("y.tif")));
    writeText(dir.file("x.tif"), "x");
    ASSERT_EQ(link(dir.file("x.tif").c_str(), dir.file("hard.tif").c_str()), 0);
    EXPECT_TRUE(lookfar::sameFile(dir.file("x.tif"), dir.file("hard.tif")));
    EXPECT_TRUE(lookfar::sameFile(dir.file("x.tif"), dir.path() + "//x.tif"));
}

// A raster finished into its temporary is not at its path until the set commits.
TEST(OutputSetTest, RastersWaitForTheSet) {
    ScratchDir dir;
    lookfar::RasterSpec spec;
    spec.path = dir.file("r.tif");
    spec.width = spec.height = 4;
    spec.type = lookfar::PixelType::Byte;
    std::vector<std::uint8_t> cells(16, 1);
    OutputSet set;
    {
        lookfar::RasterWriter w(spec);
        w.writeBand(1, cells.data());
        set.addRaster(w);
    }
    EXPECT_FALSE(fileExists(dir.file("r.tif")));
    EXPECT_EQ(dir.entries().size(), 1u);  // the finished temporary
    set.commit();
    EXPECT_TRUE(fileExists(dir.file("r.tif")));
    EXPECT_EQ(dir.entries().size(), 1u);
}

// --per-site (issue 15 item 5): a folder the run made goes again when the run fails, one that was
// there stays, and a committed set keeps the folder it made.
TEST(OutputSetTest, AFolderMadeByAFailedRunIsRemovedWithItsTemporaries) {
    ScratchDir dir;
    {
        OutputSet set;
        set.makeFolder(dir.file("per"));
        set.addText(dir.file("per/a.txt"), "a");
        EXPECT_TRUE(fileExists(dir.file("per")));
    }
    EXPECT_TRUE(dir.entries().empty());
    ::mkdir(dir.file("kept").c_str(), 0777);
    {
        OutputSet set;
        set.makeFolder(dir.file("kept"));  // already there: not made, not removed
        set.addText(dir.file("kept/a.txt"), "a");
    }
    EXPECT_EQ(dir.entries(), std::vector<std::string>({"kept"}));
    {
        OutputSet set;
        set.makeFolder(dir.file("made"));
        set.addText(dir.file("made/a.txt"), "a");
        set.commit();
    }
    EXPECT_EQ(readFile(dir.file("made/a.txt")), "a");
    // A folder that cannot be made (its parent is missing) is an output error.
    OutputSet set;
    EXPECT_THROW(set.makeFolder(dir.file("no/such")), lookfar::OutputError);
}
