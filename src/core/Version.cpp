#include "lookfar/Version.hpp"

namespace lookfar {

const char* version() {
    return kVersion;
}

}  // namespace lookfar
