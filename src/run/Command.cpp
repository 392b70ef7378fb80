#include "lookfar/run/Command.hpp"

#include "lookfar/core/Errors.hpp"

namespace lookfar::run {

std::string flagOfField(const std::string& field) {
    std::string flag = "--" + InvalidOption::words(field);
    for (char& c : flag)
        c = c == ' ' ? '-' : c;
    return flag;
}

RunReport runCommand(RunCommand& command, const RunEnv& env) {
    try {
        return command.run(env);
    } catch (const InvalidOption& e) {
        const std::string flag = flagOfField(e.field());
        for (const OptionDecl& d : command.declare()) {
            if (d.flag() == flag)
                throw UsageError(flag + ": " + e.detail());
        }
        throw;
    }
}

}  // namespace lookfar::run
