#pragma once
// Seeded synthetic terrain for tests and benchmarks: spectral synthesis of a fractal surface
// whose power spectrum falls as |f|^(−β) (β = 2.2 is rough at every scale), rescaled to
// [low_m, high_m]. Deterministic for a given seed and size on every machine.
#include <cstdint>

#include "lookfar/core/Grid.hpp"

namespace lookfar {

struct FractalSpec {
    int width = 256;  ///< cells; any size (synthesised on the next power of two)
    int height = 256;
    double spectral_exponent = 2.2;  ///< β of the power spectrum |f|^(−β)
    double low_m = 0.0;              ///< lowest elevation after rescaling
    double high_m = 800.0;           ///< highest elevation after rescaling
    std::uint64_t seed = 1;
};

Grid<float> fractalTerrain(const FractalSpec& spec);

}  // namespace lookfar
