#include "table_checks.hpp"

#include <countersign/beamdata/validation.hpp>

#include <algorithm>
#include <cmath>
#include <cstdio>

namespace countersign::beamdata::detail {

namespace {

bool inside(const Range& range, double value) {
  const bool above_min = range.min_inclusive ? value >= range.min_value : value > range.min_value;
  return above_min && value <= range.max_value;
}

std::string range_text(const Range& range) {
  return std::string{range.min_inclusive ? "[" : "("} + number_text(range.min_value) + ", " +
         number_text(range.max_value) + "]";
}

// The likely unit slip behind a value outside its range, or empty.
std::string slip_text(const Range& range, double value) {
  switch (range.hint) {
    case SlipHint::percent_for_fraction:
      if (value >= 20.0 && value <= 200.0)
        return "looks like a percentage (about 100 where about 1 is expected)";
      break;
    case SlipHint::fraction_for_percent:
      if (value > 0.0 && value <= 1.5) return "looks like a fraction of 1 where a percentage is expected";
      break;
    case SlipHint::mm_for_cm:
      if (value > range.max_value && value <= 10.0 * range.max_value)
        return "looks like millimetres, not centimetres";
      break;
    case SlipHint::none:
      break;
  }
  return {};
}

std::string normalisation_tolerance_text() { return number_text(normalisation_tolerance_percent) + " %"; }

}  // namespace

std::string number_text(double value, int decimals) {
  char buffer[64];
  std::snprintf(buffer, sizeof buffer, "%.*f", decimals, value);
  std::string text = buffer;
  // Trim trailing zeros for readability ("10" rather than "10.0000").
  if (text.find('.') != std::string::npos) {
    text.erase(text.find_last_not_of('0') + 1);
    if (text.back() == '.') text.pop_back();
  }
  return text;
}

void TableChecker::add(const std::string& table_file, const std::string& quantity,
                       std::optional<std::size_t> row, std::optional<std::size_t> column, std::string message,
                       Severity severity, std::string rule) {
  findings_.problems.push_back(Problem{problem_path(machine_, table_file), std::nullopt, row, column,
                                       quantity, std::move(message), severity, std::move(rule)});
}

void TableChecker::add_manifest(const std::string& key, std::string message, Severity severity) {
  findings_.problems.push_back(Problem{machine_.manifest.string(), std::nullopt, std::nullopt, std::nullopt,
                                       key, std::move(message), severity});
}

std::optional<std::size_t> TableChecker::row_line(const std::string& table_file, std::size_t r) const {
  const auto it = lines_.find(problem_path(machine_, table_file));
  if (it == lines_.end() || r >= it->second.row_lines.size()) return std::nullopt;
  return it->second.row_lines[r];
}

std::optional<std::size_t> TableChecker::header_line(const std::string& table_file) const {
  const auto it = lines_.find(problem_path(machine_, table_file));
  if (it == lines_.end()) return std::nullopt;
  return it->second.header_line;
}

void TableChecker::range_problem(const std::string& table_file, const std::string& quantity,
                                 std::optional<std::size_t> row, std::size_t column, const std::string& name,
                                 double value, const Range& range) {
  const std::string slip = slip_text(range, value);
  const std::string outside = "outside the plausible range " + range_text(range);
  const std::string rule = name + " " + outside + (slip.empty() ? "" : ": " + slip);
  add(table_file, quantity, row, column,
      name + " " + number_text(value) + " " + outside + (slip.empty() ? "" : ": " + slip), Severity::error,
      slip.empty() ? rule : slip);
}

void TableChecker::check_ranges(const Table2D& t, const Range& row_range, const Range& column_range,
                                const Range& value_range) {
  for (std::size_t r = 0; r < t.rows().size(); ++r) {
    if (!inside(row_range, t.rows()[r]))
      range_problem(t.file(), t.quantity(), row_line(t.file(), r), 1, t.row_axis_name(), t.rows()[r],
                    row_range);
  }
  for (std::size_t c = 0; c < t.columns().size(); ++c) {
    if (!inside(column_range, t.columns()[c]))
      range_problem(t.file(), t.quantity(), header_line(t.file()), c + 2, t.column_axis_name(),
                    t.columns()[c], column_range);
  }
  for (std::size_t r = 0; r < t.rows().size(); ++r) {
    for (std::size_t c = 0; c < t.columns().size(); ++c) {
      if (!inside(value_range, t.cell(r, c)))
        range_problem(t.file(), t.quantity(), row_line(t.file(), r), c + 2, t.quantity(), t.cell(r, c),
                      value_range);
    }
  }
}

void TableChecker::check_ranges(const Table1D& t, const Range& axis_range, const Range& value_range) {
  for (std::size_t i = 0; i < t.axis().size(); ++i) {
    if (!inside(axis_range, t.axis()[i]))
      range_problem(t.file(), t.quantity(), row_line(t.file(), i), 1, t.axis_name(), t.axis()[i], axis_range);
    if (!inside(value_range, t.values()[i]))
      range_problem(t.file(), t.quantity(), row_line(t.file(), i), 2, t.quantity(), t.values()[i],
                    value_range);
  }
}

void TableChecker::check_row_normalisation(const Table2D& t, double at_row, double expected,
                                           const std::string& what) {
  for (std::size_t c = 0; c < t.columns().size(); ++c) {
    const Lookup l = t.at(at_row, t.columns()[c]);
    const AxisBracket& rb = l.axes.front();
    const auto row = row_line(t.file(), rb.upper_weight < 0.5 ? rb.lower_index : rb.upper_index);
    if (l.extrapolated()) {
      add(t.file(), t.quantity(), row, c + 2,
          what + ": " + t.row_axis_name() + " " + number_text(at_row) + " lies outside the table");
      return;
    }
    const double deviation_percent = 100.0 * (l.value - expected) / expected;
    if (std::abs(deviation_percent) > normalisation_tolerance_percent) {
      const bool at_node = rb.lower_index == rb.upper_index;
      add(t.file(), t.quantity(), row, c + 2,
          what + ": " + number_text(l.value) + (at_node ? "" : " (interpolated)") + " at " +
              t.row_axis_name() + " " + number_text(at_row) + ", field " + number_text(t.columns()[c]) +
              " cm, expected " + number_text(expected) + " within " + normalisation_tolerance_text(),
          Severity::error,
          what + " is not " + number_text(expected) + " within " + normalisation_tolerance_text());
    }
  }
}

void TableChecker::check_value_at(const Table1D& t, double at, double expected, const std::string& what) {
  const Lookup l = t.at(at);
  const AxisBracket& b = l.axes.front();
  const auto row = row_line(t.file(), b.upper_weight < 0.5 ? b.lower_index : b.upper_index);
  if (l.extrapolated()) {
    add(t.file(), t.quantity(), row, 1,
        "the table does not cover " + t.axis_name() + " " + number_text(at) + " (" + what + ")");
    return;
  }
  if (std::abs(100.0 * (l.value - expected) / expected) > normalisation_tolerance_percent)
    add(t.file(), t.quantity(), row, 2,
        what + " = " + number_text(l.value) + ", expected " + number_text(expected) + " within " +
            normalisation_tolerance_text());
}

void TableChecker::check_unity_at_zero_column(const Table2D& t, const std::string& what) {
  const auto& columns = t.columns();
  const auto zero = std::find(columns.begin(), columns.end(), 0.0);
  if (zero == columns.end()) return;
  const auto c = static_cast<std::size_t>(std::distance(columns.begin(), zero));
  for (std::size_t r = 0; r < t.rows().size(); ++r) {
    if (std::abs(100.0 * (t.cell(r, c) - 1.0)) > normalisation_tolerance_percent)
      add(t.file(), t.quantity(), row_line(t.file(), r), c + 2,
          what + " on the central axis is " + number_text(t.cell(r, c)) + ", expected 1 within " +
              normalisation_tolerance_text(),
          Severity::error, what + " on the central axis is not 1");
  }
}

void TableChecker::check_column_maximum(const Table2D& t, double expected, const std::string& what) {
  for (std::size_t c = 0; c < t.columns().size(); ++c) {
    std::size_t best = 0;
    for (std::size_t r = 1; r < t.rows().size(); ++r) {
      if (t.cell(r, c) > t.cell(best, c)) best = r;
    }
    const double maximum = t.cell(best, c);
    if (std::abs(100.0 * (maximum - expected) / expected) > normalisation_tolerance_percent)
      add(t.file(), t.quantity(), row_line(t.file(), best), c + 2,
          what + ": the maximum of field " + number_text(t.columns()[c]) + " cm is " + number_text(maximum) +
              " (at " + t.row_axis_name() + " " + number_text(t.rows()[best]) + "), expected " +
              number_text(expected) + " within " + normalisation_tolerance_text(),
          Severity::error, what + ": column maximum is not " + number_text(expected));
  }
}

void TableChecker::warn_not_rising(const Table1D& t, const std::string& what) {
  for (std::size_t i = 1; i < t.values().size(); ++i) {
    if (t.values()[i] < t.values()[i - 1])
      add(t.file(), t.quantity(), row_line(t.file(), i), 2,
          what + " falls from " + number_text(t.values()[i - 1]) + " to " + number_text(t.values()[i]) +
              " at " + t.axis_name() + " " + number_text(t.axis()[i]) + "; it should rise with field size",
          Severity::warning, what + " does not rise with field size");
  }
}

void TableChecker::warn_rising_beyond(const Table2D& t, double from_row, const std::string& what) {
  for (std::size_t c = 0; c < t.columns().size(); ++c) {
    for (std::size_t r = 1; r < t.rows().size(); ++r) {
      if (t.rows()[r - 1] <= from_row || !(t.cell(r, c) > t.cell(r - 1, c))) continue;
      add(t.file(), t.quantity(), row_line(t.file(), r), c + 2,
          what + " rises from " + number_text(t.cell(r - 1, c)) + " to " + number_text(t.cell(r, c)) +
              " at " + t.row_axis_name() + " " + number_text(t.rows()[r]) + ", field " +
              number_text(t.columns()[c]) + " cm, beyond dmax " + number_text(from_row) +
              " cm; it should fall",
          Severity::warning, what + " does not fall beyond dmax");
    }
  }
}

}  // namespace countersign::beamdata::detail
