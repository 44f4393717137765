#pragma once

// Line plots as inline SVG (private to the report module): axes with round-number ticks, one
// polyline per series, a legend, optional marked points and a shaded band. No scripts, no external
// resources, black-and-white friendly (series differ in dash pattern as well as colour).

#include <optional>
#include <string>
#include <utility>
#include <vector>

namespace countersign::report::svg {

struct Series {
  std::string label;
  std::vector<double> x;
  std::vector<double> y;
  bool dashed = false;
  std::optional<std::size_t> style;  // colour/dash index; default: the series' position
};

// A point to draw attention to (a difference beyond tolerance), with a short label.
struct Marker {
  double x = 0.0;
  double y = 0.0;
  std::string label;
};

struct Plot {
  std::string css_class;   // "table-plot", "consistency-plot"
  std::string data_table;  // data-table attribute: which table the plot shows
  std::string title;
  std::string x_label;
  std::string y_label;
  std::vector<Series> series;
  std::vector<Marker> markers;
  std::optional<std::pair<double, double>> y_band;  // shaded horizontal band (tolerance)
};

[[nodiscard]] std::string render(const Plot& plot);

}  // namespace countersign::report::svg
