#pragma once
// Maximum coverage by lazy greedy choice: from candidate sets of cells (the viewsheds of
// candidate sites), choose sets one at a time, each time the one adding the most value not yet
// covered.
//
// Notation
//   S_i         the cells of candidate i (a CoverageSet)
//   v(c)        the value of cell c: its ground area (m²) or a weight ≥ 0
//   f(A)        value of the union of the sets in A: Σ v(c) over c ∈ ∪_{i∈A} S_i
//   Δ_i(A)      marginal value f(A ∪ {i}) − f(A)
//
// f is monotone and submodular (Δ_i(A) never grows as A grows), so
// - the plain greedy choice reaches f(greedy_K) ≥ (1 − (1 − 1/K)^K) f(OPT_K) ≥ (1 − 1/e) f(OPT_K)
//   ≈ 0.632 f(OPT_K) for any K (Nemhauser, Wolsey & Fisher, Math. Programming 14 (1978);
//   from memory), and no polynomial algorithm does better in general unless P = NP
//   (Feige, J. ACM 45 (1998); from memory);
// - an old Δ_i is an upper bound of the current one, so the lazy form (Minoux, 1978; from
//   memory) keeps candidates in a priority queue keyed by their last Δ_i, re-evaluates only the
//   top and takes it once its fresh value is still on top. It makes the same choices as the
//   plain greedy (ties go to the lower candidate index) with far fewer evaluations.
#include <cstdint>
#include <limits>
#include <vector>

#include "lookfar/core/Grid.hpp"
#include "lookfar/core/Progress.hpp"
#include "lookfar/siting/CoverageSet.hpp"

namespace lookfar {

/// v(c): one value per row (cell areas, which vary only by row), or per-cell weights.
struct CellValues {
    std::vector<double> row_value;        ///< v of every cell of row r (used without weights)
    const Grid<float>* weight = nullptr;  ///< per-cell weights ≥ 0 (no NaN); overrides row_value

    /// Σ v(c) over the cells of `set` that are not in `covered` (covered may be empty).
    double newValue(const CoverageSet& set, const CoverageSet& covered) const;
    /// Σ row_value over the cells of `set` not in `covered`, ignoring the weights (areas).
    double newRowValue(const CoverageSet& set, const CoverageSet& covered) const;
    /// Number of cells of `set` not in `covered`.
    static std::int64_t newCells(const CoverageSet& set, const CoverageSet& covered);
};

struct CoverageGoal {
    int max_sets = 1;  ///< choose at most this many sets, ≥ 1
    /// Stop as soon as the chosen sets cover at least this value (infinity = no target).
    double target_value = std::numeric_limits<double>::infinity();
};

enum class CoverageStop {
    ReachedCount,   ///< max_sets were chosen
    ReachedTarget,  ///< target_value was reached
    NothingToAdd,   ///< no remaining set adds any value
};

struct CoveragePick {
    int set = 0;                  ///< index into the candidate sets
    double marginal_value = 0;    ///< Δ at the time of the choice
    double cumulative_value = 0;  ///< f of the sets chosen so far, this one included
};

struct CoverageChoice {
    std::vector<CoveragePick> picks;  ///< in the order chosen
    CoverageStop stop = CoverageStop::ReachedCount;
    std::int64_t evaluations = 0;  ///< Δ evaluations made (the lazy form's saving shows here)
};

/// Lazy greedy maximum coverage. `covered` must be an empty whole-grid set on entry; on return
/// it holds the union of the chosen sets. Deterministic (ties go to the lower index).
CoverageChoice lazyGreedyCoverage(const std::vector<CoverageSet>& sets, const CellValues& values,
                                  const CoverageGoal& goal, CoverageSet& covered,
                                  Progress& progress = silentProgress());

/// f(A) for the sets with the given indices (for checks: brute force, plain greedy).
double unionValue(const std::vector<CoverageSet>& sets, const std::vector<int>& chosen,
                  const CellValues& values);

}  // namespace lookfar
