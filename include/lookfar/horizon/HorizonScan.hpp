#pragma once
// HorizonScan: the horizon of every cell of a DEM in N directions, over a curved, refracting
// Earth (docs/design.md "horizon").
//
// Notation
//   O         the eye's cell; z_e = DEM(O) + observer height, metres
//   α_i       azimuth of direction i: i·360/N degrees clockwise from grid north, on the ground
//   d         ground distance from O, metres
//   c_α       curvature along α after refraction, (1 − k)/2 · (cos²α/M + sin²α/N), 1/m, so that
//             a point at distance d appears lowered by c_α d² (EarthModel, parabolic form)
//   γ_i       horizon angle of direction i: the largest atan((z − c_α d² − z_e)/d) over the terrain
//             samples in that direction within reach, degrees above the eye's local horizontal
//   SVF       sky-view factor 1 − (1/n) Σ sin(max(γ_i, 0)) over the n directions with data
//   dip       largest depression of the horizon, max over directions of −γ_i, degrees
//
// Two engines (see ReferenceHorizon.cpp and FastHorizon.cpp for their method):
//   reference  brute-force marching: samples the terrain where the ray from O crosses each row and
//              column line through cell centres (the sightline rule's samples), O(W + H) per
//              cell and direction;
//   fast       an upper convex hull swept along parallel scan lines, amortised O(1) per cell and
//              direction; agreement with the reference is measured in the tests (mean absolute
//              error ≤ 0.05°, 99 % of values within 0.25° on rough terrain and on real terrain).
// Results are identical for any number of threads.
#include <cstdint>
#include <limits>
#include <memory>
#include <vector>

#include "lookfar/core/Grid.hpp"
#include "lookfar/core/GridGeometry.hpp"
#include "lookfar/core/Progress.hpp"
#include "lookfar/earth/EarthModel.hpp"

namespace lookfar {

namespace horizon_detail {
class GridMetric;
}

enum class HorizonMethod { Reference, Fast };

/// Largest number of directions a scan accepts.
inline constexpr int kMaxHorizonDirections = 3600;

struct HorizonOptions {
    int directions = 32;             ///< N, azimuths i·360/N, 1 ≤ N ≤ 3600
    double observer_height_m = 1.7;  ///< eye above the ground of each cell, metres, ≥ 0
    double reach_m = std::numeric_limits<double>::infinity();  ///< farthest distance, m, > 0
    /// Latitude at which the Earth's radii of curvature are taken for the whole grid, degrees,
    /// [−90, 90]. One latitude for the whole DEM changes the drop by under 0.5 % across a grid of
    /// a few degrees of latitude (M and N vary slowly); the CLI passes the DEM centre's.
    double latitude_deg = 45.0;
    HorizonMethod method = HorizonMethod::Fast;
    bool want_svf = false;  ///< fill HorizonSummary::svf
    bool want_dip = false;  ///< fill HorizonSummary::dip
    /// Fast engine only: the first `exact_steps` grid steps of every ray are sampled exactly like
    /// the reference (the row and column crossings of the ray itself), 0 ≤ exact_steps ≤ 64.
    int exact_steps = 16;
    /// Fast engine only: around each horizon candidate found on the scan lines, the ray's own
    /// crossings within ± `refine_steps` grid steps are sampled exactly, 0 ≤ refine_steps ≤ 8.
    /// The defaults are the measured balance of speed and agreement (docs/horizon.md).
    int refine_steps = 1;
};

/// Azimuth of direction `index` of `directions`, degrees clockwise from grid north, [0, 360).
double horizonAzimuthDeg(int index, int directions);

/// Throws UsageError naming the option when an option is out of range (NaN-safe).
void validateHorizonOptions(const HorizonOptions& options);

/// Receives the horizon direction by direction, as finished rectangles of cells. Calls come from
/// one thread, in an order that depends only on the grid and the options.
class HorizonSink {
  public:
    virtual ~HorizonSink() = default;
    /// Direction `index` (0-based) at `azimuth_deg` starts.
    virtual void beginDirection(int index, double azimuth_deg) { (void)index, (void)azimuth_deg; }
    /// A finished rectangle of direction `index`: `width` × `height` cells whose top-left cell
    /// is (col0, row0); value (c, r) of the rectangle is at [r · stride + c].
    /// angle_deg: horizon angle, degrees above the local horizontal, (−90, 90), NaN = no data.
    /// distance_m: ground distance to the horizon-defining terrain sample, metres, NaN = no data.
    virtual void rectangle(int index, int col0, int row0, int width, int height, int stride,
                           const float* angle_deg, const float* distance_m) = 0;
    /// Every cell of direction `index` has been delivered.
    virtual void endDirection(int index) { (void)index; }
    /// False when the sink ignores rectangle() (only the summary grids are wanted): the engines
    /// then skip assembling the per-direction values.
    virtual bool wantsRectangles() const { return true; }
};

struct HorizonSummary {
    Grid<float> svf;  ///< sky-view factor, [0, 1], NaN = no data; empty unless want_svf
    Grid<float> dip;  ///< degrees, NaN = no data; empty unless want_dip
};

/// Every band in memory (for tests and small grids): angle[i] and distance[i] of direction i.
struct HorizonGrids {
    std::vector<Grid<float>> angle_deg;   ///< degrees, NaN = no data
    std::vector<Grid<float>> distance_m;  ///< metres, NaN = no data
    HorizonSummary summary;
};

/// The exact horizon of one cell in one direction (the reference engine's answer).
struct HorizonSample {
    bool found = false;  ///< false: no terrain sample with data inside the DEM within reach
    double angle_deg = std::numeric_limits<double>::quiet_NaN();
    double distance_m = std::numeric_limits<double>::quiet_NaN();
    double col = std::numeric_limits<double>::quiet_NaN();  ///< cell coordinate of the sample
    double row = std::numeric_limits<double>::quiet_NaN();
    double elevation_m = std::numeric_limits<double>::quiet_NaN();  ///< terrain at the sample
};

class HorizonScan {
  public:
    /// `dem` holds metres with NaN for no data; it must outlive the scan. Throws UsageError for
    /// options out of range and InputError when the grid and geometry disagree in size.
    HorizonScan(const Grid<float>& dem, const GridGeometry& geometry, const EarthModel& earth,
                const HorizonOptions& options);

    const HorizonOptions& options() const { return options_; }

    /// Streams every direction to `sink` (memory does not grow with N) and returns the summary
    /// grids asked for. Throws Interrupted when `progress` reports cancellation.
    HorizonSummary run(HorizonSink& sink, Progress& progress = silentProgress()) const;
    /// Runs with every band kept in memory.
    HorizonGrids runInMemory(Progress& progress = silentProgress()) const;
    /// The reference engine's horizon of cell (col, row) at `azimuth_deg`; a cell on no data or
    /// outside the grid gives found = false.
    HorizonSample referenceAt(int col, int row, double azimuth_deg) const;

  private:
    const Grid<float>& dem_;
    GridGeometry geometry_;
    EarthModel earth_;
    HorizonOptions options_;
    std::shared_ptr<const horizon_detail::GridMetric> metric_;        // built once
    std::shared_ptr<const horizon_detail::GridMetric> whole_metric_;  // of the whole grid
    Curvature curvature_;
};

}  // namespace lookfar
