#pragma once

// The project's own coding scheme for the structured result, used where no standard code fits
// (PS3.16 8.2: a designator beginning "99" is a private scheme). The README lists every code; a
// code, once published, keeps its meaning: new concepts get new codes.

#include <string_view>

namespace countersign::dicom_export {

inline constexpr std::string_view coding_scheme_designator = "99CSIGN";
inline constexpr std::string_view coding_scheme_name = "countersign independent dose check results";
inline constexpr std::string_view coding_scheme_version = "1";
inline constexpr std::string_view coding_scheme_organization = "countersign project";

struct Code {
  std::string_view value;
  std::string_view scheme;
  std::string_view meaning;
};

constexpr Code private_code(std::string_view value, std::string_view meaning) {
  return Code{value, coding_scheme_designator, meaning};
}

namespace codes {
// Document and structure.
inline constexpr Code report = private_code("CSR-0001", "Independent dose check result");
inline constexpr Code checked_plan = private_code("CSR-0002", "Checked RT plan");
inline constexpr Code plan_verdict = private_code("CSR-0003", "Plan verdict");
inline constexpr Code beam = private_code("CSR-0004", "Beam check");
inline constexpr Code beam_number = private_code("CSR-0005", "Beam number");
inline constexpr Code beam_name = private_code("CSR-0006", "Beam name");
inline constexpr Code planned_dose = private_code("CSR-0007", "Planned beam dose");
inline constexpr Code computed_dose = private_code("CSR-0008", "Independently computed beam dose");
inline constexpr Code deviation = private_code("CSR-0009", "Dose deviation");
inline constexpr Code tolerance = private_code("CSR-0010", "Dose tolerance");
inline constexpr Code beam_verdict = private_code("CSR-0011", "Beam verdict");
inline constexpr Code reason = private_code("CSR-0012", "Reason for verdict");
inline constexpr Code planned_meterset = private_code("CSR-0013", "Planned meterset");
inline constexpr Code independent_meterset = private_code("CSR-0014", "Independent meterset");
inline constexpr Code beam_data = private_code("CSR-0015", "Beam data library");
inline constexpr Code tolerance_policy = private_code("CSR-0016", "Tolerance policy");
inline constexpr Code software = private_code("CSR-0017", "Checking software");
inline constexpr Code caution = private_code("CSR-0018", "Caution");
inline constexpr Code record = private_code("CSR-0019", "Independent dose check record");
// Verdict values (the three status words, and beams listed but not judged).
inline constexpr Code within_tolerance = private_code("CSR-0101", "Within tolerance");
inline constexpr Code outside_tolerance = private_code("CSR-0102", "Outside tolerance");
inline constexpr Code not_checked = private_code("CSR-0103", "Not checked");
inline constexpr Code skipped = private_code("CSR-0104", "Skipped (setup beam or no meterset)");
// Units (UCUM, a standard scheme).
inline constexpr Code gray = Code{"Gy", "UCUM", "Gy"};
inline constexpr Code percent = Code{"%", "UCUM", "%"};
inline constexpr Code monitor_units = Code{"{MU}", "UCUM", "monitor units"};
inline constexpr Code no_units = Code{"1", "UCUM", "no units"};
}  // namespace codes

}  // namespace countersign::dicom_export
