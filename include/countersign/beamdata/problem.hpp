#pragma once

// One finding about a beam-data library: where it is (file, manifest line or table row/column)
// and what is wrong. Validation returns a list of these; loading turns the first error into an Error.

#include <countersign/util/error.hpp>

#include <cstddef>
#include <optional>
#include <string>
#include <vector>

namespace countersign::beamdata {

// error: the library must not be used. warning: usable, but a physicist should look (suspicious
// but valid data, such as a PDD/TMR inconsistency within what measurement practice can produce).
enum class Severity { error, warning };

struct Problem {
  std::string file;                   // path as built from the folder the user gave
  std::optional<std::size_t> line;    // manifest line (1-based), for machine.toml findings
  std::optional<std::size_t> row;     // CSV row = line number in the file (1-based, comments count)
  std::optional<std::size_t> column;  // CSV column (1-based; column 1 is the row-axis value)
  std::string key;                    // manifest key or table quantity, e.g. "dmax_cm", "pdd"
  std::string message;
  Severity severity = Severity::error;
  // The rule this finding breaks, without the cell's own values ("looks like a percentage ...");
  // findings of one file, key and rule are shown as one group. Empty: never grouped.
  std::string rule{};

  // One line: "<file>: row R, column C: <key>: <message>" (parts that are absent are left out).
  [[nodiscard]] std::string text() const;
  // The same finding as an Error of kind bad_beamdata.
  [[nodiscard]] Error to_error() const;
};

// Findings of one file, key, severity and rule, in the order first found.
struct ProblemGroup {
  std::vector<Problem> members;  // at least one

  // A single finding: its text(). Several: "<file>: <key>: <rule>: N cells: rows 5-18, column 2
  // (first: row 5, column 2: <message>)".
  [[nodiscard]] std::string text() const;
  [[nodiscard]] Severity severity() const { return members.front().severity; }
};

// Groups repeated findings; findings without a rule stay alone. Order: first occurrence.
[[nodiscard]] std::vector<ProblemGroup> group_problems(const std::vector<Problem>& problems);

}  // namespace countersign::beamdata
