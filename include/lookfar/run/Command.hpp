#pragma once
// A command of the run layer: its name and help, its declared options over its own option
// struct, and its run (validate → open → execute → write → summary model). The CLI builds its
// options from declare() and calls run(); other callers fill the option struct directly.
#include <string>

#include "lookfar/run/Options.hpp"
#include "lookfar/run/RunContext.hpp"

namespace lookfar::run {

/// What --help says of a command.
struct CommandHelp {
    std::string name;         ///< "viewshed"
    std::string description;  ///< one line
    std::string footer;       ///< notes printed after the options ("" for none)
};

class RunCommand {
  public:
    virtual ~RunCommand() = default;
    virtual CommandHelp help() const = 0;
    /// The declarations over this command's option struct, in the order --help lists them.
    virtual OptionTable declare() = 0;
    /// The common options of this command's option struct.
    virtual const CommonOptions& common() const = 0;
    /// Runs the command with the options as they are now. Throws lookfar's errors: UsageError
    /// (exit 2), InputError (3), OutputError (4), Interrupted (130); on any error no output is
    /// left behind.
    virtual RunReport run(const RunEnv& env) = 0;
};

/// The flag of an options-struct field: "target_height_m" → "--target-height".
std::string flagOfField(const std::string& field);

/// Runs `command` as the CLI does: an InvalidOption from the library (which names the field of
/// its options struct) becomes a UsageError naming the flag the command declares for it
/// ("--target-height: …"); an undeclared field keeps the library's words.
RunReport runCommand(RunCommand& command, const RunEnv& env);

}  // namespace lookfar::run
