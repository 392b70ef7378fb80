// lookfar viewshed: the options and the run are lookfar/run/ViewshedRun.
#include "Commands.hpp"
#include "lookfar/run/ViewshedRun.hpp"

namespace lookfar::cli {

Command addViewshedCommand(CLI::App& root) {
    return addRunCommand(root, std::make_shared<run::ViewshedRun>());
}

}  // namespace lookfar::cli
