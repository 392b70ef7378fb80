// lookfar select: the options and the run are lookfar/run/SelectRun.
#include "Commands.hpp"
#include "lookfar/run/SelectRun.hpp"

namespace lookfar::cli {

Command addSelectCommand(CLI::App& root) {
    return addRunCommand(root, std::make_shared<run::SelectRun>());
}

}  // namespace lookfar::cli
