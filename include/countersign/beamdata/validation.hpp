#pragma once

// Validation of a beam-data library folder against beamdata/FORMAT.md: structure, every table readable,
// normalisation, plausible ranges and PDD/TMR consistency. Returns every problem found, not just
// the first; load_library() refuses a library with any problem of severity error.

#include <countersign/beamdata/problem.hpp>

#include <cstddef>
#include <filesystem>
#include <string>
#include <vector>

namespace countersign::beamdata {

// Tolerances of the rules (percent). Normalisation from beamdata/FORMAT.md ("within 0.5%"); the PDD/TMR
// consistency tolerance is ours: 1 %, about the reproducibility of commissioning measurements
// (common practice, no source).
inline constexpr double normalisation_tolerance_percent = 0.5;
inline constexpr double consistency_tolerance_percent = 1.0;

struct ValidationReport {
  std::vector<Problem> problems;  // errors and warnings, in the order found
  std::string sha256_hex;         // library fingerprint; empty when no manifest was readable
  std::size_t machine_count = 0;
  std::size_t beam_count = 0;
  std::size_t consistency_nodes_compared = 0;  // TMR nodes at depth >= dmax compared with PDD + Sp
  std::size_t consistency_nodes_skipped = 0;   // nodes whose derivation would need extrapolation

  [[nodiscard]] bool clean() const { return problems.empty(); }
  [[nodiscard]] std::size_t error_count() const;
  [[nodiscard]] std::size_t warning_count() const;
};

// Validates a library folder (one sub-folder per machine) or a single machine folder.
[[nodiscard]] ValidationReport validate_library(const std::filesystem::path& folder);

}  // namespace countersign::beamdata
