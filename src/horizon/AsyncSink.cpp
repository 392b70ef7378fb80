#include "lookfar/horizon/AsyncSink.hpp"

#include <algorithm>
#include <utility>

namespace lookfar {

AsyncHorizonSink::AsyncHorizonSink(HorizonSink& inner, std::size_t max_bytes)
    : inner_(inner), wants_(inner.wantsRectangles()), max_bytes_(max_bytes) {
    thread_ = std::thread([this] { work(); });
}

AsyncHorizonSink::~AsyncHorizonSink() {
    {
        std::lock_guard<std::mutex> lock(mutex_);
        stop_ = true;
        queue_.clear();
    }
    changed_.notify_all();
    thread_.join();
}

void AsyncHorizonSink::rethrowIfFailed() {
    if (error_)
        std::rethrow_exception(error_);
}

void AsyncHorizonSink::push(Call&& call) {
    const std::size_t bytes = (call.angle.size() + call.distance.size()) * sizeof(float);
    std::unique_lock<std::mutex> lock(mutex_);
    // The bytes counted include the call being delivered. A call larger than the bound is taken
    // when nothing else is queued or in delivery, so that no call waits forever: at most
    // max(max_bytes, one call) is held.
    changed_.wait(lock, [&] {
        return error_ || (queue_.empty() && !busy_) || queued_bytes_ + bytes <= max_bytes_;
    });
    rethrowIfFailed();
    queued_bytes_ += bytes;
    queue_.push_back(std::move(call));
    lock.unlock();
    changed_.notify_all();
}

void AsyncHorizonSink::beginDirection(int index, double azimuth_deg) {
    Call c;
    c.kind = Call::Begin;
    c.index = index;
    c.azimuth_deg = azimuth_deg;
    push(std::move(c));
}

void AsyncHorizonSink::rectangle(int index, int col0, int row0, int width, int height, int stride,
                                 const float* angle_deg, const float* distance_m) {
    Call c;
    c.kind = Call::Rectangle;
    c.index = index;
    c.col0 = col0, c.row0 = row0, c.width = width, c.height = height;
    auto pack = [&](const float* src, std::vector<float>& dst) {
        if (!src)
            return;
        dst.resize(static_cast<std::size_t>(width) * height);
        for (int r = 0; r < height; ++r) {
            const float* s = src + static_cast<std::size_t>(r) * stride;
            std::copy(s, s + width, dst.begin() + static_cast<std::ptrdiff_t>(r) * width);
        }
    };
    pack(angle_deg, c.angle);
    pack(distance_m, c.distance);
    push(std::move(c));
}

void AsyncHorizonSink::endDirection(int index) {
    Call c;
    c.kind = Call::End;
    c.index = index;
    push(std::move(c));
}

void AsyncHorizonSink::finish() {
    std::unique_lock<std::mutex> lock(mutex_);
    changed_.wait(lock, [&] { return error_ || (queue_.empty() && !busy_); });
    rethrowIfFailed();
}

void AsyncHorizonSink::work() {
    std::unique_lock<std::mutex> lock(mutex_);
    for (;;) {
        changed_.wait(lock, [&] { return stop_ || !queue_.empty(); });
        if (stop_)
            return;
        Call c = std::move(queue_.front());
        queue_.pop_front();
        busy_ = true;
        lock.unlock();
        std::exception_ptr failure;
        try {
            switch (c.kind) {
                case Call::Begin:
                    inner_.beginDirection(c.index, c.azimuth_deg);
                    break;
                case Call::Rectangle:
                    inner_.rectangle(c.index, c.col0, c.row0, c.width, c.height, c.width,
                                     c.angle.empty() ? nullptr : c.angle.data(),
                                     c.distance.empty() ? nullptr : c.distance.data());
                    break;
                case Call::End:
                    inner_.endDirection(c.index);
                    break;
            }
        } catch (...) {
            failure = std::current_exception();
        }
        lock.lock();
        busy_ = false;
        queued_bytes_ -= (c.angle.size() + c.distance.size()) * sizeof(float);
        if (failure && !error_) {
            error_ = failure;
            queue_.clear();
            queued_bytes_ = 0;
        }
        changed_.notify_all();
    }
}

}  // namespace lookfar
