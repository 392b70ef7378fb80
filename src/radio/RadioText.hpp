#pragma once
// Numbers in the radio layer's messages.
#include <cstdio>
#include <string>

namespace lookfar {

/// `value` with up to 10 significant digits ("nan", "inf" as printf writes them).
inline std::string radioNumberText(double value) {
    char buffer[32];
    std::snprintf(buffer, sizeof buffer, "%.10g", value);
    return buffer;
}

}  // namespace lookfar
