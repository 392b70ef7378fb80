// The engines' one parallel loop: every iteration once, the first worker exception rethrown after
// the loop (not std::terminate), cancellation as Interrupted, progress never backwards.
// Properties of the loop itself; no outside value.
#include <gtest/gtest.h>

#include <atomic>
#include <stdexcept>
#include <vector>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/ParallelFor.hpp"

using namespace lookfar;

namespace {
class RecordingProgress final : public Progress {
  public:
    void advance(std::int64_t done) override { seen.push_back(done); }
    bool cancelled() const override { return cancel_after >= 0 && calls++ >= cancel_after; }
    std::vector<std::int64_t> seen;
    int cancel_after = -1;
    mutable std::atomic<int> calls{0};
};
}  // namespace

TEST(ParallelForTest, RunsEveryIterationOnceAndReportsInOrder) {
    RecordingProgress progress;
    std::vector<std::atomic<int>> hits(1000);
    parallelFor(1000, progress, [&](std::int64_t i) { ++hits[static_cast<std::size_t>(i)]; });
    for (const auto& h : hits)
        EXPECT_EQ(h.load(), 1);
    ASSERT_EQ(progress.seen.size(), 1000u);
    for (std::size_t k = 0; k < progress.seen.size(); ++k)
        EXPECT_EQ(progress.seen[k], static_cast<std::int64_t>(k) + 1);
}

TEST(ParallelForTest, AWorkerExceptionIsRethrownAfterTheLoop) {
    RecordingProgress progress;
    EXPECT_THROW(parallelFor(500, progress,
                             [&](std::int64_t i) {
                                 if (i == 123)
                                     throw InputError("cell 123 is bad");
                             }),
                 InputError);
    ParallelForOptions serial;
    serial.parallel = false;
    EXPECT_THROW(parallelFor(
                     10, progress, [](std::int64_t) { throw std::runtime_error("x"); }, serial),
                 std::runtime_error);
}

TEST(ParallelForTest, CancellationStopsTheLoopAndThrowsInterrupted) {
    RecordingProgress progress;
    progress.cancel_after = 5;
    std::atomic<int> ran{0};
    EXPECT_THROW(parallelFor(100000, progress, [&](std::int64_t) { ++ran; }), Interrupted);
    EXPECT_LT(ran.load(), 100000);
}
