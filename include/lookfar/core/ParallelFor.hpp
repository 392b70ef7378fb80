#pragma once
// The one parallel loop of the engines: OpenMP threads over independent iterations, progress,
// cancellation, and the first exception thrown in a worker rethrown after the loop (an exception
// escaping an OpenMP region would end the program instead).
#include <cstdint>
#include <functional>

#include "lookfar/core/Progress.hpp"

namespace lookfar {

struct ParallelForOptions {
    /// Iterations handed to a thread at a time (OpenMP's dynamic schedule).
    int chunk = 1;
    /// false runs the loop on the calling thread alone (e.g. inside an outer parallel loop).
    bool parallel = true;
    /// Call progress.advance(iterations finished) after each iteration (monotonic).
    bool report = true;
};

/// Runs body(i) for every i in [0, n). Iterations must be independent; the results must not
/// depend on which thread runs them. Stops handing out iterations once progress.cancelled() or a
/// body has thrown; afterwards rethrows the first exception, else throws Interrupted when
/// cancelled. progress.begin()/end() are the caller's.
void parallelFor(std::int64_t n, Progress& progress, const std::function<void(std::int64_t)>& body,
                 const ParallelForOptions& options = {});

}  // namespace lookfar
