// Placeholder until the intervis engine's benchmark lands.
#include "Bench.hpp"

namespace lookfar::bench {
nlohmann::json benchIntervis(const BenchArgs&) {
    return {{"status", "not available yet"}};
}
}  // namespace lookfar::bench
