#include "Common.hpp"

#include <unistd.h>

#include <cstdio>
#include <iostream>
#include <type_traits>

#include "lookfar/core/Errors.hpp"
#include "Commands.hpp"
#include "lookfar/core/Text.hpp"

namespace lookfar::cli {

std::string& commandLine() {
    static std::string line;
    return line;
}

CLI::Validator cliCheck(run::ValueCheck check) {
    return CLI::Validator([check](const std::string& text) { return check(text); }, "");
}

namespace {

/// Adds one declared option, bound to its field.
CLI::Option* addDeclared(CLI::App* app, const OptionDecl& d) {
    return std::visit(
        [&](auto* field) -> CLI::Option* {
            if constexpr (std::is_same_v<decltype(field), bool*>)
                return app->add_flag(d.names, *field, d.help);
            else
                return app->add_option(d.names, *field, d.help);
        },
        d.field);
}

}  // namespace

void addDeclaredOptions(CLI::App* app, const OptionTable& table) {
    for (const OptionDecl& d : table) {
        CLI::Option* opt = addDeclared(app, d);
        if (d.show_default)
            opt->capture_default_str();
        if (d.check)
            opt->check(cliCheck(d.check));
        if (!d.type_name.empty())
            opt->type_name(d.type_name);
        if (d.required)
            opt->required();
        if (!d.group.empty())
            opt->group(d.group);
    }
    for (const OptionDecl& d : table) {
        if (!d.excludes.empty())
            app->get_option(d.flag())->excludes(app->get_option(d.excludes));
    }
}

void printReport(const RunReport& report, bool json) {
    if (json) {
        std::cout << report.summary.dump(2) << "\n";
    } else {
        std::cout << report.table;
    }
    std::cout.flush();
}

Command addRunCommand(CLI::App& root, std::shared_ptr<run::RunCommand> command) {
    const run::CommandHelp help = command->help();
    CLI::App* app = root.add_subcommand(help.name, help.description);
    const OptionTable table = command->declare();
    addDeclaredOptions(app, table);
    if (!help.footer.empty())
        app->footer(help.footer + conventionsText() + cautionText());
    auto run = [command, table, app] {
        for (const OptionDecl& d : table) {
            if (d.given)
                *d.given = app->get_option(d.flag())->count() > 0;
        }
        TerminalProgress progress(command->common().quiet);
        const RunReport report = run::runCommand(*command, {&progress, commandLine()});
        printReport(report, command->common().json);
    };
    return {app, run};
}

void checkTextOptionsAreUtf8(const CLI::App& app) {
    for (const CLI::Option* opt : app.get_options()) {
        if (opt->get_type_name() == "FILE")
            continue;
        for (const std::string& value : opt->results()) {
            if (invalidUtf8Offset(value) != std::string::npos) {
                throw UsageError(opt->get_name() + ": the value '" + echoText(value) +
                                 "' is not UTF-8 (" + describeInvalidUtf8(value) +
                                 "); lookfar reads text as UTF-8");
            }
        }
    }
}

}  // namespace lookfar::cli
