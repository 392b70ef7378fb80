// lookfar horizon: the options and the run are lookfar/run/HorizonRun.
#include "Commands.hpp"
#include "lookfar/run/HorizonRun.hpp"

namespace lookfar::cli {

Command addHorizonCommand(CLI::App& root) {
    return addRunCommand(root, std::make_shared<run::HorizonRun>());
}

}  // namespace lookfar::cli
