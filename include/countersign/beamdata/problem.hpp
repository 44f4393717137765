#pragma once

// One finding about a beam-data library: where it is (file, manifest line or table row/column)
// and what is wrong. Validation returns a list of these; loading turns the first error into an Error.

#include <countersign/util/error.hpp>

#include <cstddef>
#include <optional>
#include <string>

namespace countersign::beamdata {

// error: the library must not be used. warning: usable, but a physicist should look (the
// PDD/TMR consistency check, whose failures can be within measurement practice).
enum class Severity { error, warning };

struct Problem {
  std::string file;                   // path as built from the folder the user gave
  std::optional<std::size_t> line;    // manifest line (1-based), for machine.toml findings
  std::optional<std::size_t> row;     // CSV row = line number in the file (1-based, comments count)
  std::optional<std::size_t> column;  // CSV column (1-based; column 1 is the row-axis value)
  std::string key;                    // manifest key or table quantity, e.g. "dmax_cm", "pdd"
  std::string message;
  Severity severity = Severity::error;

  // One line: "<file>: row R, column C: <key>: <message>" (parts that are absent are left out).
  [[nodiscard]] std::string text() const;
  // The same finding as an Error of kind bad_beamdata.
  [[nodiscard]] Error to_error() const;
};

}  // namespace countersign::beamdata
