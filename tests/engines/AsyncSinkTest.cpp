// AsyncHorizonSink: the inner sink receives every call, in order and with the same values, from
// its own thread; a failing sink's exception reaches the engine's side; memory stays bounded.
#include <gtest/gtest.h>

#include <atomic>
#include <chrono>
#include <stdexcept>
#include <string>
#include <thread>
#include <vector>

#include "lookfar/horizon/AsyncSink.hpp"

using namespace lookfar;

namespace {

/// Writes down every call as text, slowly (so that the queue fills up).
class RecordingSink final : public HorizonSink {
  public:
    std::vector<std::string> log;
    std::thread::id thread;
    int fail_at = -1;  // throw on this rectangle (0-based)
    int rectangles = 0;

    void beginDirection(int index, double azimuth_deg) override {
        thread = std::this_thread::get_id();
        log.push_back("begin " + std::to_string(index) + " " + std::to_string(azimuth_deg));
    }
    void rectangle(int index, int col0, int row0, int width, int height, int stride,
                   const float* angle, const float* distance) override {
        if (rectangles++ == fail_at)
            throw std::runtime_error("disk full");
        std::this_thread::sleep_for(std::chrono::microseconds(200));
        std::string s = "rect " + std::to_string(index) + " " + std::to_string(col0) + "," +
                        std::to_string(row0) + " " + std::to_string(width) + "x" +
                        std::to_string(height);
        for (int r = 0; r < height; ++r) {
            for (int c = 0; c < width; ++c) {
                s += " " + std::to_string(angle[r * stride + c]);
                s += distance ? "/" + std::to_string(distance[r * stride + c]) : "/-";
            }
        }
        log.push_back(s);
    }
    void endDirection(int index) override { log.push_back("end " + std::to_string(index)); }
};

/// The same calls to any sink: 3 directions of 20 rectangles of 3 × 2 cells (stride 5).
void feed(HorizonSink& sink, bool with_distance) {
    std::vector<float> a(10), d(10);
    for (int dir = 0; dir < 3; ++dir) {
        sink.beginDirection(dir, dir * 120.0);
        for (int k = 0; k < 20; ++k) {
            for (int i = 0; i < 10; ++i) {
                a[i] = static_cast<float>(dir * 1000 + k * 10 + i);
                d[i] = -a[i];
            }
            sink.rectangle(dir, k * 3, dir * 2, 3, 2, 5, a.data(),
                           with_distance ? d.data() : nullptr);
        }
        sink.endDirection(dir);
    }
}

}  // namespace

TEST(AsyncSinkTest, DeliversEveryCallInOrderFromItsOwnThread) {
    for (bool with_distance : {true, false}) {
        RecordingSink direct, inner;
        feed(direct, with_distance);
        {
            // 64 bytes: at most a rectangle or two in the queue, so the caller waits often.
            AsyncHorizonSink async(inner, 64);
            feed(async, with_distance);
            async.finish();
        }
        EXPECT_EQ(inner.log, direct.log);
        EXPECT_NE(inner.thread, std::this_thread::get_id());
        EXPECT_EQ(inner.log.size(), 3u * 22u);
    }
}

TEST(AsyncSinkTest, TheInnerSinksExceptionReachesTheCaller) {
    RecordingSink inner;
    inner.fail_at = 5;
    AsyncHorizonSink async(inner, 64);
    bool thrown = false;
    try {
        feed(async, true);
        async.finish();
    } catch (const std::runtime_error& e) {
        thrown = true;
        EXPECT_STREQ(e.what(), "disk full");
    }
    EXPECT_TRUE(thrown);
    // Nothing after the failing call was delivered.
    EXPECT_EQ(inner.log.size(), 1u + 5u);
    EXPECT_THROW(async.finish(), std::runtime_error);
}

TEST(AsyncSinkTest, DroppedWithoutFinishStopsCleanly) {
    RecordingSink inner;
    {
        AsyncHorizonSink async(inner, 1u << 20);
        feed(async, true);
    }  // destroyed at once: the calls still queued are dropped, the thread joined
    EXPECT_LE(inner.log.size(), 3u * 22u);
}
