#pragma once
// A small SVG plot builder for profiles and panoramas: data coordinates in, an SVG document
// out. Axes with round-number ticks, filled areas, lines, markers and labels.
#include <string>
#include <vector>

namespace lookfar {

struct SvgStyle {
    std::string stroke = "#1f3b57";
    std::string fill = "none";
    double width = 1.5;
    std::string dash;  ///< e.g. "6 4"
    double opacity = 1.0;
};

class SvgPlot {
  public:
    /// Plot of `width_px` × `height_px` showing x in [x0, x1] and y in [y0, y1].
    SvgPlot(double width_px, double height_px, double x0, double x1, double y0, double y1);

    void title(const std::string& text);
    /// Axis labels and round-number ticks; `x_tick_step`/`y_tick_step` 0 = automatic.
    void axes(const std::string& x_label, const std::string& y_label, double x_tick_step = 0,
              double y_tick_step = 0);
    /// Polygon between the curve (xs, ys) and the baseline curve (xs, base) (same length).
    void band(const std::vector<double>& xs, const std::vector<double>& ys,
              const std::vector<double>& base, const SvgStyle& style);
    void polyline(const std::vector<double>& xs, const std::vector<double>& ys,
                  const SvgStyle& style);
    /// Horizontal reference line across the plot with a label at its right end.
    void hline(double y, const std::string& label, const SvgStyle& style);
    void marker(double x, double y, const std::string& label, const std::string& colour);
    /// A text label at data point (x, y), shifted by (dx_px, dy_px) pixels; `anchor` is the SVG
    /// text-anchor: "start", "middle" or "end". Drawn with a white halo to stay readable.
    void text(double x, double y, const std::string& label, const std::string& colour,
              const std::string& anchor = "start", double dx_px = 0, double dy_px = 0);
    /// A shaded span across the whole height of the plot, from x0 to x1 (data units).
    void xSpan(double x0, double x1, const SvgStyle& style);
    /// A legend entry (drawn top-right in order of calls), its sample a short line.
    void legend(const std::string& label, const SvgStyle& style);
    /// A legend entry whose sample is a filled box (for shaded areas).
    void legendBox(const std::string& label, const SvgStyle& style);
    /// Puts the legend in a row of its own below the x axis's label, entries side by side,
    /// rather than over the top right of the plot: the picture grows by that row, the plot
    /// area keeps its size. Call before axes() and before drawing anything.
    void legendRowBelow();
    std::string render() const;

    double px(double x) const;
    double py(double y) const;

  private:
    double w_, h_, x0_, x1_, y0_, y1_;
    double left_ = 70, right_ = 20, top_ = 40, bottom_ = 50;
    std::string body_;
    std::string title_;
    struct LegendEntry {
        std::string label;
        SvgStyle style;
        bool box = false;
    };
    std::vector<LegendEntry> legend_;
    double legend_row_ = 0;  ///< height of the legend's row below the plot, pixels (0: none)
};

/// A "nice" tick step giving roughly `target` ticks over `span`.
double niceTickStep(double span, int target = 8);
/// Escapes &, <, > and quotes for SVG text.
std::string svgEscape(const std::string& text);

}  // namespace lookfar
