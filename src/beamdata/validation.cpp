#include <countersign/beamdata/conversions.hpp>
#include <countersign/beamdata/validation.hpp>

#include "inspection.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <string>

namespace countersign::beamdata {

namespace detail {

namespace {

// Plausible ranges: wide on purpose, to catch unit slips (mm for cm, fraction for percent) and
// typing errors, not to judge commissioning (common practice, no source).
struct Range {
  double min_value;
  double max_value;
  bool min_inclusive;
};
constexpr Range depth_range{0.0, 50.0, true};
constexpr Range field_range{0.0, 60.0, false};
constexpr Range off_axis_range{0.0, 40.0, true};
// PDD below 1 % does not occur within 50 cm of water for megavoltage beams; a table typed as
// fractions of 1 falls below it.
constexpr Range pdd_range{1.0, 100.0 * (1.0 + normalisation_tolerance_percent / 100.0), true};
constexpr Range tmr_range{0.0, 1.05, false};
constexpr Range scatter_factor_range{0.7, 1.3, true};
constexpr Range oar_range{0.0, 1.3, false};
constexpr Range wedge_range{0.1, 1.0, true};

bool inside(const Range& range, double value) {
  const bool above_min = range.min_inclusive ? value >= range.min_value : value > range.min_value;
  return above_min && value <= range.max_value;
}

std::string num(double value, int decimals = 4) {
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

std::string range_text(const Range& range) {
  return std::string{range.min_inclusive ? "[" : "("} + num(range.min_value) + ", " + num(range.max_value) +
         "]";
}

class Checker {
 public:
  Checker(const Machine& machine, const std::map<std::string, TableLines>& lines, PhysicsFindings& findings)
      : machine_(machine), lines_(lines), findings_(findings) {}

  void add(const std::string& table_file, const std::string& quantity, std::optional<std::size_t> row,
           std::optional<std::size_t> column, std::string message, Severity severity = Severity::error) {
    findings_.problems.push_back(Problem{problem_path(machine_, table_file), std::nullopt, row, column,
                                         quantity, std::move(message), severity});
  }

  [[nodiscard]] const TableLines* lines_of(const std::string& table_file) const {
    const auto it = lines_.find(problem_path(machine_, table_file));
    return it == lines_.end() ? nullptr : &it->second;
  }
  // File line of a data row, and of the header.
  [[nodiscard]] std::optional<std::size_t> row_line(const std::string& table_file, std::size_t r) const {
    const TableLines* l = lines_of(table_file);
    if (l == nullptr || r >= l->row_lines.size()) return std::nullopt;
    return l->row_lines[r];
  }
  [[nodiscard]] std::optional<std::size_t> header_line(const std::string& table_file) const {
    const TableLines* l = lines_of(table_file);
    if (l == nullptr) return std::nullopt;
    return l->header_line;
  }

  void check_table(const Table2D& t, const Range& row_range, const Range& column_range,
                   const Range& value_range) {
    for (std::size_t r = 0; r < t.rows().size(); ++r) {
      if (!inside(row_range, t.rows()[r]))
        add(t.file(), t.quantity(), row_line(t.file(), r), 1,
            t.row_axis_name() + " " + num(t.rows()[r]) + " outside the plausible range " +
                range_text(row_range));
    }
    for (std::size_t c = 0; c < t.columns().size(); ++c) {
      if (!inside(column_range, t.columns()[c]))
        add(t.file(), t.quantity(), header_line(t.file()), c + 2,
            t.column_axis_name() + " " + num(t.columns()[c]) + " outside the plausible range " +
                range_text(column_range));
    }
    for (std::size_t r = 0; r < t.rows().size(); ++r) {
      for (std::size_t c = 0; c < t.columns().size(); ++c) {
        if (!inside(value_range, t.cell(r, c)))
          add(t.file(), t.quantity(), row_line(t.file(), r), c + 2,
              t.quantity() + " " + num(t.cell(r, c)) + " outside the plausible range " +
                  range_text(value_range));
      }
    }
  }

  void check_table(const Table1D& t, const Range& axis_range, const Range& value_range) {
    for (std::size_t i = 0; i < t.axis().size(); ++i) {
      if (!inside(axis_range, t.axis()[i]))
        add(t.file(), t.quantity(), row_line(t.file(), i), 1,
            t.axis_name() + " " + num(t.axis()[i]) + " outside the plausible range " +
                range_text(axis_range));
      if (!inside(value_range, t.values()[i]))
        add(t.file(), t.quantity(), row_line(t.file(), i), 2,
            t.quantity() + " " + num(t.values()[i]) + " outside the plausible range " +
                range_text(value_range));
    }
  }

  // Every column of a two-axis table equals `expected` at row value `at_row` (beamdata/FORMAT.md).
  void check_row_normalisation(const Table2D& t, double at_row, double expected, const std::string& what) {
    for (std::size_t c = 0; c < t.columns().size(); ++c) {
      const Lookup l = t.at(at_row, t.columns()[c]);
      const AxisBracket& rb = l.axes.front();
      const std::optional<std::size_t> row =
          row_line(t.file(), rb.upper_weight < 0.5 ? rb.lower_index : rb.upper_index);
      if (l.extrapolated()) {
        add(t.file(), t.quantity(), row, c + 2,
            what + ": " + t.row_axis_name() + " " + num(at_row) + " lies outside the table");
        return;
      }
      const double deviation_percent = 100.0 * (l.value - expected) / expected;
      if (std::abs(deviation_percent) > normalisation_tolerance_percent) {
        const bool at_node = rb.lower_index == rb.upper_index;
        add(t.file(), t.quantity(), row, c + 2,
            what + ": " + num(l.value) + (at_node ? "" : " (interpolated)") + " at " + t.row_axis_name() +
                " " + num(at_row) + ", field " + num(t.columns()[c]) + " cm, expected " + num(expected) +
                " within " + num(normalisation_tolerance_percent) + " %");
      }
    }
  }

  // A one-axis table equals 1 at 10 cm (beamdata/FORMAT.md).
  void check_unit_at_ten(const Table1D& t) {
    const Lookup l = t.at(10.0);
    const AxisBracket& b = l.axes.front();
    const std::optional<std::size_t> row =
        row_line(t.file(), b.upper_weight < 0.5 ? b.lower_index : b.upper_index);
    if (l.extrapolated()) {
      add(t.file(), t.quantity(), row, 1, "the table does not cover the 10 cm reference field");
      return;
    }
    if (std::abs(100.0 * (l.value - 1.0)) > normalisation_tolerance_percent)
      add(t.file(), t.quantity(), row, 2,
          t.quantity() + "(10) = " + num(l.value) + ", expected 1 within " +
              num(normalisation_tolerance_percent) + " %");
  }

  // OAR on the central axis is 1 by definition; checked where the table has an off-axis 0 column.
  void check_oar_on_axis(const Table2D& t) {
    if (t.columns().empty() || t.columns().front() != 0.0) return;
    for (std::size_t r = 0; r < t.rows().size(); ++r) {
      if (std::abs(100.0 * (t.cell(r, 0) - 1.0)) > normalisation_tolerance_percent)
        add(t.file(), t.quantity(), row_line(t.file(), r), 2,
            "oar on the central axis is " + num(t.cell(r, 0)) + ", expected 1 within " +
                num(normalisation_tolerance_percent) + " %");
    }
  }

  // Measured TMR against TMR derived from PDD and Sp (DEVELOPERS.md, "Physics") at depths >= dmax; the
  // build-up region is left out because electron contamination breaks the relation there
  // (common practice, no source).
  void check_consistency(const BeamData& beam) {
    const auto comparisons =
        compare_tmr(beam.tmr, beam.pdd, beam.sp, beam.pdd_ssd_cm, beam.dmax_cm, beam.dmax_cm);
    for (const auto& c : comparisons) {
      if (c.extrapolated) {
        ++findings_.consistency_nodes_skipped;
        continue;
      }
      ++findings_.consistency_nodes_compared;
      if (std::abs(c.difference_percent) > consistency_tolerance_percent) {
        add(beam.tmr.file(), "tmr", row_line(beam.tmr.file(), c.row_index), c.column_index + 2,
            "PDD->TMR relation: tmr " + num(c.measured_tmr) + " at depth " + num(c.depth_cm) + " cm, field " +
                num(c.field_at_depth_cm) + " cm differs by " + num(c.difference_percent, 2) + " % from " +
                num(c.derived_tmr) + " derived from " + beam.pdd.file() + " and " + beam.sp.file() +
                " (tolerance " + num(consistency_tolerance_percent) + " %)",
            Severity::warning);
      }
    }
  }

  void check_beam(const BeamData& beam) {
    check_table(beam.pdd, depth_range, field_range, pdd_range);
    check_table(beam.tmr, depth_range, field_range, tmr_range);
    check_table(beam.sc, field_range, scatter_factor_range);
    check_table(beam.sp, field_range, scatter_factor_range);
    check_row_normalisation(beam.pdd, beam.dmax_cm, 100.0, "pdd at dmax");
    check_row_normalisation(beam.tmr, beam.dmax_cm, 1.0, "tmr at dmax");
    check_unit_at_ten(beam.sc);
    check_unit_at_ten(beam.sp);
    if (beam.oar) {
      check_table(*beam.oar, depth_range, off_axis_range, oar_range);
      check_oar_on_axis(*beam.oar);
    }
    for (const auto& wedge : beam.wedges) {
      if (wedge.table) check_table(*wedge.table, depth_range, field_range, wedge_range);
    }
    check_consistency(beam);
  }

 private:
  const Machine& machine_;
  const std::map<std::string, TableLines>& lines_;
  PhysicsFindings& findings_;
};

}  // namespace

PhysicsFindings check_physics(const Library& library, const std::map<std::string, TableLines>& lines) {
  PhysicsFindings findings;
  for (const auto& machine : library.machines) {
    Checker checker(machine, lines, findings);
    for (const auto& beam : machine.beams) checker.check_beam(beam);
  }
  return findings;
}

}  // namespace detail

std::size_t ValidationReport::error_count() const {
  return static_cast<std::size_t>(std::count_if(
      problems.begin(), problems.end(), [](const Problem& p) { return p.severity == Severity::error; }));
}

std::size_t ValidationReport::warning_count() const { return problems.size() - error_count(); }

ValidationReport validate_library(const std::filesystem::path& folder) {
  detail::Inspection inspection = detail::inspect_library(folder);
  ValidationReport report;
  report.problems = std::move(inspection.problems);
  report.sha256_hex = inspection.sha256_hex;
  report.machine_count = inspection.machine_count;
  report.beam_count = inspection.beam_count;
  {
    // Physics rules run on every machine that could be read, even when another could not.
    detail::PhysicsFindings physics = detail::check_physics(inspection.library, inspection.lines);
    report.problems.insert(report.problems.end(), physics.problems.begin(), physics.problems.end());
    report.consistency_nodes_compared = physics.consistency_nodes_compared;
    report.consistency_nodes_skipped = physics.consistency_nodes_skipped;
  }
  return report;
}

}  // namespace countersign::beamdata
