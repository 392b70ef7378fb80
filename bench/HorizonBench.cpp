// Placeholder until the horizon engine's benchmark lands.
#include "Bench.hpp"

namespace lookfar::bench {
nlohmann::json benchHorizon(const BenchArgs&) {
    return {{"status", "not available yet"}};
}
}  // namespace lookfar::bench
