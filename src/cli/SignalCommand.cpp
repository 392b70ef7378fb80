// lookfar signal: the options and the run are lookfar/run/SignalRun.
#include "Commands.hpp"
#include "lookfar/run/SignalRun.hpp"

namespace lookfar::cli {

Command addSignalCommand(CLI::App& root) {
    return addRunCommand(root, std::make_shared<run::SignalRun>());
}

}  // namespace lookfar::cli
