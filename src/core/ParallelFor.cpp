#include "lookfar/core/ParallelFor.hpp"

#include <atomic>
#include <exception>
#include <mutex>

#include "lookfar/core/Errors.hpp"

namespace lookfar {

void parallelFor(std::int64_t n, Progress& progress, const std::function<void(std::int64_t)>& body,
                 const ParallelForOptions& options) {
    std::atomic<bool> stop{false};
    std::exception_ptr failure;
    std::mutex mutex;  // guards failure, the count and progress.advance()
    std::int64_t done = 0;
    auto one = [&](std::int64_t i) {
        if (stop.load(std::memory_order_relaxed))
            return;
        try {
            body(i);
        } catch (...) {
            std::lock_guard<std::mutex> lock(mutex);
            if (!failure)
                failure = std::current_exception();
            stop = true;
            return;
        }
        if (progress.cancelled())
            stop = true;
        if (options.report) {
            // Counted and reported under one lock, so the figures shown never go backwards.
            std::lock_guard<std::mutex> lock(mutex);
            progress.advance(++done);
        }
    };
    if (options.parallel) {
        const int chunk = options.chunk > 0 ? options.chunk : 1;
#pragma omp parallel for schedule(dynamic, chunk)
        for (std::int64_t i = 0; i < n; ++i)
            one(i);
    } else {
        for (std::int64_t i = 0; i < n && !stop.load(std::memory_order_relaxed); ++i)
            one(i);
    }
    if (failure)
        std::rethrow_exception(failure);
    throwIfCancelled(progress);
}

}  // namespace lookfar
