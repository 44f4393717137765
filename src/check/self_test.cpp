#include <countersign/check/self_test.hpp>

#include <fmt/format.h>

#include <algorithm>
#include <cmath>

namespace countersign::check {

namespace {

// The check reports the same deviation the known error predicts, to this many percentage points
// (the computed dose is linear in MU; only rounding differs).
constexpr double linearity_tolerance_points = 0.01;

bool flagged(Status status) { return status == Status::outside_tolerance || status == Status::not_checked; }

const BeamCheck* find_beam(const PlanCheck& check, int group_number, int beam_number) {
  const auto it = std::find_if(check.beams.begin(), check.beams.end(), [&](const BeamCheck& b) {
    return b.fraction_group_number == group_number && b.beam_number == beam_number;
  });
  return it == check.beams.end() ? nullptr : &*it;
}

SelfTestRow unmodified_row(const plan::Plan& plan, const PlanCheck& check) {
  SelfTestRow row;
  row.plan_file = plan.source_file;
  row.change = "none (the plan as exported)";
  row.status = check.status;
  row.reason = check.reason.sentence;
  row.passed = check.status == Status::within_tolerance;
  row.excluded = !row.passed;
  row.verdict = row.passed ? "the unmodified plan passes"
                           : "excluded: flagged as it stands (" + check.reason.sentence +
                                 "); only its beams within tolerance serve as baselines";
  return row;
}

// The point-total rule of the policy: a beam giving less than small_share_fraction of its point's
// planned dose is judged against that total. Returns the deviation as a percentage of the total
// when the rule applies to a beam with these doses, else nullopt.
std::optional<double> small_share_deviation(double computed_gy, double planned_gy, double total_gy,
                                            const TolerancePolicy& policy) {
  if (!(total_gy > 0.0) || planned_gy / total_gy >= policy.small_share_fraction) return std::nullopt;
  return 100.0 * (computed_gy - planned_gy) / total_gy;
}

// Fills must_flag, passed and verdict of an injected-error row from the beam's check results.
void judge_row(SelfTestRow& row, const BeamCheck& baseline, const BeamCheck& modified,
               const TolerancePolicy& policy) {
  const double tolerance = baseline.tolerance_percent.value_or(0.0);
  row.tolerance_percent = baseline.tolerance_percent;
  const std::optional<double> known = known_ratio_change(*row.error);
  std::string rule_note;
  if (known && baseline.deviation_percent && baseline.computed_dose_gy && baseline.planned_dose_gy) {
    const double expected = 100.0 * ((1.0 + *baseline.deviation_percent / 100.0) * (1.0 + *known) - 1.0);
    row.expected_deviation_percent = expected;
    row.must_flag = std::abs(expected) > tolerance;
    // The same doses the check will see: MU errors scale the computed dose, dose edits the planned.
    const bool dose_edit = *row.error == InjectedError::beam_dose_plus_10_percent;
    const double planned = dose_edit ? *baseline.planned_dose_gy / (1.0 + *known) : *baseline.planned_dose_gy;
    const double computed =
        dose_edit ? *baseline.computed_dose_gy : *baseline.computed_dose_gy * (1.0 + *known);
    const double total =
        baseline.point_total_planned_dose_gy.value_or(0.0) + (planned - *baseline.planned_dose_gy);
    if (const auto of_total = small_share_deviation(computed, planned, total, policy);
        of_total && std::abs(*of_total) <= tolerance) {
      row.must_flag = false;
      rule_note = fmt::format(
          " (a small contributor: {:+.2f} % of its point's total dose, judged against that total "
          "by the policy)",
          *of_total);
    }
  } else {
    // The size depends on beam data and geometry: it must be flagged unless the recomputed dose
    // shows it stays within the beam's tolerance (or, for a small contributor, the point total's).
    row.must_flag = !(modified.status == Status::within_tolerance && modified.deviation_percent);
    if (!row.must_flag && baseline.deviation_percent) {
      rule_note =
          fmt::format(" (it moves the computed-to-planned ratio by {:+.2f} %{})",
                      *modified.deviation_percent - *baseline.deviation_percent,
                      modified.reason.reason == Reason::deviation_within_tolerance_of_point_total
                          ? "; a small contributor, judged against its point's total dose by the policy"
                          : "");
    }
  }
  const bool is_flagged = flagged(modified.status);
  if (row.must_flag && !is_flagged) {
    row.passed = false;
    row.verdict = "MISSED: the error takes the beam beyond tolerance but the check passed it";
    return;
  }
  if (row.expected_deviation_percent && modified.deviation_percent &&
      std::abs(*modified.deviation_percent - *row.expected_deviation_percent) > linearity_tolerance_points) {
    row.passed = false;
    row.verdict = fmt::format("WRONG SIZE: the check reports {:+.2f} % where the known error gives {:+.2f} %",
                              *modified.deviation_percent, *row.expected_deviation_percent);
    return;
  }
  if (!row.must_flag && is_flagged && row.expected_deviation_percent) {
    row.passed = false;
    row.verdict = "FALSE ALARM: the known error stays within tolerance but the check flagged it";
    return;
  }
  row.passed = true;
  row.verdict = (row.must_flag ? "caught" : "within tolerance: correctly not flagged") + rule_note;
}

}  // namespace

SelfTestReport run_self_test(const std::vector<plan::Plan>& plans, const beamdata::Library& library,
                             const CheckOptions& options) {
  SelfTestReport report;
  for (const plan::Plan& plan : plans) {
    const PlanCheck baseline = check_plan(plan, library, options);
    report.rows.push_back(unmodified_row(plan, baseline));
    for (const BeamCheck& beam : baseline.beams) {
      // Only a beam that passes as it stands can show that an error makes it fail.
      if (beam.status != Status::within_tolerance) continue;
      for (const InjectedError error : all_injected_errors) {
        std::optional<Injection> injection =
            inject_error(plan, beam.fraction_group_number, beam.beam_number, error, library);
        if (!injection) continue;
        const PlanCheck modified = check_plan(injection->plan, library, options);
        SelfTestRow row;
        row.plan_file = plan.source_file;
        row.fraction_group_number = beam.fraction_group_number;
        row.beam_number = beam.beam_number;
        row.beam_name = beam.beam_name;
        row.error = error;
        row.change = std::move(injection->description);
        const BeamCheck* after = find_beam(modified, beam.fraction_group_number, beam.beam_number);
        if (after == nullptr) {
          row.verdict = "the modified plan lost the beam";
        } else {
          row.status = after->status;
          row.reason = after->reason.sentence;
          row.deviation_percent = after->deviation_percent;
          judge_row(row, beam, *after, options.policy);
        }
        report.rows.push_back(std::move(row));
      }
    }
  }
  report.failures = static_cast<std::size_t>(std::count_if(
      report.rows.begin(), report.rows.end(), [](const SelfTestRow& r) { return !r.passed && !r.excluded; }));
  return report;
}

}  // namespace countersign::check
