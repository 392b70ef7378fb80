// Placeholder until the viewshed engine's benchmark lands.
#include "Bench.hpp"

namespace lookfar::bench {
nlohmann::json benchViewshed(const BenchArgs&) {
    return {{"status", "not available yet"}};
}
}  // namespace lookfar::bench
