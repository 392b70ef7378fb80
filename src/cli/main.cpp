// lookfar: visibility and horizon layers over a curved, refracting Earth.
// A thin main over the library: parse, run one subcommand, map errors to docs/design.md's exit
// codes.
#include <CLI/CLI.hpp>

#include <csignal>
#include <cstdio>
#include <iostream>

#include "Commands.hpp"
#include "Common.hpp"
#include "lookfar/Version.hpp"
#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Progress.hpp"

namespace {

extern "C" void onInterrupt(int) {
    lookfar::interruptFlag().store(true);
    // A second Ctrl-C falls back to the default action.
    std::signal(SIGINT, SIG_DFL);
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

    CLI::App app{"lookfar " + std::string(kVersion) +
                     " — visibility and horizon layers from DEMs over a curved, refracting Earth.",
                 "lookfar"};
    app.set_version_flag("--version", std::string("lookfar ") + kVersion);
    app.require_subcommand(1);
    app.footer(cli::conventionsText() + cli::cautionText());
    std::vector<cli::Command> commands = cli::allCommands(app);

    try {
        app.parse(argc, argv);
    } catch (const CLI::CallForHelp& e) {
        return app.exit(e);
    } catch (const CLI::CallForAllHelp& e) {
        return app.exit(e);
    } catch (const CLI::CallForVersion& e) {
        return app.exit(e);
    } catch (const CLI::ParseError& e) {
        std::cerr << "lookfar: " << e.what() << "\n";
        std::cerr << "Run 'lookfar --help' or 'lookfar COMMAND --help' for the options.\n";
        return kExitUsage;
    }

    std::signal(SIGINT, onInterrupt);
    std::signal(SIGTERM, onInterrupt);
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
