// Output tiles of the fast horizon engine (see HorizonTiles.hpp).
#include "HorizonTiles.hpp"

namespace lookfar::horizon_detail::fast {

void TileWorker::near(float* buf, int c0, int r0, int tw, int th, TileScratch& ts) const {
    for (int rr = 0; rr < th; ++rr)
        nearRow(buf + rr * kTile, buf + kTileCells + rr * kTile, c0, r0 + rr, tw, ts);
}

void TileWorker::finish(float* buf, int c0, int r0, int tw, int th, TileScratch& ts) const {
    for (int rr = 0; rr < th; ++rr)
        finishRow(buf + rr * kTile, buf + kTileCells + rr * kTile, c0, r0 + rr, tw, ts);
}

// The near field of row r on a geographic grid: the cell aspect and the metric of its row.
const NearField& TileWorker::geographicNear(int r, TileScratch& ts) const {
    const GridMetric& metric = in_.whole_metric;  // rows of the whole grid
    const Curvature& curv = in_.curvature;
    const bool mc = d_.major_cols;
    const int steps = std::min(k_exact_, d_.A);
    const int r_all = r + in_.geometry.rowOffset();
    buildCrossings(
        d_, d_.m_row[r], steps, w_,
        [&](double pa, double pp, double, double& dist, double& drop) {
            double east, north;
            metric.offsets(0, r_all, mc ? pa : pp, r_all + (mc ? pp : pa), east, north);
            dist = groundDistance(east, north);
            drop = curv.drop(east, north);
        },
        ts.crossings, ts.major_pos);
    int n = ts.major_pos[steps + 1];
    while (n > 0 && ts.crossings[n - 1].dist > reach_)
        --n;
    ts.near.assign(ts.crossings.data(), n, mc, eye_h_);
    return ts.near;
}

// The near field of one cell whose samples may leave the grid: in order, up to the edge.
void TileWorker::nearChecked(int c, int r, const NearField& f, float& best_t, float& best_d) const {
    const float* z = dem_ + static_cast<std::size_t>(r) * w_ + c;
    const float g = z[0];
    float b = -kInfF, d = 0;
    for (int k = 0; k < f.n; ++k) {
        const int c1 = c + f.dc1[k], r1 = r + f.dr1[k], c2 = c + f.dc2[k], r2 = r + f.dr2[k];
        if (c1 < 0 || c1 >= w_ || r1 < 0 || r1 >= h_ || c2 < 0 || c2 >= w_ || r2 < 0 || r2 >= h_)
            break;  // the ray has left the grid
        const float a = z[f.off1[k]], cc = z[f.off2[k]];
        const float t = ((a - g) + f.w[k] * (cc - a) - f.hd[k]) * f.inv[k];
        if (t > b)
            b = t, d = f.dist[k];
    }
    best_t = b, best_d = d;
}

void TileWorker::nearRow(float* best_t, float* best_d, int c0, int r, int tw,
                         TileScratch& ts) const {
    const NearField& f = d_.geographic ? geographicNear(r, ts) : d_.near;
    const float* zrow = dem_ + static_cast<std::size_t>(r) * w_;
    // The cells whose whole near field lies inside the grid go through the vector kernel.
    int v_lo = c0, v_hi = c0;
    if (r + f.dr_min >= 0 && r + f.dr_max <= h_ - 1) {
        v_lo = std::max(c0, -f.dc_min);
        v_hi = std::min(c0 + tw, w_ - f.dc_max);
        if (v_hi < v_lo)
            v_lo = v_hi = c0;
    }
    if (v_hi > v_lo)
        kernels_.near(zrow + v_lo, v_hi - v_lo, f, best_t + (v_lo - c0), best_d + (v_lo - c0));
    for (int c = c0; c < c0 + tw; ++c) {
        if (c == v_lo && v_hi > v_lo)
            c = v_hi;
        if (c >= c0 + tw)
            break;
        nearChecked(c, r, f, best_t[c - c0], best_d[c - c0]);
    }
    for (int i = 0; i < tw; ++i) {
        if (std::isnan(zrow[c0 + i]))
            best_t[i] = kNaNf;
    }
}

void TileWorker::finishRow(float* angle, float* distance, int c0, int r, int tw,
                           TileScratch& ts) const {
    for (int i = 0; i < tw; ++i) {
        const double t = angle[i];  // the best tangent (−∞: none; NaN: no data)
        const bool found = t > -kInf;
        distance[i] = found ? distance[i] : kNaNf;
        ts.t[i] = found ? t : kNaN;
    }
    kernels_.angles(ts.t, tw, angle);
    acc_.addRun(static_cast<std::size_t>(r) * w_ + c0, tw, angle, ts.t);
}

}  // namespace lookfar::horizon_detail::fast
