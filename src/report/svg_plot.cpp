#include "svg_plot.hpp"

#include <countersign/report/html_escape.hpp>

#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <cmath>
#include <limits>

namespace countersign::report::svg {

namespace {

constexpr double width = 720, height = 380;
constexpr double left = 64, right = 170, top = 34, bottom = 50;  // margins; the legend sits on the right
constexpr double plot_w = width - left - right, plot_h = height - top - bottom;

constexpr std::array<const char*, 8> colours = {"#1b4f9c", "#b2182b", "#1a7f37", "#7b3294",
                                                "#e08214", "#2c7c7c", "#555555", "#a6611a"};
constexpr std::array<const char*, 4> dashes = {"", "6 3", "2 3", "8 3 2 3"};

struct Range {
  double min = std::numeric_limits<double>::infinity();
  double max = -std::numeric_limits<double>::infinity();
  void include(double v) {
    if (!std::isfinite(v)) return;
    min = std::min(min, v);
    max = std::max(max, v);
  }
};

// Round-number tick step (1, 2 or 5 times a power of ten) giving about five intervals.
double tick_step(double span) {
  if (!(span > 0.0)) return 1.0;
  const double raw = span / 5.0;
  const double magnitude = std::pow(10.0, std::floor(std::log10(raw)));
  for (const double m : {1.0, 2.0, 5.0, 10.0}) {
    if (raw <= m * magnitude) return m * magnitude;
  }
  return 10.0 * magnitude;
}

// Axis limits widened to whole ticks; a flat range gets some room.
Range nice(Range r) {
  if (!std::isfinite(r.min)) return {0.0, 1.0};
  if (r.max - r.min < 1e-9) {
    const double pad = std::max(std::abs(r.min) * 0.05, 0.01);
    r.min -= pad;
    r.max += pad;
  }
  const double step = tick_step(r.max - r.min);
  return {std::floor(r.min / step) * step, std::ceil(r.max / step) * step};
}

// The first multiple of the step at or above the axis start, so ticks sit on round numbers.
double first_tick(double start, double step) { return std::ceil(start / step - 1e-9) * step; }

std::string number(double v) { return fmt::format("{:g}", std::abs(v) < 1e-12 ? 0.0 : v); }

class Frame {
 public:
  Frame(Range x, Range y) : x_(x), y_(y) {}
  [[nodiscard]] double px(double x) const { return left + (x - x_.min) / (x_.max - x_.min) * plot_w; }
  [[nodiscard]] double py(double y) const { return top + plot_h - (y - y_.min) / (y_.max - y_.min) * plot_h; }

  [[nodiscard]] std::string axes(const std::string& x_label, const std::string& y_label) const {
    std::string out = fmt::format(
        "<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" fill=\"none\" stroke=\"#000\" "
        "stroke-width=\"1\"/>\n",
        left, top, plot_w, plot_h);
    const double xs = tick_step(x_.max - x_.min);
    for (double v = first_tick(x_.min, xs); v <= x_.max + xs * 1e-6; v += xs) {
      out += fmt::format(
          "<line x1=\"{0:.1f}\" y1=\"{1}\" x2=\"{0:.1f}\" y2=\"{2}\" stroke=\"#ddd\"/>"
          "<text x=\"{0:.1f}\" y=\"{3}\" text-anchor=\"middle\">{4}</text>\n",
          px(v), top, top + plot_h, top + plot_h + 16, number(v));
    }
    const double ys = tick_step(y_.max - y_.min);
    for (double v = first_tick(y_.min, ys); v <= y_.max + ys * 1e-6; v += ys) {
      out += fmt::format(
          "<line x1=\"{1}\" y1=\"{0:.1f}\" x2=\"{2}\" y2=\"{0:.1f}\" stroke=\"#ddd\"/>"
          "<text x=\"{3}\" y=\"{4:.1f}\" text-anchor=\"end\">{5}</text>\n",
          py(v), left, left + plot_w, left - 6, py(v) + 4, number(v));
    }
    out += fmt::format("<text x=\"{}\" y=\"{}\" text-anchor=\"middle\">{}</text>\n", left + plot_w / 2,
                       height - 12, html_escape(x_label));
    out += fmt::format("<text transform=\"translate(16 {}) rotate(-90)\" text-anchor=\"middle\">{}</text>\n",
                       top + plot_h / 2, html_escape(y_label));
    return out;
  }

