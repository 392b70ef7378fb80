#include "lookfar/report/SvgPlot.hpp"

#include <cmath>
#include <cstdio>

namespace lookfar {

namespace {
std::string num(double v) {
    char buf[32];
    std::snprintf(buf, sizeof buf, "%.2f", v);
    return buf;
}
std::string tickLabel(double v, double step) {
    char buf[32];
    int decimals = step >= 1 ? 0 : static_cast<int>(std::ceil(-std::log10(step) - 1e-9));
    std::snprintf(buf, sizeof buf, "%.*f", decimals, std::fabs(v) < step * 1e-6 ? 0.0 : v);
    return buf;
}
std::string styleAttrs(const SvgStyle& s) {
    std::string a = " stroke=\"" + s.stroke + "\" fill=\"" + s.fill + "\" stroke-width=\"" +
                    num(s.width) + "\"";
    if (!s.dash.empty())
        a += " stroke-dasharray=\"" + s.dash + "\"";
    if (s.opacity < 1.0)
        a += " opacity=\"" + num(s.opacity) + "\"";
    return a;
}
}  // namespace

std::string svgEscape(const std::string& text) {
    std::string out;
    for (char c : text) {
        switch (c) {
            case '&':
                out += "&amp;";
                break;
            case '<':
                out += "&lt;";
                break;
            case '>':
                out += "&gt;";
                break;
            case '"':
                out += "&quot;";
                break;
            default:
                out += c;
        }
    }
    return out;
}

double niceTickStep(double span, int target) {
    if (!(span > 0))
        return 1;
    double raw = span / target;
    double mag = std::pow(10.0, std::floor(std::log10(raw)));
    double f = raw / mag;
    double nice = f < 1.5 ? 1 : f < 3 ? 2 : f < 7 ? 5 : 10;
    return nice * mag;
}

SvgPlot::SvgPlot(double width_px, double height_px, double x0, double x1, double y0, double y1)
    : w_(width_px), h_(height_px), x0_(x0), x1_(x1), y0_(y0), y1_(y1) {
    if (x1_ <= x0_)
        x1_ = x0_ + 1;
    if (y1_ <= y0_)
        y1_ = y0_ + 1;
}

double SvgPlot::px(double x) const {
    return left_ + (x - x0_) / (x1_ - x0_) * (w_ - left_ - right_);
}
double SvgPlot::py(double y) const {
    return top_ + (y1_ - y) / (y1_ - y0_) * (h_ - top_ - bottom_);
}

void SvgPlot::title(const std::string& text) {
    title_ = text;
}

void SvgPlot::axes(const std::string& x_label, const std::string& y_label, double xs, double ys) {
    if (xs <= 0)
        xs = niceTickStep(x1_ - x0_);
    if (ys <= 0)
        ys = niceTickStep(y1_ - y0_, 6);
    std::string g =
        "<g class=\"axes\" font-family=\"sans-serif\" font-size=\"11\" fill=\"#333\">\n";
    g += "<rect x=\"" + num(left_) + "\" y=\"" + num(top_) + "\" width=\"" +
         num(w_ - left_ - right_) + "\" height=\"" + num(h_ - top_ - bottom_) +
         "\" fill=\"none\" stroke=\"#888\"/>\n";
    for (double x = std::ceil(x0_ / xs) * xs; x <= x1_ + xs * 1e-9; x += xs) {
        g += "<line x1=\"" + num(px(x)) + "\" y1=\"" + num(top_) + "\" x2=\"" + num(px(x)) +
             "\" y2=\"" + num(h_ - bottom_) + "\" stroke=\"#ddd\"/>\n";
        g += "<text x=\"" + num(px(x)) + "\" y=\"" + num(h_ - bottom_ + 15) +
             "\" text-anchor=\"middle\">" + tickLabel(x, xs) + "</text>\n";
    }
    for (double y = std::ceil(y0_ / ys) * ys; y <= y1_ + ys * 1e-9; y += ys) {
        g += "<line x1=\"" + num(left_) + "\" y1=\"" + num(py(y)) + "\" x2=\"" + num(w_ - right_) +
             "\" y2=\"" + num(py(y)) + "\" stroke=\"#ddd\"/>\n";
        g += "<text x=\"" + num(left_ - 6) + "\" y=\"" + num(py(y) + 4) +
             "\" text-anchor=\"end\">" + tickLabel(y, ys) + "</text>\n";
    }
    g += "<text x=\"" + num((left_ + w_ - right_) / 2) + "\" y=\"" + num(h_ - legend_row_ - 12) +
         "\" text-anchor=\"middle\" font-size=\"13\">" + svgEscape(x_label) + "</text>\n";
    g += "<text transform=\"translate(16," + num((top_ + h_ - bottom_) / 2) +
         ") rotate(-90)\" text-anchor=\"middle\" font-size=\"13\">" + svgEscape(y_label) +
         "</text>\n</g>\n";
    body_ = g + body_;
}

void SvgPlot::band(const std::vector<double>& xs, const std::vector<double>& ys,
                   const std::vector<double>& base, const SvgStyle& style) {
    if (xs.empty())
        return;
    std::string pts;
    for (std::size_t i = 0; i < xs.size(); ++i)
        pts += num(px(xs[i])) + "," + num(py(ys[i])) + " ";
    for (std::size_t i = xs.size(); i-- > 0;)
        pts += num(px(xs[i])) + "," + num(py(base[i])) + " ";
    body_ += "<polygon points=\"" + pts + "\"" + styleAttrs(style) + "/>\n";
}

void SvgPlot::polyline(const std::vector<double>& xs, const std::vector<double>& ys,
                       const SvgStyle& style) {
    if (xs.empty())
        return;
    std::string pts;
    for (std::size_t i = 0; i < xs.size(); ++i) {
        if (!std::isfinite(ys[i]))
            continue;
        pts += num(px(xs[i])) + "," + num(py(ys[i])) + " ";
    }
    body_ += "<polyline points=\"" + pts + "\"" + styleAttrs(style) + "/>\n";
}

void SvgPlot::hline(double y, const std::string& label, const SvgStyle& style) {
    body_ += "<line x1=\"" + num(left_) + "\" y1=\"" + num(py(y)) + "\" x2=\"" + num(w_ - right_) +
             "\" y2=\"" + num(py(y)) + "\"" + styleAttrs(style) + "/>\n";
    if (!label.empty()) {
        body_ += "<text x=\"" + num(w_ - right_ - 4) + "\" y=\"" + num(py(y) - 4) +
                 "\" text-anchor=\"end\" font-family=\"sans-serif\" font-size=\"11\" fill=\"" +
                 style.stroke + "\">" + svgEscape(label) + "</text>\n";
    }
}

void SvgPlot::marker(double x, double y, const std::string& label, const std::string& colour) {
    body_ += "<circle cx=\"" + num(px(x)) + "\" cy=\"" + num(py(y)) + "\" r=\"4\" fill=\"" +
             colour + "\"/>\n";
    if (!label.empty()) {
        body_ += "<text x=\"" + num(px(x) + 6) + "\" y=\"" + num(py(y) - 6) +
                 "\" font-family=\"sans-serif\" font-size=\"11\" fill=\"" + colour + "\">" +
                 svgEscape(label) + "</text>\n";
    }
}

void SvgPlot::text(double x, double y, const std::string& label, const std::string& colour,
                   const std::string& anchor, double dx_px, double dy_px) {
    body_ += "<text x=\"" + num(px(x) + dx_px) + "\" y=\"" + num(py(y) + dy_px) +
             "\" text-anchor=\"" + anchor +
             "\" font-family=\"sans-serif\" font-size=\"11\" fill=\"" + colour +
             "\" stroke=\"white\" stroke-width=\"3\" paint-order=\"stroke\">" + svgEscape(label) +
             "</text>\n";
}

void SvgPlot::xSpan(double x0, double x1, const SvgStyle& style) {
    body_ += "<rect x=\"" + num(px(x0)) + "\" y=\"" + num(top_) + "\" width=\"" +
             num(px(x1) - px(x0)) + "\" height=\"" + num(h_ - top_ - bottom_) + "\"" +
             styleAttrs(style) + "/>\n";
}

void SvgPlot::legend(const std::string& label, const SvgStyle& style) {
    legend_.push_back({label, style, false});
}

void SvgPlot::legendBox(const std::string& label, const SvgStyle& style) {
    legend_.push_back({label, style, true});
}

void SvgPlot::legendRowBelow() {
    if (legend_row_ > 0)
        return;
    legend_row_ = 22;
    h_ += legend_row_;
    bottom_ += legend_row_;
}

std::string SvgPlot::render() const {
    std::string out =
        "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<svg xmlns=\"http://www.w3.org/2000/svg\" "
        "width=\"" +
        num(w_) + "\" height=\"" + num(h_) + "\" viewBox=\"0 0 " + num(w_) + " " + num(h_) +
        "\">\n<rect width=\"100%\" height=\"100%\" fill=\"white\"/>\n";
    if (!title_.empty()) {
        out += "<text x=\"" + num(left_) +
               "\" y=\"24\" font-family=\"sans-serif\" font-size=\"15\" "
               "font-weight=\"bold\" fill=\"#222\">" +
               svgEscape(title_) + "</text>\n";
    }
    out += "<svg x=\"0\" y=\"0\" width=\"" + num(w_) + "\" height=\"" + num(h_) + "\">\n";
    out += "<clipPath id=\"plotarea\"><rect x=\"" + num(left_) + "\" y=\"" + num(top_) +
           "\" width=\"" + num(w_ - left_ - right_) + "\" height=\"" + num(h_ - top_ - bottom_) +
           "\"/></clipPath>\n";
    // Axes first (they are at the start of body_), data clipped to the plot area.
    auto split = body_.find("</g>\n");
    if (split != std::string::npos && body_.rfind("<g class=\"axes\"", 0) == 0) {
        out += body_.substr(0, split + 5);
        out += "<g clip-path=\"url(#plotarea)\">\n" + body_.substr(split + 5) + "</g>\n";
    } else {
        out += "<g clip-path=\"url(#plotarea)\">\n" + body_ + "</g>\n";
    }
    double ly = legend_row_ > 0 ? h_ - 8 : top_ + 14;
    double lx = legend_row_ > 0 ? left_ : w_ - right_ - 170;
    for (const LegendEntry& e : legend_) {
        if (e.box) {
            out += "<rect x=\"" + num(lx) + "\" y=\"" + num(ly - 9) + "\" width=\"22\" " +
                   "height=\"10\"" + styleAttrs(e.style) + "/>\n";
        } else {
            out += "<line x1=\"" + num(lx) + "\" y1=\"" + num(ly - 4) + "\" x2=\"" + num(lx + 22) +
                   "\" y2=\"" + num(ly - 4) + "\"" + styleAttrs(e.style) + "/>\n";
        }
        out += "<text x=\"" + num(lx + 28) + "\" y=\"" + num(ly) +
               "\" font-family=\"sans-serif\" font-size=\"11\" fill=\"#222\">" +
               svgEscape(e.label) + "</text>\n";
        if (legend_row_ > 0)
            lx += 28 + 6.5 * static_cast<double>(e.label.size()) + 24;  // about 6.5 px a character
        else
            ly += 16;
    }
    out += "</svg>\n</svg>\n";
    return out;
}

}  // namespace lookfar
