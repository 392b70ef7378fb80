// lookfar info DEM: the options and the run are lookfar/run/InfoRun.
#include "Commands.hpp"
#include "lookfar/run/InfoRun.hpp"

namespace lookfar::cli {

Command addInfoCommand(CLI::App& root) {
    return addRunCommand(root, std::make_shared<run::InfoRun>());
}

}  // namespace lookfar::cli
