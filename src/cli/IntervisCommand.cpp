// lookfar intervis: placeholder registered until its engine lands (see the issue tracker).
#include "Commands.hpp"
#include "lookfar/core/Errors.hpp"

namespace lookfar::cli {

Command addIntervisCommand(CLI::App& root) {
    auto state = std::make_shared<CommonOptions>();
    CLI::App* app = root.add_subcommand("intervis", "(not available yet)");
    addCommonOptions(app, *state);
    return {app, [] { throw InternalError("'intervis' is not available in this build yet"); }};
}

}  // namespace lookfar::cli
