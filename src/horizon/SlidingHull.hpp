#pragma once
// The sliding upper hull of the fast horizon engine: the upper convex hull of a scan line's folded
// samples within a window that slides from the line's far end towards its near end, and the
// tangent to it from an eye nearer than every sample in the window.
//
// Samples are indexed k = 0, 1, … from the far end; their coordinate s = pos(k) decreases as k
// grows (s increases towards the horizon). Sample k enters the window with push(k), in order, and
// the farthest one leaves with popFarthest(). The window is a queue of two hulls: the "back" hull
// that new samples enter (popping the vertices they hide: amortised O(1)), and the "front" hull,
// rebuilt from the back hull's samples, nearest first, when a sample has to leave and the front
// hull is empty; the farthest sample then leaves the front hull by undoing its insertion (the
// vertices it popped come back from the "grave"). Each sample enters a hull at most twice.
//
// The tangent from an eye (s_E, Z_E) is the vertex of largest slope (Z − Z_E)/(s − s_E). The
// slopes from an eye along an upper hull rise, then fall, so a walk uphill from any vertex ends at
// the tangent point; each hull's walk starts where the previous query's ended (along a line the
// tangent point moves a step or two from one eye to the next). Ties go to the nearer sample. All
// tests are cross-multiplications, without division.
#include <algorithm>
#include <cmath>

namespace lookfar::horizon_detail::fast {

/// A hull vertex: a sample's coordinate along the line, its folded height and its index.
struct Vertex {
    double s, z;
    int k;
};

/// `Pos` maps a sample index to its coordinate s (decreasing with the index). Z[k] is the folded
/// height of sample k (NaN = no data: the sample takes its place in the window but is never a
/// vertex). The four buffers hold at least as many entries as samples pushed, plus one; the hull
/// owns none of its memory (a thread's scratch buffers are reused line after line).
template <typename Pos>
class SlidingHull {
  public:
    SlidingHull(const double* Z, Pos pos, Vertex* back, Vertex* front, Vertex* grave, int* record)
        : Z_(Z), pos_(pos), back_(back), front_(front), grave_(grave), record_(record) {}

    /// True when no sample with data is in the window.
    __attribute__((always_inline)) bool empty() const { return nf_ == 0 && nb_ == 0; }
    /// The farthest sample still in the window (= newest() + 1 when the window is empty).
    int farthest() const { return lo_; }
    /// The last sample pushed (−1: none yet).
    int newest() const { return pushed_; }

    /// Sample `hi` (newest() + 1) enters the window.
    __attribute__((always_inline)) void push(int hi) {
        pushed_ = hi;
        const double zx = Z_[hi];
        if (!std::isnan(zx)) {
            const double sx = pos_(hi);
            while (nb_ >= 2) {
                const Vertex& a = back_[nb_ - 1];
                const Vertex& b = back_[nb_ - 2];
                if ((a.z - zx) * (b.s - sx) <= (b.z - zx) * (a.s - sx))
                    --nb_;
                else
                    break;
            }
            back_[nb_++] = Vertex{sx, zx, hi};
        }
    }

    /// The farthest sample, farthest(), leaves the window (which must not be empty of samples:
    /// farthest() ≤ newest()).
    void popFarthest() {
        if (front_lo_ > front_hi_) {
            // The front hull is rebuilt from the back hull's samples, nearest first.
            for (int x = pushed_; x >= back_start_; --x)
                frontInsert(x);
            front_lo_ = back_start_;
            front_hi_ = pushed_;
            nb_ = 0;
            back_start_ = pushed_ + 1;
        }
        const int r = record_[--nr_];
        if (r >= 0) {
            --nf_;
            for (int i = 0; i < r; ++i)
                front_[nf_++] = grave_[--ng_];
        }
        ++front_lo_;
        ++lo_;
    }

    /// The tangent point from the eye (sE, zE) over both hulls (the window must not be empty();
    /// sE below every sample's s). pf_ and pb_ (array indices into the front and back hulls) are
    /// where the walks start, the previous eye's tangent points; they keep where the walks ended.
    __attribute__((always_inline)) const Vertex& tangent(double sE, double zE) {
        auto improves = [&](const Vertex& v0, const Vertex& v1) {  // v1 seen higher than v0
            return (v1.z - zE) * (v0.s - sE) > (v0.z - zE) * (v1.s - sE);
        };
        const Vertex* front = front_;
        const Vertex* back = back_;
        const int nf = nf_, nb = nb_;
        const Vertex* best = nullptr;
        if (nf > 0) {  // front[0] is the nearest vertex
            int i = std::min(pf_, nf - 1);
            if (i + 1 < nf && improves(front[i], front[i + 1])) {
                do
                    ++i;
                while (i + 1 < nf && improves(front[i], front[i + 1]));
            } else {
                while (i > 0 && improves(front[i], front[i - 1]))
                    --i;
            }
            pf_ = i;
            best = &front[i];
        }
        if (nb > 0) {  // back[nb − 1] is the nearest vertex
            int i = std::min(pb_, nb - 1);
            if (i > 0 && improves(back[i], back[i - 1])) {
                do
                    --i;
                while (i > 0 && improves(back[i], back[i - 1]));
            } else {
                while (i + 1 < nb && improves(back[i], back[i + 1]))
                    ++i;
            }
            pb_ = i;
            const Vertex& v = back[i];
            // Ties go to the nearer sample (the back hull's are nearer).
            if (!best || !improves(v, *best))
                best = &v;
        }
        return *best;
    }

  private:
    // Sample x enters the front hull; record_ keeps how many vertices it popped (−1: no data).
    void frontInsert(int x) {
        if (std::isnan(Z_[x])) {
            record_[nr_++] = -1;
            return;
        }
        const Vertex v{pos_(x), Z_[x], x};
        int popped = 0;
        while (nf_ >= 2) {
            const Vertex& a = front_[nf_ - 1];
            const Vertex& b = front_[nf_ - 2];
            if ((a.z - b.z) * (v.s - b.s) <= (v.z - b.z) * (a.s - b.s)) {
                grave_[ng_++] = a;
                --nf_;
                ++popped;
            } else {
                break;
            }
        }
        front_[nf_++] = v;
        record_[nr_++] = popped;
    }

    const double* Z_;
    Pos pos_;
    Vertex* back_;   // back hull, farthest vertex first: back_[nb_ − 1] is the nearest
    Vertex* front_;  // front hull, nearest vertex first: front_[0] is the nearest
    Vertex* grave_;  // vertices popped from the front hull, to come back when it is undone
    int* record_;    // per front insertion: vertices it popped (−1: no data), newest last
    int nb_ = 0, nf_ = 0, ng_ = 0, nr_ = 0;
    int back_start_ = 0;                // first sample not yet in the front hull
    int front_lo_ = 0, front_hi_ = -1;  // the samples of the front hull still in the window
    int pushed_ = -1;
    int lo_ = 0;
    int pf_ = 0, pb_ = 0;  // where the tangent walks start
};

}  // namespace lookfar::horizon_detail::fast
