// lookfar link: the options and the run are lookfar/run/LinkRun.
#include "Commands.hpp"
#include "lookfar/run/LinkRun.hpp"

namespace lookfar::cli {

Command addLinkCommand(CLI::App& root) {
    return addRunCommand(root, std::make_shared<run::LinkRun>());
}

}  // namespace lookfar::cli
