// UTF-8 checks and the safe echo of user text. The well-formed byte sequences are those of
// RFC 3629 section 4 (the same as table 3-7 of the Unicode Standard).
#include <gtest/gtest.h>

#include <string>

#include "lookfar/core/Text.hpp"

using namespace lookfar;

TEST(TextTest, WellFormedUtf8IsAcceptedWhateverItsScript) {
    for (const char* s : {"", "Harrowby", "B\xC3\xA9n\xC3\xA9", "\xE6\x97\xA5\xE6\x9C\xAC",
                          "\xF0\x9F\x97\xBB", "\xF4\x8F\xBF\xBF", "\xED\x9F\xBF"}) {
        EXPECT_EQ(invalidUtf8Offset(s), std::string::npos) << s;
    }
}

// RFC 3629 section 4: C0, C1 and F5..FF never appear; E0 needs A0..BF next (no overlong form),
// ED needs 80..9F (no surrogates), F0 needs 90..BF, F4 needs 80..8F (nothing above U+10FFFF).
TEST(TextTest, MalformedUtf8IsFoundAtItsFirstBadByte) {
    EXPECT_EQ(invalidUtf8Offset("B\xE9n\xE9"), 1u);        // Latin-1 é
    EXPECT_EQ(invalidUtf8Offset("ab\xC0\xAF"), 2u);        // overlong '/'
    EXPECT_EQ(invalidUtf8Offset("\xE0\x80\xAF"), 0u);      // overlong, 3 bytes
    EXPECT_EQ(invalidUtf8Offset("x\xED\xA0\x80"), 1u);     // surrogate U+D800
    EXPECT_EQ(invalidUtf8Offset("\xF4\x90\x80\x80"), 0u);  // U+110000
    EXPECT_EQ(invalidUtf8Offset("\xF5\x80\x80\x80"), 0u);  // F5 never appears
    EXPECT_EQ(invalidUtf8Offset("ok\xE6\x97"), 2u);        // cut short
    EXPECT_EQ(invalidUtf8Offset("\x80"), 0u);              // lone continuation byte
    EXPECT_EQ(describeInvalidUtf8("B\xE9n"), "byte 0xE9 at byte 2");
}

TEST(TextTest, EscapedTextIsAlwaysUtf8AndKeepsTheValidPart) {
    const std::string e = escapeInvalidUtf8("d\xE9m-\xC3\xA9.tif");
    EXPECT_EQ(e, "d\\xE9m-\xC3\xA9.tif");
    EXPECT_EQ(invalidUtf8Offset(e), std::string::npos);
    EXPECT_EQ(escapeInvalidUtf8("plain"), "plain");
}

TEST(TextTest, EchoedTextIsCutAndHasNoControlBytes) {
    EXPECT_EQ(echoText("a\x1B[31mb\tc"), "a\\x1B[31mb\\x09c");
    EXPECT_EQ(echoText(std::string("x\0y", 3)), "x\\x00y");
    EXPECT_EQ(echoText(std::string(5000, 'h'), 60), std::string(60, 'h') + "…");
    // Characters, not bytes, are counted: a cut never splits a character.
    std::string many;
    for (int i = 0; i < 70; ++i)
        many += "\xC3\xA9";
    const std::string cut = echoText(many, 60);
    EXPECT_EQ(invalidUtf8Offset(cut), std::string::npos);
    EXPECT_EQ(cut.size(), 120u + std::string("…").size());
}

// GDAL creation options are KEY=VALUE with option names of letters, digits and '_' (GDAL's
// GTiff driver documentation lists them so: COMPRESS, BLOCKXSIZE, NUM_THREADS).
TEST(TextTest, CreationOptionSplitsAtTheFirstEquals) {
    std::string key, value;
    ASSERT_TRUE(splitKeyValue("COMPRESS=DEFLATE", &key, &value));
    EXPECT_EQ(key, "COMPRESS");
    EXPECT_EQ(value, "DEFLATE");
    ASSERT_TRUE(splitKeyValue("KEY=a=b", &key, &value));
    EXPECT_EQ(value, "a=b");
    ASSERT_TRUE(splitKeyValue("TILED=", &key, &value));
    EXPECT_EQ(value, "");
    for (const char* bad : {"=YES", "COMPRESS", "", "BAD KEY=1", "K\xC3\xA9=1"})
        EXPECT_FALSE(splitKeyValue(bad, &key, &value)) << bad;
}
