#include <countersign/beamdata/table.hpp>

#include <algorithm>
#include <cmath>
#include <limits>
#include <stdexcept>
#include <utility>

namespace countersign::beamdata {

namespace {

// Throws for an axis interpolation cannot use; the loader reports such data before it gets here.
void require_usable_axis(const std::vector<double>& axis, const std::string& what) {
  if (axis.empty()) throw std::invalid_argument(what + ": empty axis");
  for (std::size_t i = 0; i < axis.size(); ++i) {
    if (!std::isfinite(axis[i])) throw std::invalid_argument(what + ": non-finite axis value");
    if (i > 0 && !(axis[i] > axis[i - 1]))
      throw std::invalid_argument(what + ": axis not strictly increasing");
  }
}

// Where `query` falls along `axis`: bracketing nodes and the weight of the upper one. Outside the
// axis the end segment is used with a weight below 0 or above 1 (linear extension).
AxisBracket bracket(const std::string& axis_name, const std::vector<double>& axis, double query) {
  AxisBracket b;
  b.axis = axis_name;
  b.query = query;
  const std::size_t n = axis.size();
  if (!std::isfinite(query)) {
    // A NaN or infinite query has no place on the axis: flagged so it can never pass as a table value.
    b.lower_node = b.upper_node = axis.front();
    b.upper_weight = std::numeric_limits<double>::quiet_NaN();
    b.extrapolated = true;
    return b;
  }
  if (n == 1) {
    b.lower_node = b.upper_node = axis.front();
    b.extrapolated = query != axis.front();
    return b;
  }
  std::size_t lower = 0;
  if (query <= axis.front()) {
    lower = 0;
  } else if (query >= axis.back()) {
    lower = n - 2;
  } else {
    // First node strictly greater than the query; the segment starts one before it.
    const auto it = std::upper_bound(axis.begin(), axis.end(), query);
    lower = static_cast<std::size_t>(std::distance(axis.begin(), it)) - 1;
  }
  const auto exact = std::find(axis.begin(), axis.end(), query);
  if (exact != axis.end()) {
    // At a node: report that node alone, weight 0.
    const auto index = static_cast<std::size_t>(std::distance(axis.begin(), exact));
    b.lower_index = b.upper_index = index;
    b.lower_node = b.upper_node = axis[index];
    b.upper_weight = 0.0;
    return b;
  }
  b.lower_index = lower;
  b.upper_index = lower + 1;
  b.lower_node = axis[lower];
  b.upper_node = axis[lower + 1];
  b.upper_weight = (query - b.lower_node) / (b.upper_node - b.lower_node);
  b.extrapolated = query < axis.front() || query > axis.back();
  return b;
}

}  // namespace

bool Lookup::extrapolated() const {
  return std::any_of(axes.begin(), axes.end(), [](const AxisBracket& b) { return b.extrapolated; }) ||
         !std::isfinite(value);
}

Table1D::Table1D(std::string file, std::string quantity, std::string axis_name, std::vector<double> axis,
                 std::vector<double> values)
    : file_(std::move(file)),
      quantity_(std::move(quantity)),
      axis_name_(std::move(axis_name)),
      axis_(std::move(axis)),
      values_(std::move(values)) {
  require_usable_axis(axis_, file_);
  if (values_.size() != axis_.size()) throw std::invalid_argument(file_ + ": value count differs from axis");
}

Lookup Table1D::at(double x) const {
  if (axis_.empty()) throw std::logic_error("lookup in an empty one-axis table (" + quantity_ + ")");
  Lookup result;
  result.table_file = file_;
  result.quantity = quantity_;
  const AxisBracket b = bracket(axis_name_, axis_, x);
  const double w = b.upper_weight;
  result.value = (1.0 - w) * values_[b.lower_index] + w * values_[b.upper_index];
  if (b.lower_index == b.upper_index && std::isfinite(w)) result.value = values_[b.lower_index];
  result.axes.push_back(b);
  return result;
}

Table2D::Table2D(std::string file, std::string quantity, std::string row_axis_name, std::vector<double> rows,
                 std::string column_axis_name, std::vector<double> columns, std::vector<double> values)
    : file_(std::move(file)),
      quantity_(std::move(quantity)),
      row_axis_name_(std::move(row_axis_name)),
      column_axis_name_(std::move(column_axis_name)),
      rows_(std::move(rows)),
      columns_(std::move(columns)),
      values_(std::move(values)) {
  require_usable_axis(rows_, file_ + " (rows)");
  require_usable_axis(columns_, file_ + " (columns)");
  if (values_.size() != rows_.size() * columns_.size())
    throw std::invalid_argument(file_ + ": cell count differs from rows x columns");
}

Lookup Table2D::at(double row, double column) const {
  if (rows_.empty() || columns_.empty())
    throw std::logic_error("lookup in an empty two-axis table (" + quantity_ + ")");
  Lookup result;
  result.table_file = file_;
  result.quantity = quantity_;
  const AxisBracket r = bracket(row_axis_name_, rows_, row);
  const AxisBracket c = bracket(column_axis_name_, columns_, column);
  const double wr = r.upper_weight;
  const double wc = c.upper_weight;
  // Interpolate along the columns in the two bracketing rows, then between those rows.
  const auto along_row = [&](std::size_t ri) {
    if (c.lower_index == c.upper_index && std::isfinite(wc)) return cell(ri, c.lower_index);
    return (1.0 - wc) * cell(ri, c.lower_index) + wc * cell(ri, c.upper_index);
  };
  if (r.lower_index == r.upper_index && std::isfinite(wr)) {
    result.value = along_row(r.lower_index);
  } else {
    result.value = (1.0 - wr) * along_row(r.lower_index) + wr * along_row(r.upper_index);
  }
  result.axes.push_back(r);
  result.axes.push_back(c);
  return result;
}

}  // namespace countersign::beamdata
