// Progress on stderr (see Common.hpp): a bar on a terminal, a line per tenth otherwise.
#include <unistd.h>

#include <cstdio>
#include <iostream>

#include "Common.hpp"

namespace lookfar::cli {

TerminalProgress::TerminalProgress(bool quiet) : quiet_(quiet), tty_(isatty(STDERR_FILENO) != 0) {}
TerminalProgress::~TerminalProgress() {
    if (open_ && tty_ && !quiet_)
        std::fputs("\n", stderr);
}

void TerminalProgress::begin(const std::string& label, std::int64_t total) {
    label_ = label;
    total_ = total > 0 ? total : 1;
    last_shown_ = -1;
    start_ = std::chrono::steady_clock::now();
    open_ = true;
    advance(0);
}

void TerminalProgress::advance(std::int64_t done) {
    if (quiet_ || !open_)
        return;
    int percent = static_cast<int>(100.0 * static_cast<double>(done) / total_);
    if (percent > 100)
        percent = 100;
    // Never backwards: a figure at or below the last one shown is not drawn again.
    if (tty_) {
        if (percent <= last_shown_)
            return;
        last_shown_ = percent;
        int filled = percent * 30 / 100;
        std::fprintf(stderr, "\r%-24s [%s%s] %3d%%", label_.c_str(),
                     std::string(filled, '#').c_str(), std::string(30 - filled, '.').c_str(),
                     percent);
        std::fflush(stderr);
    } else {
        int decile = percent / 10;
        if (decile <= last_shown_)
            return;
        last_shown_ = decile;
        std::fprintf(stderr, "lookfar: %s %d%%\n", label_.c_str(), decile * 10);
    }
}

void TerminalProgress::end() {
    if (quiet_ || !open_)
        return;
    if (cancelled()) {  // an interrupted stage is not completed: no 100 %, no "done"
        if (tty_)
            std::fprintf(stderr, "\n");
        open_ = false;
        return;
    }
    double s = std::chrono::duration<double>(std::chrono::steady_clock::now() - start_).count();
    if (tty_) {
        std::fprintf(stderr, "\r%-24s [%s] 100%% (%.1f s)\n", label_.c_str(),
                     std::string(30, '#').c_str(), s);
    } else {
        if (last_shown_ < 10)
            std::fprintf(stderr, "lookfar: %s 100%%\n", label_.c_str());
        std::fprintf(stderr, "lookfar: %s done in %.1f s\n", label_.c_str(), s);
    }
    open_ = false;
}

void TerminalProgress::warn(const std::string& sentence) {
    std::cerr << "lookfar: " << sentence << "\n";
}

bool TerminalProgress::cancelled() const {
    return interruptFlag().load(std::memory_order_relaxed);
}

}  // namespace lookfar::cli
