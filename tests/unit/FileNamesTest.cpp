// File names made from site names (lookfar viewshed --per-site, issue 15 item 5). The kept
// letters follow the Unicode code charts' blocks (Latin-1 Supplement, Greek, Cyrillic, CJK);
// the rules themselves are lookfar's own (docs/viewshed.md).
#include <gtest/gtest.h>

#include <string>
#include <vector>

#include "lookfar/io/FileNames.hpp"

using namespace lookfar;

TEST(FileNamesTest, SafeStemKeepsLettersDigitsDashAndUnderscore) {
    EXPECT_EQ(safeFileStem("Quarrel Knap"), "Quarrel_Knap");
    EXPECT_EQ(safeFileStem("Brennock Fell, North Top"), "Brennock_Fell__North_Top");
    EXPECT_EQ(safeFileStem("../../etc/passwd"), "______etc_passwd");
    EXPECT_EQ(safeFileStem("mast-7_b"), "mast-7_b");
    EXPECT_EQ(safeFileStem("a\tb\nc"), "a_b_c");
    // Letters beyond ASCII stay (UTF-8), signs do not: é (U+00E9), Ø (U+00D8), Greek λ (U+03BB),
    // Cyrillic Ж (U+0416), 山 (U+5C71); × (U+00D7), ° (U+00B0) and € (U+20AC) are not letters.
    EXPECT_EQ(safeFileStem("Sé Øl λ Ж 山"), "Sé_Øl_λ_Ж_山");
    EXPECT_EQ(safeFileStem("2×3°€"), "2_3__");
    // A byte that is not UTF-8 becomes one '_'.
    EXPECT_EQ(safeFileStem(std::string("a\xE9z")), "a_z");
    EXPECT_EQ(safeFileStem(""), "");
}

TEST(FileNamesTest, SafeStemIsCutAtACharacterEnd) {
    std::string longName;
    for (int i = 0; i < 150; ++i)
        longName += "é";  // two bytes each
    const std::string stem = safeFileStem("x" + longName);
    EXPECT_LE(stem.size(), kMaxFileStemBytes);
    EXPECT_EQ(stem.size(), 199u);  // 'x' and 99 whole é: a 100th would pass 200 bytes
}

TEST(FileNamesTest, ClashesGetTheFirstFreeNumberAndOwnNamesArePreferred) {
    const std::vector<std::string> names = {"Hill Top", "Hill/Top", "Hill_Top_2", "hill.top", ""};
    const std::vector<int> lines = {2, 3, 4, 5, 6};
    const std::vector<std::string> got = uniqueFileNames(names, lines, ".tif");
    const std::vector<std::string> want = {"Hill_Top.tif", "Hill_Top_3.tif", "Hill_Top_2.tif",
                                           "hill_top_4.tif", "line_6.tif"};
    EXPECT_EQ(got, want);
}
