#pragma once

// Rules that apply to any table: plausible ranges (with a hint when a value looks like a unit slip),
// normalisation at a row or an axis value, and monotonic trends. Findings name the file, the CSV
// row (file line) and column.

#include "inspection.hpp"

#include <map>
#include <optional>
#include <string>

namespace countersign::beamdata::detail {

// What a value that fails its range most likely is.
enum class SlipHint {
  none,
  percent_for_fraction,  // a ratio typed in percent (about 100 where about 1 is expected)
  fraction_for_percent,  // a percentage typed as a fraction of 1
  mm_for_cm,             // a length in millimetres where centimetres are expected
};

// Plausible ranges: wide on purpose, to catch unit slips (mm for cm, fraction for percent) and
// typing errors, not to judge commissioning (common practice, no source).
struct Range {
  double min_value;
  double max_value;
  bool min_inclusive;
  SlipHint hint = SlipHint::none;
};

[[nodiscard]] std::string number_text(double value, int decimals = 4);

class TableChecker {
 public:
  TableChecker(const Machine& machine, const std::map<std::string, TableLines>& lines,
               PhysicsFindings& findings)
      : machine_(machine), lines_(lines), findings_(findings) {}

  void add(const std::string& table_file, const std::string& quantity, std::optional<std::size_t> row,
           std::optional<std::size_t> column, std::string message, Severity severity = Severity::error,
           std::string rule = {});
  // A finding about the manifest (no line known here).
  void add_manifest(const std::string& key, std::string message, Severity severity);

  [[nodiscard]] std::optional<std::size_t> row_line(const std::string& table_file, std::size_t r) const;
  [[nodiscard]] std::optional<std::size_t> header_line(const std::string& table_file) const;

  void check_ranges(const Table2D& t, const Range& row_range, const Range& column_range,
                    const Range& value_range);
  void check_ranges(const Table1D& t, const Range& axis_range, const Range& value_range);

  // Every column equals `expected` at row value `at_row` within the normalisation tolerance.
  void check_row_normalisation(const Table2D& t, double at_row, double expected, const std::string& what);
  // A one-axis table equals `expected` at axis value `at` within the normalisation tolerance.
  void check_value_at(const Table1D& t, double at, double expected, const std::string& what);
  // The column whose axis value is 0 equals 1 in every row (off-axis ratios), where there is one.
  void check_unity_at_zero_column(const Table2D& t, const std::string& what);
  // The maximum of every column is 100 within the tolerance (electron depth doses).
  void check_column_maximum(const Table2D& t, double expected, const std::string& what);

  // Warnings for suspicious but valid data.
  void warn_not_rising(const Table1D& t, const std::string& what);
  void warn_rising_beyond(const Table2D& t, double from_row, const std::string& what);

  [[nodiscard]] const Machine& machine() const { return machine_; }
  [[nodiscard]] PhysicsFindings& findings() { return findings_; }

 private:
  void range_problem(const std::string& table_file, const std::string& quantity,
                     std::optional<std::size_t> row, std::size_t column, const std::string& name,
                     double value, const Range& range);

  const Machine& machine_;
  const std::map<std::string, TableLines>& lines_;
  PhysicsFindings& findings_;
};

}  // namespace countersign::beamdata::detail
