#pragma once

// The deliberate-error self-test: every treatment beam of every given plan is checked as it stands
// and then with each injected error (error_injection.hpp). The check passes the self-test when each
// unmodified plan is within tolerance and each injected error that takes a beam beyond its
// tolerance is flagged (outside_tolerance or not_checked). A plan flagged as it stands (such as the
// demo plan with a deliberate MU error) is listed as excluded; its beams that pass still serve.

#include <countersign/beamdata/library.hpp>
#include <countersign/check/check_plan.hpp>
#include <countersign/check/error_injection.hpp>
#include <countersign/plan/plan.hpp>

#include <optional>
#include <string>
#include <vector>

namespace countersign::check {

// One line of the self-test: an unmodified plan (no error) or one error in one beam.
struct SelfTestRow {
  std::string plan_file;
  int fraction_group_number = 0;
  int beam_number = 0;  // 0 for an unmodified-plan row
  std::string beam_name;
  std::optional<InjectedError> error;       // nullopt: the unmodified plan
  std::string change;                       // what was changed
  Status status = Status::not_checked;      // the beam's (or, unmodified, the plan's) status
  std::string reason;                       // the check's sentence
  std::optional<double> deviation_percent;  // as the check reported it
  std::optional<double> tolerance_percent;
  std::optional<double> expected_deviation_percent;  // from the baseline and a known ratio change
  bool must_flag = false;                            // the error takes the beam beyond its tolerance
  bool passed = false;
  bool excluded = false;  // an unmodified plan flagged as it stands: no baseline
  std::string verdict;    // one sentence: why passed or failed
};

struct SelfTestReport {
  std::vector<SelfTestRow> rows;
  std::size_t failures = 0;
  [[nodiscard]] bool passed() const { return failures == 0 && !rows.empty(); }
};

// Runs the self-test over `plans` (already read) with `library` and `options`.
[[nodiscard]] SelfTestReport run_self_test(const std::vector<plan::Plan>& plans,
                                           const beamdata::Library& library, const CheckOptions& options);

}  // namespace countersign::check
