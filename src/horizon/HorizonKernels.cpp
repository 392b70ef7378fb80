// The near-field kernels of the fast horizon engine (see HorizonKernels.hpp). The functions with
// a target attribute are compiled for AVX2 or AVX-512 whatever the build's flags, and
// chooseKernels() takes them only when __builtin_cpu_supports says the processor has them.
#include "HorizonKernels.hpp"

#include <cstring>

#include "lookfar/core/Units.hpp"

namespace lookfar::horizon_detail::fast {

namespace {

// GCC vector types: 8 floats (one AVX register); without AVX the compiler splits them in halves.
// Passing them by value between non-AVX functions is what -Wpsabi warns of; they never leave
// this file.
#pragma GCC diagnostic push
#pragma GCC diagnostic ignored "-Wpsabi"
typedef float V8 __attribute__((vector_size(32)));

typedef float V16 __attribute__((vector_size(64)));

template <typename V>
__attribute__((always_inline)) inline V loadV(const float* p) {
    V v;
    std::memcpy(&v, p, sizeof v);
    return v;
}
template <typename V>
__attribute__((always_inline)) inline void storeV(float* p, V v) {
    std::memcpy(p, &v, sizeof v);
}
template <typename V>
__attribute__((always_inline)) inline V splatV(float x) {
    return V{} + x;
}

/// Largest tangent over the near field for the cells [i, n) of the run starting at `z` (a run of
/// one DEM row whose near field lies inside the grid), two vectors of V (L lanes) at a time while
/// 2L cells are left: best_t (−∞ when no sample has data) and its distance. Returns where it
/// stopped.
template <typename V, int L>
__attribute__((always_inline)) inline int nearBlocks(const float* z, int i, int n,
                                                     const NearField& f, float* best_t,
                                                     float* best_d) {
    const int nx = f.n;
    const std::ptrdiff_t* o1 = f.off1.data();
    const std::ptrdiff_t* o2 = f.off2.data();
    const float* wt = f.w.data();
    const float* hd = f.hd.data();
    const float* inv = f.inv.data();
    const float* dist = f.dist.data();
    for (; i + 2 * L <= n; i += 2 * L) {
        const float* zi = z + i;
        const V g0 = loadV<V>(zi), g1 = loadV<V>(zi + L);
        V b0 = splatV<V>(-kInfF), b1 = b0, d0 = splatV<V>(0.0f), d1 = d0;
        for (int k = 0; k < nx; ++k) {
            const float* p = zi + o1[k];
            const float* q = zi + o2[k];
            const V a0 = loadV<V>(p), a1 = loadV<V>(p + L);
            const V c0 = loadV<V>(q), c1 = loadV<V>(q + L);
            const V w = splatV<V>(wt[k]), h = splatV<V>(hd[k]), iv = splatV<V>(inv[k]),
                    dk = splatV<V>(dist[k]);
            const V t0 = ((a0 - g0) + w * (c0 - a0) - h) * iv;
            const V t1 = ((a1 - g1) + w * (c1 - a1) - h) * iv;
            const auto m0 = t0 > b0;  // NaN (no data) never wins; ties keep the nearer sample
            const auto m1 = t1 > b1;
            b0 = m0 ? t0 : b0;
            b1 = m1 ? t1 : b1;
            d0 = m0 ? dk : d0;
            d1 = m1 ? dk : d1;
        }
        storeV(best_t + i, b0);
        storeV(best_t + i + L, b1);
        storeV(best_d + i, d0);
        storeV(best_d + i + L, d1);
    }
    return i;
}

/// The cells [i, n) one by one (the same arithmetic, lane by lane).
inline void nearTail(const float* z, int i, int n, const NearField& f, float* best_t,
                     float* best_d) {
    const int nx = f.n;
    for (; i < n; ++i) {
        const float* zi = z + i;
        const float g = zi[0];
        float b = -kInfF, d = 0;
        for (int k = 0; k < nx; ++k) {
            const float a = zi[f.off1[k]], c = zi[f.off2[k]];
            const float t = ((a - g) + f.w[k] * (c - a) - f.hd[k]) * f.inv[k];
            if (t > b)
                b = t, d = f.dist[k];
        }
        best_t[i] = b, best_d[i] = d;
    }
}

/// Largest tangent over the near field for the `n` cells starting at `z`: 16 cells a step with
/// 8-lane vectors.
__attribute__((always_inline)) inline void nearBody(const float* z, int n, const NearField& f,
                                                    float* best_t, float* best_d) {
    const int i = nearBlocks<V8, 8>(z, 0, n, f, best_t, best_d);
    nearTail(z, i, n, f, best_t, best_d);
}

/// The same, 32 cells a step with 16-lane vectors first (AVX-512: half the instructions).
__attribute__((always_inline)) inline void nearBodyWide(const float* z, int n, const NearField& f,
                                                        float* best_t, float* best_d) {
    int i = nearBlocks<V16, 16>(z, 0, n, f, best_t, best_d);
    i = nearBlocks<V8, 8>(z, i, n, f, best_t, best_d);
    nearTail(z, i, n, f, best_t, best_d);
}

/// atan in degrees, without branches (so that a row of them vectorises): reduction to
/// y = min(|t|, 1/|t|) ≤ 1, then to |u| ≤ tan(π/8) by u = (y − 1)/(y + 1), and a polynomial in
/// u² fitted to atan on that interval (Chebyshev least squares, degree 7; error below 3e-13 rad
/// against std::atan). NaN stays NaN.
template <typename T>  // double, or a vector of doubles (the selects become blends)
__attribute__((always_inline)) inline T atanDeg(T t) {
    constexpr double kTanPi8 = 0.41421356237309503;
    const T zero = T{}, one = zero + 1.0;
    const T x = t < zero ? -t : t;
    const auto big = x > one;
    const T y = big ? one / x : x;
    const auto mid = y > kTanPi8;
    const T u = mid ? (y - one) / (y + one) : y;
    const T base = mid ? zero + 0.25 * kPi : zero;
    const T s = u * u;
    T p = zero - 0.037697460562491736;
    p = p * s + 0.06976773623678606;
    p = p * s - 0.0899316888954491;
    p = p * s + 0.11103530043504077;
    p = p * s - 0.14285391020501872;
    p = p * s + 0.1999999318399042;
    p = p * s - 0.33333333278365695;
    p = p * s + 0.9999999999993244;
    T r = base + u * p;
    r = big ? (zero + 0.5 * kPi) - r : r;
    r *= kRadToDeg;
    return t < zero ? -r : r;
}

typedef double V4d __attribute__((vector_size(32)));

__attribute__((always_inline)) inline void anglesBody(const double* t, int n, float* angle) {
    int i = 0;
    for (; i + 4 <= n; i += 4) {
        V4d v;
        std::memcpy(&v, t + i, sizeof v);
        const V4d r = atanDeg(v);
        for (int k = 0; k < 4; ++k)
            angle[i + k] = static_cast<float>(r[k]);
    }
    for (; i < n; ++i)
        angle[i] = static_cast<float>(atanDeg(t[i]));
}

#if defined(__GNUC__) && (defined(__x86_64__) || defined(__i386__))
__attribute__((target("avx2,fma"))) void nearAvx2(const float* z, int n, const NearField& f,
                                                  float* best_t, float* best_d) {
    nearBody(z, n, f, best_t, best_d);
}
__attribute__((target("avx2,fma"))) void anglesAvx2(const double* t, int n, float* angle) {
    anglesBody(t, n, angle);
}
__attribute__((target("avx512f,avx512vl,avx512bw,avx512dq,avx2,fma"))) void nearAvx512(
    const float* z, int n, const NearField& f, float* best_t, float* best_d) {
    nearBodyWide(z, n, f, best_t, best_d);
}
#define LOOKFAR_HAVE_AVX2_KERNEL 1
#endif

}  // namespace

void nearGeneric(const float* z, int n, const NearField& f, float* best_t, float* best_d) {
    nearBody(z, n, f, best_t, best_d);
}

void anglesGeneric(const double* t, int n, float* angle) {
    anglesBody(t, n, angle);
}

Kernels chooseKernels() {
    Kernels k;
#ifdef LOOKFAR_HAVE_AVX2_KERNEL
    __builtin_cpu_init();
    if (__builtin_cpu_supports("avx2") && __builtin_cpu_supports("fma")) {
        k.near = nearAvx2;
        k.angles = anglesAvx2;
    }
    if (__builtin_cpu_supports("avx512f") && __builtin_cpu_supports("avx512vl") &&
        __builtin_cpu_supports("avx512bw") && __builtin_cpu_supports("avx512dq") &&
        __builtin_cpu_supports("avx2") && __builtin_cpu_supports("fma"))
        k.near = nearAvx512;
#endif
    return k;
}

}  // namespace lookfar::horizon_detail::fast
