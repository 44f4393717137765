#pragma once

// The deliberate-error self-test (AAPM TG-114 (2011) advises testing a verification program with
// known errors). It makes its own plans for the library it is given (synthetic_plans.hpp), writes
// each with the product's DICOM writer and reads it back (the caller's round trip), checks it as it
// stands (it must pass: the planned Beam Dose is the computed one), then injects errors of known
// size (error_injection.hpp). Whether an error must be flagged follows from its size and the policy
// by a rule written down per kind (README, "selftest"), never from the check's verdict:
//   meterset, beam_dose  the deviation the error makes by definition beyond the beam's tolerance
//   ssd, depth, point_position, patient_position
//                        the plan's distances disagree by more than geometry_consistency_max_mm
//   energy, wedge, tray, jaw
//                        the change of dose the library's own factors give through the TG-71
//                        formula with the baseline's inputs beyond the tolerance; an energy, wedge
//                        or tray the library lacks must be flagged always
// The self-test fails when an error that must be flagged passes, when a clean plan is flagged, or
// when no error could be injected. It reports the smallest size of each kind it flagged.

#include <countersign/beamdata/library.hpp>
#include <countersign/check/check_plan.hpp>
#include <countersign/check/error_injection.hpp>
#include <countersign/plan/plan.hpp>
#include <countersign/util/error.hpp>

#include <functional>
#include <optional>
#include <string>
#include <vector>

namespace countersign::check {

// Writes a plan as a DICOM file and reads it back (the CLI passes the dicom module's writer and reader).
using PlanRoundTrip = std::function<Expected<plan::Plan>(const plan::Plan&)>;

struct SelfTestRow {
  std::string case_name;                // the synthetic plan
  std::optional<InjectedError> error;   // nullopt: the clean plan
  std::string change;                   // what was changed
  Status status = Status::not_checked;  // the beam's status
  std::string reason_code;
  std::string reason;  // the check's sentence
  std::optional<double> deviation_percent;
  std::optional<double> tolerance_percent;
  std::optional<double> expected_deviation_percent;  // from the rule, where the rule has a size
  bool must_flag = false;
  std::string rule;  // why must_flag is what it is
  bool passed = false;
  bool excluded = false;  // a clean plan the library cannot check (e.g. no OAR table): no errors injected
  std::string verdict;
};

// The smallest error of one kind the check flagged, among the sizes tried.
struct Sensitivity {
  ErrorKind kind = ErrorKind::meterset;
  int injected = 0;
  int flagged = 0;
  std::optional<double> smallest_flagged;  // |size| in size_unit(kind); discrete kinds: nullopt
  std::optional<double> largest_missed;    // the largest |size| not flagged (within its rule)
};

struct SelfTestReport {
  std::string library_root;
  std::string library_sha256;
  std::vector<SelfTestRow> rows;
  std::vector<Sensitivity> sensitivity;
  std::size_t failures = 0;
  std::size_t clean_plans = 0;
  std::size_t injected = 0;
  [[nodiscard]] bool passed() const { return failures == 0 && injected > 0 && clean_plans > 0; }
};

[[nodiscard]] SelfTestReport run_self_test(const beamdata::Library& library, const CheckOptions& options,
                                           const PlanRoundTrip& round_trip);

// The sizes tried for each kind (percent or mm; one 0 for discrete kinds).
[[nodiscard]] std::vector<double> sizes_tried(ErrorKind kind);

}  // namespace countersign::check
