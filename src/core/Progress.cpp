#include "lookfar/core/Progress.hpp"

#include "lookfar/core/Errors.hpp"

namespace lookfar {

namespace {
class SilentProgress final : public Progress {
  public:
    bool cancelled() const override { return interruptFlag().load(std::memory_order_relaxed); }
};
SilentProgress g_silent;
std::atomic<bool> g_interrupt{false};
}  // namespace

Progress& silentProgress() {
    return g_silent;
}
std::atomic<bool>& interruptFlag() {
    return g_interrupt;
}

void throwIfCancelled(const Progress& progress) {
    if (progress.cancelled())
        throw Interrupted();
}

}  // namespace lookfar
