#pragma once
// AsyncHorizonSink: hands a HorizonSink's calls to a thread of its own, so that a slow sink
// (GeoTIFF compression) works while the engine goes on with the next cells instead of after them.
//
// The calls reach the inner sink in the order they were made, from that one thread. Rectangles
// are copied (packed, stride = width) into a queue bounded by `max_bytes` (the call being
// delivered included; a single larger call is let through alone): the engine waits when the sink
// falls that far behind, so memory stays bounded whatever N and the DEM's size.
#include <condition_variable>
#include <cstddef>
#include <deque>
#include <exception>
#include <mutex>
#include <thread>
#include <vector>

#include "lookfar/horizon/HorizonScan.hpp"

namespace lookfar {

class AsyncHorizonSink final : public HorizonSink {
  public:
    explicit AsyncHorizonSink(HorizonSink& inner, std::size_t max_bytes = 4u << 20);
    /// Stops the thread; calls still queued are dropped (call finish() to deliver them).
    ~AsyncHorizonSink() override;
    AsyncHorizonSink(const AsyncHorizonSink&) = delete;
    AsyncHorizonSink& operator=(const AsyncHorizonSink&) = delete;

    void beginDirection(int index, double azimuth_deg) override;
    void rectangle(int index, int col0, int row0, int width, int height, int stride,
                   const float* angle_deg, const float* distance_m) override;
    void endDirection(int index) override;
    bool wantsRectangles() const override { return wants_; }

    /// Waits until every call has reached the inner sink. Rethrows the first exception the inner
    /// sink threw (every call made after it is then dropped; later calls here rethrow it too).
    void finish();

  private:
    struct Call {
        enum Kind { Begin, Rectangle, End } kind = Begin;
        int index = 0;
        double azimuth_deg = 0;
        int col0 = 0, row0 = 0, width = 0, height = 0;
        std::vector<float> angle, distance;  // empty when the caller gave none
    };
    void push(Call&& call);
    void work();
    void rethrowIfFailed();  // with the lock held

    HorizonSink& inner_;
    const bool wants_;
    const std::size_t max_bytes_;
    std::mutex mutex_;
    std::condition_variable changed_;
    std::deque<Call> queue_;
    std::size_t queued_bytes_ = 0;
    bool busy_ = false;  // the thread is delivering a call
    bool stop_ = false;
    std::exception_ptr error_;
    std::thread thread_;
};

}  // namespace lookfar
