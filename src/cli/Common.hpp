#pragma once
// What the CLI's commands share: CLI11 options built from the run layer's declarations, progress
// on stderr, the report printed on stdout. The work itself is the run layer's (lookfar/run/).
#include <CLI/CLI.hpp>

#include <chrono>
#include <cstdint>
#include <functional>
#include <memory>
#include <string>

#include "lookfar/core/Progress.hpp"
#include "lookfar/run/Command.hpp"
#include "lookfar/run/RunContext.hpp"

namespace lookfar::cli {

using run::CommonOptions;
using run::OptionDecl;
using run::OptionTable;
using run::RunReport;

/// A subcommand: its CLI11 app and what to run once it is parsed.
struct Command {
    CLI::App* app = nullptr;
    std::function<void()> run;
};

/// A run-layer check as a CLI11 validator (refused while parsing: exit 2).
CLI::Validator cliCheck(run::ValueCheck check);
/// Adds the declared options to `app`, binding each to its field.
void addDeclaredOptions(CLI::App* app, const OptionTable& table);

/// Registers a run-layer command under `root`: its options from its declarations, its help and
/// footer; once parsed it runs with progress on stderr and prints its report.
Command addRunCommand(CLI::App& root, std::shared_ptr<run::RunCommand> command);

/// Refuses (UsageError naming the option) a value of `app` that is not UTF-8. Options whose type
/// name is FILE are paths, taken as the bytes the system gives: they are not checked.
void checkTextOptionsAreUtf8(const CLI::App& app);

/// Progress on stderr: a bar on a terminal, a line every 10 % otherwise, nothing with --quiet.
class TerminalProgress final : public Progress {
  public:
    explicit TerminalProgress(bool quiet);
    ~TerminalProgress() override;
    void begin(const std::string& label, std::int64_t total) override;
    void advance(std::int64_t done) override;
    void end() override;
    bool cancelled() const override;
    /// "lookfar: SENTENCE" on stderr, also with --quiet.
    void warn(const std::string& sentence) override;

  private:
    bool quiet_;
    bool tty_;
    std::string label_;
    std::int64_t total_ = 0;
    int last_shown_ = -1;
    std::chrono::steady_clock::time_point start_;
    bool open_ = false;
};

/// Prints the report: the summary JSON with --json, else the table.
void printReport(const RunReport& report, bool json);

/// The command line as typed, for metadata.
std::string& commandLine();

}  // namespace lookfar::cli
