// lookfar: visibility and horizon layers over a curved, refracting Earth.
// A thin main over the library: parse, run one subcommand, map errors to docs/design.md's exit
// codes.
#include <CLI/CLI.hpp>

#include <algorithm>
#include <csignal>
#include <cstdio>
#include <iostream>

#include "Commands.hpp"
#include "Common.hpp"
#include "lookfar/Version.hpp"
#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Progress.hpp"
#include "lookfar/core/Text.hpp"

namespace {

// SIGINT (Ctrl-C), SIGTERM and SIGHUP (a closed terminal or SSH session) all stop the run the
// same way: the engines see the flag, the outputs' temporaries are removed, exit 130.
extern "C" void onInterrupt(int sig) {
    lookfar::interruptFlag().store(true);
    // A second signal of the same kind falls back to the default action.
    std::signal(sig, SIG_DFL);
}

/// The command line as typed, for the outputs' metadata: arguments holding blanks or quotes
/// quoted.
std::string commandLineText(int argc, char** argv) {
    std::string line;
    for (int i = 0; i < argc; ++i) {
        if (i)
            line += ' ';
        std::string a = argv[i];
        line += a.find_first_of(" \t\"'") == std::string::npos ? a : "'" + a + "'";
    }
    return line;
}

/// `lookfar help [COMMAND]` rewritten as `lookfar [COMMAND] --help` in `args`; the exit code when
/// the help asked for is refused (a command lookfar does not have), else 0.
int helpAsFlag(std::vector<std::string>& args, const CLI::App& app,
               const std::vector<lookfar::cli::Command>& commands) {
    using namespace lookfar;
    if (args.empty() || args.front() != "help")
        return 0;
    if (args.size() > 2) {
        std::cerr << "lookfar: help takes at most one command; run 'lookfar help'\n";
        return kExitUsage;
    }
    if (args.size() == 2 && args[1] != "help") {
        bool known = false;
        for (const auto& c : commands)
            known = known || c.app->get_name() == args[1];
        if (!known) {
            std::cerr << "lookfar: help: '" << echoText(args[1])
                      << "' is not a command of lookfar; the commands are " << cli::commandList(app)
                      << "\n";
            return kExitUsage;
        }
        args = {args[1]};
    } else {
        args.clear();
    }
    args.push_back("--help");
    return 0;
}

/// Runs the command that was parsed; lookfar's errors become their exit codes of
/// docs/design.md with one sentence on stderr.
int runParsed(std::vector<lookfar::cli::Command>& commands) {
    using namespace lookfar;
    try {
        for (auto& c : commands) {
            if (c.app->parsed()) {
                cli::checkTextOptionsAreUtf8(*c.app);
                c.run();
                return interruptFlag().load() ? kExitInterrupted : kExitOk;
            }
        }
        std::cerr << "lookfar: no command given; run 'lookfar --help'\n";
        return kExitUsage;
    } catch (const Error& e) {
        std::cerr << "lookfar: " << e.what() << "\n";
        return e.exitCode();
    } catch (const std::bad_alloc&) {
        std::cerr << "lookfar: out of memory; try a smaller --reach or a window of the DEM\n";
        return kExitInternal;
    } catch (const std::exception& e) {
        std::cerr << "lookfar: internal error: " << e.what() << "\n";
        return kExitInternal;
    }
}

}  // namespace

int main(int argc, char** argv) {
    using namespace lookfar;
    cli::commandLine() = commandLineText(argc, argv);

    CLI::App app{
        "lookfar " + std::string(kVersion) +
            " — visibility, horizon and radio layers from DEMs over a curved, refracting Earth.",
        "lookfar"};
    app.set_version_flag("--version", std::string("lookfar ") + kVersion);
    app.require_subcommand(1);
    app.footer(cli::conventionsText() + cli::cautionText());
    std::vector<cli::Command> commands = cli::allCommands(app);
    CLI::App* help = app.add_subcommand("help", "print the help of lookfar, or of one COMMAND");
    std::string help_topic;
    help->add_option("COMMAND", help_topic, "the command whose help to print");

    std::vector<std::string> args(argv + 1, argv + argc);
    if (const int refused = helpAsFlag(args, app, commands))
        return refused;
    std::reverse(args.begin(), args.end());  // CLI11 takes the arguments last first

    try {
        app.parse(args);
    } catch (const CLI::CallForHelp& e) {
        return app.exit(e);
    } catch (const CLI::CallForAllHelp& e) {
        return app.exit(e);
    } catch (const CLI::CallForVersion& e) {
        return app.exit(e);
    } catch (const CLI::ParseError& e) {
        const CLI::App* command = nullptr;
        for (const auto& c : commands) {
            if (c.app->parsed())
                command = c.app;
        }
        std::cerr << "lookfar: " << cli::parseErrorSentence(e, app, command) << "\n";
        std::cerr << (command ? "Run 'lookfar help " + command->get_name() + "' for its options.\n"
                              : std::string("Run 'lookfar help' for the commands.\n"));
        return kExitUsage;
    }
    if (help->parsed()) {  // `lookfar help help`
        std::cout << app.get_formatter()->make_help(&app, "lookfar", CLI::AppFormatMode::Normal);
        return kExitOk;
    }

    std::signal(SIGINT, onInterrupt);
    std::signal(SIGTERM, onInterrupt);
    std::signal(SIGHUP, onInterrupt);
    return runParsed(commands);
}
