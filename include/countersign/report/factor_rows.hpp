#pragma once

// The factors of one point-dose calculation in formula order, named once for every report
// (HTML record, `explain` text and JSON), with their provenance in words.

#include <countersign/beamdata/table.hpp>
#include <countersign/engine/point_dose.hpp>

#include <string>
#include <vector>

namespace countersign::report {

struct FactorRow {
  std::string key;   // JSON key: "sc", "sp", "tmr", "pdd", "mayneord_f", "oar", "wedge", ...
  std::string name;  // words with the symbol, e.g. "Collimator scatter Sc(s_c)"
  std::string role;  // "multiplies" or "divides" (the calibration-depth term divides the output)
  const engine::Factor* factor = nullptr;  // points into the PointDose passed in
};

// Factors the formula of `dose.method` uses, in order; with all_factors, also those that are
// not applicable to this beam (value 1).
enum class FactorSelection { used, all_factors };
[[nodiscard]] std::vector<FactorRow> factor_rows(const engine::PointDose& dose,
                                                 FactorSelection selection = FactorSelection::used);

// "depth_cm 15.00 between nodes 15 and 20 (weight 0.00 on 20); field_cm 11.82 between ..."; marks
// an axis outside its table with "OUTSIDE THE TABLE".
[[nodiscard]] std::string describe_lookup(const beamdata::Lookup& lookup);

// The basis in words: "interpolated in <file>", "constant from machine.toml", "formula", ...
[[nodiscard]] std::string describe_basis(const engine::Factor& factor);

}  // namespace countersign::report
