#pragma once
// The near-field kernels of the fast horizon engine: the largest tangent over a cell's near field
// for a run of cells of one DEM row, and atan in degrees for a run of tangents. Vector code for
// AVX2 or AVX-512 where the processor has them (chosen at run time), plain code elsewhere, with
// the same results.
#include "FastHorizonCommon.hpp"

namespace lookfar::horizon_detail::fast {

/// Largest tangent over the near field `f` for the `n` cells of a DEM row starting at `z` (whose
/// whole near field lies inside the grid): best_t (−∞ when no sample has data) and its distance.
void nearGeneric(const float* z, int n, const NearField& f, float* best_t, float* best_d);
/// angle[i] = atan(t[i]) in degrees (NaN stays NaN).
void anglesGeneric(const double* t, int n, float* angle);

/// The vector kernels, chosen once for the processor.
struct Kernels {
    void (*near)(const float*, int, const NearField&, float*, float*) = nearGeneric;
    void (*angles)(const double*, int, float*) = anglesGeneric;
};

Kernels chooseKernels();

}  // namespace lookfar::horizon_detail::fast
