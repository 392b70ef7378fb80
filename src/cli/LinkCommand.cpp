// lookfar link: placeholder registered until its engine lands (see the issue tracker).
#include "Commands.hpp"
#include "lookfar/core/Errors.hpp"

namespace lookfar::cli {

Command addLinkCommand(CLI::App& root) {
    auto state = std::make_shared<CommonOptions>();
    CLI::App* app = root.add_subcommand("link", "(not available yet)");
    addCommonOptions(app, *state);
    return {app, [] { throw InternalError("'link' is not available in this build yet"); }};
}

}  // namespace lookfar::cli