 private:
  Range x_, y_;
};

std::string series_svg(const Series& s, std::size_t index, const Frame& f) {
  const std::size_t style = s.style.value_or(index);
  std::string points;
  for (std::size_t i = 0; i < s.x.size() && i < s.y.size(); ++i) {
    if (!std::isfinite(s.x[i]) || !std::isfinite(s.y[i])) continue;
    points += fmt::format("{:.1f},{:.1f} ", f.px(s.x[i]), f.py(s.y[i]));
  }
  const char* dash = s.dashed ? "5 3" : dashes[(style / colours.size()) % dashes.size()];
  return fmt::format("<polyline fill=\"none\" stroke=\"{}\" stroke-width=\"1.4\"{} points=\"{}\"/>\n",
                     colours[style % colours.size()],
                     *dash ? fmt::format(" stroke-dasharray=\"{}\"", dash) : std::string{}, points);
}

std::string legend(const std::vector<Series>& series) {
  std::string out;
  const std::size_t rows = std::min<std::size_t>(series.size(), 22);
  for (std::size_t i = 0; i < rows; ++i) {
    const Series& s = series[i];
    const std::size_t style = s.style.value_or(i);
    const double y = top + 6 + 14.0 * static_cast<double>(i);
    const char* dash = s.dashed ? "5 3" : dashes[(style / colours.size()) % dashes.size()];
    out += fmt::format(
        "<line x1=\"{0}\" y1=\"{1}\" x2=\"{2}\" y2=\"{1}\" stroke=\"{3}\" stroke-width=\"1.6\"{4}/>"
        "<text x=\"{5}\" y=\"{6}\">{7}</text>\n",
        width - right + 12, y, width - right + 34, colours[style % colours.size()],
        *dash ? fmt::format(" stroke-dasharray=\"{}\"", dash) : std::string{}, width - right + 40, y + 4,
        html_escape(s.label));
  }
  if (series.size() > rows)
    out += fmt::format("<text x=\"{}\" y=\"{}\">… {} more</text>\n", width - right + 12,
                       top + 10 + 14.0 * static_cast<double>(rows), series.size() - rows);
  return out;
}

}  // namespace

std::string render(const Plot& plot) {
  Range xr, yr;
  for (const auto& s : plot.series) {
    for (const double v : s.x) xr.include(v);
    for (const double v : s.y) yr.include(v);
  }
  for (const auto& m : plot.markers) {
    xr.include(m.x);
    yr.include(m.y);
  }
  if (plot.y_band) {
    yr.include(plot.y_band->first);
    yr.include(plot.y_band->second);
  }
  const Frame f(nice(xr), nice(yr));
  std::string out = fmt::format(
      "<svg class=\"{}\" data-table=\"{}\" xmlns=\"http://www.w3.org/2000/svg\" viewBox=\"0 0 {} {}\" "
      "width=\"{}\" height=\"{}\" font-family=\"sans-serif\" font-size=\"11\" role=\"img\">\n"
      "<title>{}</title>\n<text x=\"{}\" y=\"20\" font-size=\"13\" font-weight=\"bold\">{}</text>\n",
      html_escape(plot.css_class), html_escape(plot.data_table), width, height, width, height,
      html_escape(plot.title), left, html_escape(plot.title));
  if (plot.y_band) {
    out +=
        fmt::format("<rect x=\"{}\" y=\"{:.1f}\" width=\"{}\" height=\"{:.1f}\" fill=\"#e8f0e8\"/>\n", left,
                    f.py(plot.y_band->second), plot_w, f.py(plot.y_band->first) - f.py(plot.y_band->second));
  }
  out += f.axes(plot.x_label, plot.y_label);
  for (std::size_t i = 0; i < plot.series.size(); ++i) out += series_svg(plot.series[i], i, f);
  for (const auto& m : plot.markers) {
    out += fmt::format(
        "<circle cx=\"{:.1f}\" cy=\"{:.1f}\" r=\"5\" fill=\"none\" stroke=\"#c00\" stroke-width=\"2\">"
        "<title>{}</title></circle>\n",
        f.px(m.x), f.py(m.y), html_escape(m.label));
  }
  out += legend(plot.series);
  return out + "</svg>\n";
}

}  // namespace countersign::report::svg
