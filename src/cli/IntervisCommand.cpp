// lookfar intervis: the options and the run are lookfar/run/IntervisRun.
#include "Commands.hpp"
#include "lookfar/run/IntervisRun.hpp"

namespace lookfar::cli {

Command addIntervisCommand(CLI::App& root) {
    return addRunCommand(root, std::make_shared<run::IntervisRun>());
}

}  // namespace lookfar::cli
