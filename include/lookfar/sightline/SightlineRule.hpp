#pragma once
// The sightline rule of docs/design.md: the reference definition of "visible".
//
// Notation
//   O, C        observer and target cells; (c0, r0), (c1, r1) their cell coordinates
//   t ∈ (0, 1)  position along the segment O→C in cell space
//   E, N, D     east and north offsets of C from O and the ground distance, metres
//   z_e         eye height: DEM(O) + observer height
//   z_t         target point: DEM(C) + target height
//   Δ           drop at C after refraction, (1 − k)/2 · (N²/M + E²/N_pv); at t it is t²Δ
//
// Terrain is sampled where the segment crosses each column line and row line through cell
// centres strictly between O and C, linearly interpolated between the two neighbouring centres;
// O and C themselves never block, and no-data samples never block. A sample at t with height
// z(t) blocks when its apparent height z(t) − t²Δ rises above the straight sightline
// z_e + t (z_t − Δ − z_e). Dividing by t, everything reduces to one number per sample, its
// "gain" g(t) = (z(t) − t²Δ − z_e)/t, and C is visible when z_t − Δ − z_e ≥ max g.
// The margin is (z_t − Δ − z_e) − max g: the metres by which the target point clears (≥ 0) or
// misses (< 0) the limiting sightline, measured at C.
#include <cstdint>

#include "lookfar/core/Grid.hpp"
#include "lookfar/core/GridGeometry.hpp"
#include "lookfar/earth/EarthModel.hpp"
#include "lookfar/sightline/Observer.hpp"
#include "lookfar/sightline/SightlineSamples.hpp"

namespace lookfar {

struct SightlineVerdict {
    bool visible = false;
    bool nodata = false;    ///< the target cell has no elevation
    double margin_m = 0;    ///< clearance of the target point; see header (finite)
    double angle_deg = 0;   ///< elevation angle from the eye to the target point
    double distance_m = 0;  ///< ground distance O→C
};

class SightlineRule {
  public:
    /// `dem` holds metres with NaN for no data. Throws InputError if the observer's cell is
    /// outside the grid or has no data.
    SightlineRule(const Grid<float>& dem, const GridGeometry& geometry, const EarthModel& earth,
                  const Observer& observer);

    /// Judges the target point `target_height_m` above cell (col, row).
    /// A target with no intervening terrain (O itself and its eight neighbours) is visible and
    /// reports margin = target_height_m: the target could be lowered to the ground and still be
    /// seen.
    SightlineVerdict judge(int col, int row, double target_height_m) const;

    /// The samples of the sightline to cell (col, row), with `drop_m` the drop at that cell
    /// (Curvature::drop) for their gains; their heights and positions need no drop.
    SightlineSamples samples(int col, int row, double drop_m) const;

    double eyeHeightM() const { return eye_m_; }
    const LocalFrame& frame() const { return frame_; }
    const Curvature& curvature() const { return curvature_; }

  private:
    const Grid<float>& dem_;
    const GridGeometry& geometry_;
    Observer observer_;
    LocalFrame frame_;
    Curvature curvature_;
    double eye_m_ = 0;
};

}  // namespace lookfar
