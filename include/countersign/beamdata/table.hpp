#pragma once

// Beam-data tables (beamdata/FORMAT.md): one-axis (field_cm -> value) and two-axis (row axis x column
// axis). Interpolation is linear per axis; every lookup reports where its number came from.

#include <cstddef>
#include <string>
#include <vector>

namespace countersign::beamdata {

// Where a lookup fell along one axis.
struct AxisBracket {
  std::string axis;            // axis name with unit, e.g. "depth_cm", "field_cm", "off_axis_cm"
  double query = 0.0;          // the value asked for
  std::size_t lower_index = 0; // index of the lower bracketing node (0-based, data rows/columns)
  std::size_t upper_index = 0; // index of the upper bracketing node (== lower_index at a node)
  double lower_node = 0.0;     // axis value at lower_index
  double upper_node = 0.0;     // axis value at upper_index
  double upper_weight = 0.0;   // weight of the upper node; the lower node has 1 - upper_weight
  bool extrapolated = false;   // the query lies outside [first node, last node]
};

// A looked-up value and its provenance.
struct Lookup {
  double value = 0.0;
  std::string table_file;            // path of the CSV as named in the manifest
  std::string quantity;              // "pdd", "tmr", "sc", "sp", "oar", "wedge_factor", ...
  std::vector<AxisBracket> axes;     // one entry per axis, row axis first
  [[nodiscard]] bool extrapolated() const;
};

class Table1D {
 public:
  Table1D() = default;
  Table1D(std::string file, std::string quantity, std::string axis_name, std::vector<double> axis,
          std::vector<double> values);

  // Linear interpolation; outside the axis the end segment is extended linearly and the
  // lookup is marked extrapolated.
  [[nodiscard]] Lookup at(double x) const;

  [[nodiscard]] const std::string& file() const { return file_; }
  [[nodiscard]] const std::string& quantity() const { return quantity_; }
  [[nodiscard]] const std::string& axis_name() const { return axis_name_; }
  [[nodiscard]] const std::vector<double>& axis() const { return axis_; }
  [[nodiscard]] const std::vector<double>& values() const { return values_; }

 private:
  std::string file_, quantity_, axis_name_;
  std::vector<double> axis_, values_;
};

class Table2D {
 public:
  Table2D() = default;
  // values is row-major: values[r * columns.size() + c].
  Table2D(std::string file, std::string quantity, std::string row_axis_name, std::vector<double> rows,
          std::string column_axis_name, std::vector<double> columns, std::vector<double> values);

  // Bilinear interpolation, marked extrapolated when either coordinate lies outside its axis.
  [[nodiscard]] Lookup at(double row, double column) const;

  [[nodiscard]] const std::string& file() const { return file_; }
  [[nodiscard]] const std::string& quantity() const { return quantity_; }
  [[nodiscard]] const std::string& row_axis_name() const { return row_axis_name_; }
  [[nodiscard]] const std::string& column_axis_name() const { return column_axis_name_; }
  [[nodiscard]] const std::vector<double>& rows() const { return rows_; }
  [[nodiscard]] const std::vector<double>& columns() const { return columns_; }
  [[nodiscard]] double cell(std::size_t row, std::size_t column) const { return values_[row * columns_.size() + column]; }

 private:
  std::string file_, quantity_, row_axis_name_, column_axis_name_;
  std::vector<double> rows_, columns_, values_;
};

}  // namespace countersign::beamdata
