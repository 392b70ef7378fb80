// libFuzzer entry point of the point target (built with LOOKFAR_FUZZ; run by tools/fuzz).
#include "FuzzTargets.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    return lookfar::fuzz::point(data, size);
}
