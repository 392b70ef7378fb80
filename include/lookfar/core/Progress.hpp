#pragma once
// Progress and cancellation as the engines see them: a sink they report to, with no idea of
// terminals or printing. The CLI supplies a sink that draws on stderr.
#include <atomic>
#include <cstdint>
#include <string>

namespace lookfar {

class Progress {
  public:
    virtual ~Progress() = default;
    /// Starts a stage of `total` units of work (cells, rows, sites …) named `label`.
    virtual void begin(const std::string& label, std::int64_t total) { (void)label, (void)total; }
    /// `done` units of the current stage are finished (monotonic, thread-safe callers only).
    virtual void advance(std::int64_t done) { (void)done; }
    virtual void end() {}
    /// True once the user asked to stop; engines then throw Interrupted.
    virtual bool cancelled() const { return false; }
    /// A sentence for the user that is not an error (a goal not reached …); a sink that shows
    /// progress shows it even when it is quiet.
    virtual void warn(const std::string& sentence) { (void)sentence; }
};

/// Passes an outer run's cancellation to an inner engine, and shows nothing of it.
class CancelOnlyProgress final : public Progress {
  public:
    explicit CancelOnlyProgress(const Progress& outer) : outer_(outer) {}
    bool cancelled() const override { return outer_.cancelled(); }

  private:
    const Progress& outer_;
};

/// A sink that shows nothing and is never cancelled.
Progress& silentProgress();

/// Set from the SIGINT handler; read by every Progress sink's cancelled().
std::atomic<bool>& interruptFlag();

/// Throws Interrupted if the sink reports cancellation.
void throwIfCancelled(const Progress& progress);

}  // namespace lookfar
