// The seed corpus of the fuzz targets (tests/fuzz/corpus/<target>/) through the same targets in
// the ordinary suite: a seed that crashes or breaks an invariant aborts this test. tools/fuzz
// runs the targets under libFuzzer, ASan and UBSan from these seeds.
#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>
#include <sstream>

#include "../support/CliRunner.hpp"
#include "fuzz/FuzzTargets.hpp"

using lookfar::testing::readFile;
using lookfar::testing::sourceDir;

TEST(FuzzCorpusTest, EverySeedPassesItsTarget) {
    namespace fs = std::filesystem;
    for (const auto& target : lookfar::fuzz::allTargets()) {
        const fs::path folder = fs::path(sourceDir()) / "tests/fuzz/corpus" / target.name;
        ASSERT_TRUE(fs::is_directory(folder)) << folder;
        int seeds = 0;
        for (const auto& entry : fs::directory_iterator(folder)) {
            const std::string bytes = readFile(entry.path().string());
            SCOPED_TRACE(entry.path().string());
            EXPECT_EQ(target.run(reinterpret_cast<const std::uint8_t*>(bytes.data()), bytes.size()),
                      0);
            ++seeds;
        }
        EXPECT_GE(seeds, 5) << target.name << ": a small seed corpus, at least 5 inputs";
    }
}
