#pragma once
// One function per subcommand (one file each); main() registers them all.
#include <CLI/CLI.hpp>

#include <string>
#include <vector>

#include "Common.hpp"

namespace lookfar::cli {

Command addInfoCommand(CLI::App& root);
Command addViewshedCommand(CLI::App& root);
Command addHorizonCommand(CLI::App& root);
Command addLinkCommand(CLI::App& root);
Command addIntervisCommand(CLI::App& root);
Command addSelectCommand(CLI::App& root);
Command addSignalCommand(CLI::App& root);

/// Every subcommand, in the order --help lists them.
std::vector<Command> allCommands(CLI::App& root);

/// The geometry conventions, printed in --help (docs/design.md: state them in --help).
std::string conventionsText();
/// The cautions of docs/design.md, printed at the foot of --help.
std::string cautionText();

/// The names of the commands, for messages: "info, viewshed, … or help".
std::string commandList(const CLI::App& app);
/// CLI11's parse error `e` in lookfar's words, one sentence naming the option or argument;
/// `command` is the subcommand being parsed, if any.
std::string parseErrorSentence(const CLI::ParseError& e, const CLI::App& app,
                               const CLI::App* command);

}  // namespace lookfar::cli
