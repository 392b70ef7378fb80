#include "lookfar/core/FractalTerrain.hpp"

#include <algorithm>
#include <cmath>
#include <complex>
#include <vector>

#include "lookfar/core/Units.hpp"

namespace lookfar {

namespace {

// SplitMix64: a tiny portable generator, so terrains are identical on every platform.
struct SplitMix {
    std::uint64_t s;
    std::uint64_t next() {
        std::uint64_t z = (s += 0x9E3779B97F4A7C15ULL);
        z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
        z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
        return z ^ (z >> 31);
    }
    double uniform() { return (next() >> 11) * (1.0 / 9007199254740992.0); }
};

using cf = std::complex<float>;

// In-place iterative radix-2 FFT of n (a power of two) values spaced `stride` apart.
void fft(cf* a, int n, std::ptrdiff_t stride, const std::vector<cf>& twiddle) {
    for (int i = 1, j = 0; i < n; ++i) {
        int bit = n >> 1;
        for (; j & bit; bit >>= 1)
            j ^= bit;
        j ^= bit;
        if (i < j)
            std::swap(a[i * stride], a[j * stride]);
    }
    for (int len = 2; len <= n; len <<= 1) {
        int step = n / len;
        for (int i = 0; i < n; i += len) {
            for (int k = 0; k < len / 2; ++k) {
                cf w = twiddle[k * step];
                cf u = a[(i + k) * stride];
                cf v = a[(i + k + len / 2) * stride] * w;
                a[(i + k) * stride] = u + v;
                a[(i + k + len / 2) * stride] = u - v;
            }
        }
    }
}

}  // namespace

Grid<float> fractalTerrain(const FractalSpec& spec) {
    int n = 1;
    while (n < std::max(spec.width, spec.height))
        n <<= 1;
    std::vector<cf> field(static_cast<std::size_t>(n) * n);
    SplitMix rng{spec.seed * 0x2545F4914F6CDD1DULL + 12345};
    const double half_beta = spec.spectral_exponent / 2.0;
    for (int v = 0; v < n; ++v) {
        int fv = v <= n / 2 ? v : v - n;
        for (int u = 0; u < n; ++u) {
            int fu = u <= n / 2 ? u : u - n;
            double f = std::sqrt(double(fu) * fu + double(fv) * fv);
            double amp = f > 0 ? std::pow(f, -half_beta) : 0.0;
            double phase = 2.0 * kPi * rng.uniform();
            // Gaussian amplitude (Box–Muller) makes the surface statistically isotropic.
            double g = std::sqrt(-2.0 * std::log(1.0 - rng.uniform()));
            field[static_cast<std::size_t>(v) * n + u] =
                cf(static_cast<float>(amp * g * std::cos(phase)),
                   static_cast<float>(amp * g * std::sin(phase)));
        }
    }
    std::vector<cf> twiddle(n / 2);
    for (int k = 0; k < n / 2; ++k) {
        twiddle[k] = cf(static_cast<float>(std::cos(-2.0 * kPi * k / n)),
                        static_cast<float>(std::sin(-2.0 * kPi * k / n)));
    }
#pragma omp parallel for schedule(static)
    for (int r = 0; r < n; ++r)
        fft(field.data() + static_cast<std::size_t>(r) * n, n, 1, twiddle);
#pragma omp parallel for schedule(static)
    for (int c = 0; c < n; ++c)
        fft(field.data() + c, n, n, twiddle);

    Grid<float> out(spec.width, spec.height);
    double lo = 1e300, hi = -1e300;
    for (int r = 0; r < spec.height; ++r) {
        for (int c = 0; c < spec.width; ++c) {
            double z = field[static_cast<std::size_t>(r) * n + c].real();
            lo = std::min(lo, z);
            hi = std::max(hi, z);
        }
    }
    double scale = hi > lo ? (spec.high_m - spec.low_m) / (hi - lo) : 0.0;
    for (int r = 0; r < spec.height; ++r) {
        for (int c = 0; c < spec.width; ++c) {
            out(c, r) = static_cast<float>(
                spec.low_m + (field[static_cast<std::size_t>(r) * n + c].real() - lo) * scale);
        }
    }
    return out;
}

}  // namespace lookfar
