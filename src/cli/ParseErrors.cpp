// CLI11's parse errors in lookfar's words (see Commands.hpp).
#include <string>
#include <vector>

#include "Commands.hpp"
#include "lookfar/core/Text.hpp"

namespace lookfar::cli {

namespace {

/// What follows "NAME: " in CLI11's message, or the whole message.
std::string afterName(const std::string& message, std::string* name) {
    const auto colon = message.find(": ");
    if (colon == std::string::npos)
        return message;
    *name = message.substr(0, colon);
    return message.substr(colon + 2);
}

}  // namespace

/// The names of the commands, for messages: "info, viewshed, … or help".
std::string commandList(const CLI::App& app) {
    std::string list;
    const auto subs = app.get_subcommands([](const CLI::App*) { return true; });
    for (std::size_t i = 0; i < subs.size(); ++i)
        list += (i == 0 ? "" : i + 1 == subs.size() ? " or " : ", ") + subs[i]->get_name();
    return list;
}

/// CLI11's parse errors in lookfar's words, one sentence naming the option or argument.
std::string parseErrorSentence(const CLI::ParseError& e, const CLI::App& app,
                               const CLI::App* command) {
    const std::string what = e.what();
    const std::string who = command ? command->get_name() : "lookfar";
    if (dynamic_cast<const CLI::ExtrasError*>(&e)) {
        std::vector<std::string> extras = command ? command->remaining() : app.remaining();
        if (!command && !extras.empty()) {
            return "'" + echoText(extras.front()) +
                   "' is not a command of lookfar; the commands are " + commandList(app);
        }
        std::string list;
        for (std::size_t i = 0; i < extras.size(); ++i)
            list += (i ? " " : "") + echoText(extras[i]);
        return who + " does not take '" + list +
               "': no such option, or a value too many (each option takes one value; quote a "
               "value that holds spaces)";
    }
    if (dynamic_cast<const CLI::RequiredError*>(&e)) {
        if (what.rfind("A subcommand", 0) == 0) {
            const std::vector<std::string> extras = app.remaining();
            if (!extras.empty()) {
                return "'" + echoText(extras.front()) +
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
            return rest.substr(0, eq) + ": '" + echoText(rest.substr(eq + 3)) +
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
    return echoText(what, 300);
}

}  // namespace lookfar::cli
