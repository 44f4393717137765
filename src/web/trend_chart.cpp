#include "trend_chart.hpp"

#include "page_parts.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <cstdio>

namespace countersign::web {

namespace {

constexpr double width = 1100.0;
constexpr double height = 330.0;
constexpr double left = 70.0;
constexpr double right = 20.0;
constexpr double top = 16.0;
constexpr double bottom = 44.0;

std::string num(double value) {
  std::array<char, 32> text{};
  std::snprintf(text.data(), text.size(), "%.1f", value);
  return text.data();
}

// Days since 1970-01-01 of a civil date (H. Hinnant's days_from_civil; from memory).
std::int64_t days_from_civil(std::int64_t y, unsigned m, unsigned d) {
  y -= m <= 2 ? 1 : 0;
  const std::int64_t era = (y >= 0 ? y : y - 399) / 400;
  const auto yoe = static_cast<unsigned>(y - era * 400);
  const unsigned doy = (153 * (m > 2 ? m - 3 : m + 9) + 2) / 5 + d - 1;
  const unsigned doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
  return era * 146097 + static_cast<std::int64_t>(doe) - 719468;
}

struct Scale {
  double from = 0.0;
  double to = 1.0;
  double pixel_from = 0.0;
  double pixel_to = 1.0;
  [[nodiscard]] double operator()(double v) const {
    const double span = to - from;
    return pixel_from + (span == 0.0 ? 0.5 : (v - from) / span) * (pixel_to - pixel_from);
  }
};

std::string line(double x1, double y1, double x2, double y2, std::string_view css) {
  return "<line x1=\"" + num(x1) + "\" y1=\"" + num(y1) + "\" x2=\"" + num(x2) + "\" y2=\"" + num(y2) +
         "\" " + std::string{css} + "/>";
}

std::string text(double x, double y, std::string_view anchor, const std::string& words) {
  return "<text x=\"" + num(x) + "\" y=\"" + num(y) + "\" text-anchor=\"" + std::string{anchor} +
         "\" font-size=\"12\">" + words + "</text>";
}

std::string marker(const TrendPoint& p, double x, double y, bool beyond_limits) {
  std::string shape = p.outside_tolerance
                          ? "<rect x=\"" + num(x - 5) + "\" y=\"" + num(y - 5) +
                                "\" width=\"10\" height=\"10\" fill=\"#a23b2a\" stroke=\"#000\"/>"
                          : "<circle cx=\"" + num(x) + "\" cy=\"" + num(y) + "\" r=\"4\" fill=\"#2c3a4f\"/>";
  if (beyond_limits) {
    shape += "<circle cx=\"" + num(x) + "\" cy=\"" + num(y) + "\" r=\"9\" fill=\"none\" stroke=\"#a23b2a\"/>";
  }
  return "<a href=\"/checks/" + std::to_string(p.check_id) + "\"><title>check #" +
         std::to_string(p.check_id) + ", beam " + std::to_string(p.beam_number) + " " +
         parts::esc(p.beam_name) + ": " + parts::signed_percent(p.deviation_percent) + " % on " +
         parts::time_text(p.checked_at_utc) + "</title>" + shape + "</a>";
}

}  // namespace

std::int64_t utc_seconds(const std::string& iso_utc) {
  int y = 0;
  unsigned mo = 0;
  unsigned d = 0;
  unsigned h = 0;
  unsigned mi = 0;
  unsigned s = 0;
  if (std::sscanf(iso_utc.c_str(), "%4d-%2u-%2uT%2u:%2u:%2u", &y, &mo, &d, &h, &mi, &s) != 6) return 0;
  return days_from_civil(y, mo, d) * 86400 + static_cast<std::int64_t>(h) * 3600 +
         static_cast<std::int64_t>(mi) * 60 + s;
}

std::string trend_chart_svg(const std::vector<TrendPoint>& points,
                            const std::optional<store::IndividualsChart>& chart) {
  if (points.empty()) return {};
  double low = 0.0;
  double high = 0.0;
  std::optional<double> tolerance;
  for (const auto& p : points) {
    low = std::min(low, p.deviation_percent);
    high = std::max(high, p.deviation_percent);
    if (p.tolerance_percent) tolerance = std::max(tolerance.value_or(0.0), *p.tolerance_percent);
  }
  if (tolerance) {
    low = std::min(low, -*tolerance);
    high = std::max(high, *tolerance);
  }
  if (chart) {
    low = std::min(low, chart->lower_limit);
    high = std::max(high, chart->upper_limit);
  }
  const double pad = std::max(0.5, (high - low) * 0.08);
  const Scale ys{low - pad, high + pad, height - bottom, top};
  const auto first = static_cast<double>(utc_seconds(points.front().checked_at_utc));
  const auto last = static_cast<double>(utc_seconds(points.back().checked_at_utc));
  const Scale xs{first, last, left + 10.0, width - right - 10.0};

  std::string svg = "<svg class=\"chart\" xmlns=\"http://www.w3.org/2000/svg\" viewBox=\"0 0 " + num(width) +
                    " " + num(height) +
                    "\" width=\"100%\" role=\"img\" aria-label=\"deviation against date\">";
  if (tolerance) {
    svg += "<rect x=\"" + num(left) + "\" y=\"" + num(ys(*tolerance)) + "\" width=\"" +
           num(width - left - right) + "\" height=\"" + num(ys(-*tolerance) - ys(*tolerance)) +
           "\" fill=\"#e5f1e7\" stroke=\"#3e7a4c\" " + "stroke-dasharray=\"2 3\"/>";
    svg += text(width - right - 4, ys(*tolerance) - 4, "end", "tolerance &#177;" + num(*tolerance) + " %");
  }
  svg += line(left, top, left, height - bottom, "stroke=\"#1d2430\"");
  svg += line(left, ys(0.0), width - right, ys(0.0), "stroke=\"#9aa3ad\"");
  for (const double tick : {ys.from, 0.0, ys.to}) {
    svg += text(left - 6, ys(tick) + 4, "end", num(tick) + " %");
  }
  if (chart) {
    svg += line(left, ys(chart->centre), width - right, ys(chart->centre),
                "stroke=\"#2c3a4f\" stroke-width=\"1.5\"");
    for (const double limit : {chart->upper_limit, chart->lower_limit}) {
      svg += line(left, ys(limit), width - right, ys(limit), "stroke=\"#7a2114\" stroke-dasharray=\"8 4\"");
    }
    svg += text(left + 4, ys(chart->upper_limit) - 4, "start",
                "upper control limit " + num(chart->upper_limit) + " %");
    svg += text(left + 4, ys(chart->lower_limit) + 14, "start",
                "lower control limit " + num(chart->lower_limit) + " %");
  }
  for (const auto& p : points) {
    const double x = xs(static_cast<double>(utc_seconds(p.checked_at_utc)));
    svg += marker(p, x, ys(p.deviation_percent), chart && chart->beyond_limits(p.deviation_percent));
  }
  svg += text(left + 10, height - 14, "start", parts::time_text(points.front().checked_at_utc));
  svg += text(width - right - 10, height - 14, "end", parts::time_text(points.back().checked_at_utc));
  return svg + "</svg>";
}

}  // namespace countersign::web
