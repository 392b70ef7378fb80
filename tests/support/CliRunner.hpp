#pragma once
// Runs the built lookfar binary for CLI tests and captures its exit code, stdout and stderr.
#include <gtest/gtest.h>

#include <sys/stat.h>
#include <sys/wait.h>
#include <unistd.h>

#include <cstdio>
#include <cstdlib>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

namespace lookfar::testing {

struct CliResult {
    int exit_code = -1;
    std::string out;
    std::string err;
};

inline std::string sourceDir() {
    return LOOKFAR_SOURCE_DIR;
}
inline std::string testRaster(const std::string& name) {
    return sourceDir() + "/test_rasters/" + name;
}
/// The USGS sample of docs/references.md row 13, converted at test time by the ctest fixture.
inline std::string usgsSample() {
    return std::string(LOOKFAR_TEST_DATA_DIR) + "/usgs_jacksboro.tif";
}

inline std::string readFile(const std::string& path) {
    std::ifstream in(path, std::ios::binary);
    std::stringstream ss;
    ss << in.rdbuf();
    return ss.str();
}

inline bool fileExists(const std::string& path) {
    struct stat st {};
    return stat(path.c_str(), &st) == 0;
}

/// A fresh scratch folder for one test, removed by the destructor.
class ScratchDir {
  public:
    ScratchDir() {
        std::string tmpl = std::string(LOOKFAR_BINARY_DIR) + "/scratch-XXXXXX";
        std::vector<char> buf(tmpl.begin(), tmpl.end());
        buf.push_back('\0');
        path_ = mkdtemp(buf.data());
    }
    ~ScratchDir() {
        std::string cmd = "rm -rf '" + path_ + "'";
        (void)std::system(cmd.c_str());
    }
    const std::string& path() const { return path_; }
    std::string file(const std::string& name) const { return path_ + "/" + name; }
    /// Names of the files in the folder, hidden ones included (to spot leftover temp files).
    std::vector<std::string> entries() const {
        std::vector<std::string> names;
        std::string cmd = "ls -A '" + path_ + "'";
        FILE* p = popen(cmd.c_str(), "r");
        char line[4096];
        while (p && fgets(line, sizeof line, p)) {
            std::string s = line;
            if (!s.empty() && s.back() == '\n')
                s.pop_back();
            names.push_back(s);
        }
        if (p)
            pclose(p);
        return names;
    }

  private:
    std::string path_;
};

inline std::string shellQuote(const std::string& s) {
    std::string out = "'";
    for (char c : s) {
        if (c == '\'')
            out += "'\\''";
        else
            out += c;
    }
    return out + "'";
}

/// Runs `lookfar ARGS…` with stdout and stderr captured to files.
inline CliResult runLookfar(const std::vector<std::string>& args) {
    ScratchDir capture;
    std::string cmd = shellQuote(LOOKFAR_CLI_PATH);
    for (const auto& a : args)
        cmd += " " + shellQuote(a);
    cmd += " >" + shellQuote(capture.file("out")) + " 2>" + shellQuote(capture.file("err")) +
           " </dev/null";
    int status = std::system(cmd.c_str());
    CliResult r;
    r.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
    r.out = readFile(capture.file("out"));
    r.err = readFile(capture.file("err"));
    return r;
}

/// Starts lookfar with `args` in a child process, its stderr into the file `err_path` and its
/// stdout to /dev/null, and returns at once with the child's pid (for tests that signal it).
inline pid_t startLookfar(const std::vector<std::string>& args, const std::string& err_path) {
    std::vector<std::string> argv_text = {"lookfar"};
    argv_text.insert(argv_text.end(), args.begin(), args.end());
    std::vector<char*> argv;
    for (auto& a : argv_text)
        argv.push_back(const_cast<char*>(a.c_str()));
    argv.push_back(nullptr);
    const pid_t pid = fork();
    if (pid == 0) {
        FILE* f = std::freopen(err_path.c_str(), "w", stderr);
        (void)f;
        f = std::freopen("/dev/null", "w", stdout);
        (void)f;
        execv(LOOKFAR_CLI_PATH, argv.data());
        _exit(127);
    }
    return pid;
}

/// First line of a text.
inline std::string firstLine(const std::string& s) {
    return s.substr(0, s.find('\n'));
}

/// A command that must fail with `code`, the first line of its stderr holding every `needles`,
/// no internal error, and nothing written into `out`.
inline void expectRefused(const std::vector<std::string>& args, int code,
                          const std::vector<std::string>& needles, const ScratchDir& out) {
    const CliResult r = runLookfar(args);
    EXPECT_EQ(r.exit_code, code) << r.err;
    for (const auto& n : needles)
        EXPECT_NE(firstLine(r.err).find(n), std::string::npos) << "no '" << n << "' in " << r.err;
    EXPECT_EQ(r.err.find("internal error"), std::string::npos) << r.err;
    EXPECT_TRUE(out.entries().empty()) << "left behind: " << out.entries().front();
}

}  // namespace lookfar::testing
