#pragma once
// A command run as a child process with its wall time and peak resident memory: shared by the
// tests (memory rules) and lookfar_bench (figures), header-only so that both can use it.
#include <fcntl.h>
#include <sys/resource.h>
#include <sys/wait.h>
#include <unistd.h>

#include <chrono>
#include <cstdint>
#include <string>
#include <vector>

namespace lookfar::testing {

struct ChildRun {
    double wall_s = 0;
    std::int64_t peak_rss_bytes = 0;
    int exit_code = 0;
};

/// Runs argv (argv[0] a path) with stdout and stderr to /dev/null; wall time and peak resident
/// memory of the child (getrusage).
inline ChildRun runChild(const std::vector<std::string>& argv) {
    ChildRun run;
    const auto t0 = std::chrono::steady_clock::now();
    const pid_t pid = fork();
    if (pid == 0) {
        const int devnull = open("/dev/null", O_WRONLY);
        dup2(devnull, STDOUT_FILENO);
        dup2(devnull, STDERR_FILENO);
        std::vector<char*> cargs;
        for (const auto& a : argv)
            cargs.push_back(const_cast<char*>(a.c_str()));
        cargs.push_back(nullptr);
        execv(cargs[0], cargs.data());
        _exit(127);
    }
    int status = 0;
    struct rusage ru {};
    wait4(pid, &status, 0, &ru);
    run.wall_s = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
    run.peak_rss_bytes = static_cast<std::int64_t>(ru.ru_maxrss) * 1024;
    run.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : 128 + WTERMSIG(status);
    return run;
}

}  // namespace lookfar::testing
