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

/// The names of the commands, for messages: "info, viewshed, … or help".
std::string commandList(const CLI::App& app) {
    std::string list;
    const auto subs = app.get_subcommands([](const CLI::App*) { return true; });
    for (std::size_t i = 0; i < subs.size(); ++i)
        list += (i == 0 ? "" : i + 1 == subs.size() ? " or " : ", ") + subs[i]->get_name();
    return list;
}

/// What follows "NAME: " in CLI11's message, or the whole message.
std::string afterName(const std::string& message, std::string* name) {
    const auto colon = message.find(": ");
    if (colon == std::string::npos)
        return message;
    *name = message.substr(0, colon);
    return message.substr(colon + 2);
}

/// CLI11's parse errors in lookfar's words, one sentence naming the option or argument.
std::string parseErrorSentence(const CLI::ParseError& e, const CLI::App& app,
                               const CLI::App* command) {
    const std::string what = e.what();
    const std::string who = command ? command->get_name() : "lookfar";
    if (dynamic_cast<const CLI::ExtrasError*>(&e)) {
        std::vector<std::string> extras = command ? command->remaining() : app.remaining();
        if (!command && !extras.empty()) {
            return "'" + lookfar::echoText(extras.front()) +
                   "' is not a command of lookfar; the commands are " + commandList(app);
        }
        std::string list;
        for (std::size_t i = 0; i < extras.size(); ++i)
            list += (i ? " " : "") + lookfar::echoText(extras[i]);
        return who + " does not take '" + list +
               "': no such option, or a value too many (each option takes one value; quote a "
               "value that holds spaces)";
    }
    if (dynamic_cast<const CLI::RequiredError*>(&e)) {
        if (what.rfind("A subcommand", 0) == 0) {
            const std::vector<std::string> extras = app.remaining();
            if (!extras.empty()) {
                return "'" + lookfar::echoText(extras.front()) +
                       "' is not a command of lookfar; the commands are " + commandList(app);
            }
            return "no command given; the commands are " + commandList(app);
        }
        const auto at = what.find(" is required");
        if (at != std::string::npos)
            return who + " needs " + (what.substr(0, at) == "DEM" ? "a DEM" : what.substr(0, at));
        return who + ": " + what;
    }
    if (dynamic_cast<const CLI::ArgumentMismatch*>(&e)) {
        std::string name;
        const std::string rest = afterName(what, &name);
        if (rest.find("At Most") != std::string::npos)
            return name + " is given more than once; give it once";
        return name + " needs a value";
    }
    if (dynamic_cast<const CLI::ExcludesError*>(&e)) {
        const auto at = what.find(" excludes ");
        if (at != std::string::npos) {
            return what.substr(0, at) + " and " + what.substr(at + 10) +
                   " exclude each other: give one of them";
        }
    }
    if (dynamic_cast<const CLI::ConversionError*>(&e) &&
        what.rfind("Could not convert: ", 0) == 0) {
        const std::string rest = what.substr(19);
        const auto eq = rest.find(" = ");
        if (eq != std::string::npos) {
            return rest.substr(0, eq) + ": '" + lookfar::echoText(rest.substr(eq + 3)) +
                   "' is not a value it takes";
        }
    }
    if (dynamic_cast<const CLI::ValidationError*>(&e)) {
        // Our checks may name the option themselves: "--count: --count must be at least 1".
        std::string name;
        const std::string rest = afterName(what, &name);
        if (!name.empty() && rest.rfind(name + " ", 0) == 0)
            return rest;
        return what;
    }
    return lookfar::echoText(what, 300);
}

}  // namespace

int main(int argc, char** argv) {
    using namespace lookfar;
    std::string line;
    for (int i = 0; i < argc; ++i) {
        if (i)
            line += ' ';
        std::string a = argv[i];
        line += a.find_first_of(" \t\"'") == std::string::npos ? a : "'" + a + "'";
    }
    cli::commandLine() = line;

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

    // `lookfar help [COMMAND]` is `lookfar [COMMAND] --help`.
    std::vector<std::string> args(argv + 1, argv + argc);
    if (!args.empty() && args.front() == "help") {
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
                          << "' is not a command of lookfar; the commands are " << commandList(app)
                          << "\n";
                return kExitUsage;
            }
            args = {args[1]};
        } else {
            args.clear();
        }
        args.push_back("--help");
    }
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
        std::cerr << "lookfar: " << parseErrorSentence(e, app, command) << "\n";
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
