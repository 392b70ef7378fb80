// Lazy greedy maximum coverage (see GreedyCoverage.hpp for the notation and the guarantee).
//   key(i)   the last evaluated Δ_i, an upper bound of the current Δ_i (submodularity)
//   round    number of sets chosen so far; a key computed in the current round is fresh
#include "lookfar/siting/GreedyCoverage.hpp"

#include <queue>

#include "lookfar/core/Errors.hpp"

namespace lookfar {

namespace {

// Bits of `set` not in `covered` in word w of row r.
inline std::uint64_t fresh(const CoverageSet& set, const CoverageSet& covered, int r, int w) {
    const std::uint64_t s = set.word(r, w);
    if (!s || covered.empty() || r < covered.rowBegin() || r >= covered.rowEnd() ||
        w < covered.wordBegin() || w >= covered.wordEnd())
        return s;
    return s & ~covered.word(r, w);
}

}  // namespace

std::int64_t CellValues::newCells(const CoverageSet& set, const CoverageSet& covered) {
    std::int64_t n = 0;
    for (int r = set.rowBegin(); r < set.rowEnd(); ++r)
        for (int w = set.wordBegin(); w < set.wordEnd(); ++w)
            n += __builtin_popcountll(fresh(set, covered, r, w));
    return n;
}

double CellValues::newRowValue(const CoverageSet& set, const CoverageSet& covered) const {
    double sum = 0;
    for (int r = set.rowBegin(); r < set.rowEnd(); ++r) {
        std::int64_t n = 0;
        for (int w = set.wordBegin(); w < set.wordEnd(); ++w)
            n += __builtin_popcountll(fresh(set, covered, r, w));
        if (n)
            sum += static_cast<double>(n) * row_value.at(r);
    }
    return sum;
}

double CellValues::newValue(const CoverageSet& set, const CoverageSet& covered) const {
    if (!weight)
        return newRowValue(set, covered);
    double sum = 0;
    for (int r = set.rowBegin(); r < set.rowEnd(); ++r) {
        const float* wrow = weight->row(r);
        for (int w = set.wordBegin(); w < set.wordEnd(); ++w) {
            std::uint64_t bits = fresh(set, covered, r, w);
            while (bits) {
                const int b = __builtin_ctzll(bits);
                sum += wrow[64 * w + b];
                bits &= bits - 1;
            }
        }
    }
    return sum;
}

double unionValue(const std::vector<CoverageSet>& sets, const std::vector<int>& chosen,
                  const CellValues& values) {
    if (sets.empty())
        return 0;
    CoverageSet all = CoverageSet::wholeGrid(sets.front().gridWidth(), sets.front().gridHeight());
    for (int i : chosen)
        all.unite(sets.at(i));
    return values.newValue(all, CoverageSet());
}

CoverageChoice lazyGreedyCoverage(const std::vector<CoverageSet>& sets, const CellValues& values,
                                  const CoverageGoal& goal, CoverageSet& covered,
                                  Progress& progress) {
    if (goal.max_sets < 1)
        throw InternalError("lazy greedy coverage: max_sets must be at least 1");
    struct Entry {
        double key;
        int set;
        int round;  // the round in which key was computed
        bool operator<(const Entry& o) const {
            // std::priority_queue pops the largest: larger key first, then the lower index.
            if (key != o.key)
                return key < o.key;
            return set > o.set;
        }
    };
    CoverageChoice out;
    std::priority_queue<Entry> queue;
    for (int i = 0; i < static_cast<int>(sets.size()); ++i) {
        queue.push({values.newValue(sets[i], covered), i, 0});
        ++out.evaluations;
    }
    progress.begin("greedy choice", goal.max_sets);
    double total = 0;
    int round = 0;
    while (true) {
        if (static_cast<int>(out.picks.size()) >= goal.max_sets) {
            out.stop = CoverageStop::ReachedCount;
            break;
        }
        // Relative tolerance: the cumulative sum and the target are sums in different orders.
        if (total >= goal.target_value * (1.0 - 1e-12)) {
            out.stop = CoverageStop::ReachedTarget;
            break;
        }
        throwIfCancelled(progress);
        if (queue.empty()) {
            out.stop = CoverageStop::NothingToAdd;
            break;
        }
        Entry top = queue.top();
        queue.pop();
        if (top.round != round) {
            top.key = values.newValue(sets[top.set], covered);
            top.round = round;
            ++out.evaluations;
            queue.push(top);
            continue;
        }
        if (!(top.key > 0)) {
            out.stop = CoverageStop::NothingToAdd;
            break;
        }
        covered.unite(sets[top.set]);
        total += top.key;
        out.picks.push_back({top.set, top.key, total});
        ++round;
        progress.advance(round);
    }
    progress.end();
    return out;
}

}  // namespace lookfar
