#pragma once

// The one-plan pipeline: every beam of every fraction group recomputed at its dose point, compared
// with the planned beam dose under the tolerance policy, plus per-dose-reference totals. This is
// the entry point the CLI, the folder watcher and the DICOM receiver all call; reports (text,
// JSON, HTML, `explain`) are written from the values it returns and need nothing else.
//
// Safety (DEVELOPERS.md, "Safety"): a beam is within_tolerance only when its dose was computed, every factor
// came from the tables without extrapolation, every geometric input was in the plan or derived by a
// stated method, and the deviation is within the policy's tolerance. Anything else is
// not_checked (with a reason) or outside_tolerance. Setup beams and beams without MU are skipped.

#include <countersign/beamdata/library.hpp>
#include <countersign/check/calculation_words.hpp>
#include <countersign/check/patient_study.hpp>
#include <countersign/check/reason.hpp>
#include <countersign/check/tolerance_policy.hpp>
#include <countersign/engine/beam_dose.hpp>
#include <countersign/plan/plan.hpp>
#include <countersign/util/exit_code.hpp>

#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace countersign::check {

enum class Status { within_tolerance, outside_tolerance, not_checked, skipped };
[[nodiscard]] std::string_view to_code(Status status);

struct CheckOptions {
  engine::EngineOptions engine;  // engine.patient: the study's model (use_study), or nullptr
  TolerancePolicy policy = default_policy();
  StudyUsed study;  // what the outputs say about the patient's study (use_study)
};

struct BeamCheck {
  int fraction_group_number = 0;
  int beam_number = 0;
  std::string beam_name;
  Status status = Status::not_checked;
  Finding reason;  // code and sentence, for every status
  std::optional<double> meterset_mu;
  std::optional<double> planned_dose_gy;           // Beam Dose (300A,0084)
  std::optional<double> computed_dose_gy;          // set whenever the engine computed a dose
  std::optional<double> deviation_percent;         // 100 (computed - planned) / planned
  std::optional<double> tolerance_percent;         // from the policy for this beam's category
  std::optional<double> independent_mu;            // the MU this calculation needs for the planned dose
  std::optional<double> calc_uncertainty_percent;  // estimated standard uncertainty of the computed dose
  std::optional<FieldCategory> category;
  Medium medium = Medium::homogeneous;
  std::optional<double> point_total_planned_dose_gy;  // all beams of the fraction group at this point
  std::optional<engine::BeamDose> calculation;        // absent when no calculation was attempted
  CalculationWords words;  // the calculation's sentences (method, depth, approximations), for reports
};

// One beam's part of a dose reference total.
struct Contribution {
  int beam_number = 0;
  double coefficient = 0.0;                // final Cumulative Dose Reference Coefficient (300A,010C)
  double planned_dose_gy = 0.0;            // Beam Dose x coefficient
  std::optional<double> computed_dose_gy;  // this beam's computed dose at the reference point
  std::optional<Finding> problem;          // why it could not be computed
};

struct DoseReferenceCheck {
  int fraction_group_number = 0;
  int number = 0;  // Dose Reference Number (300A,0012)
  std::string description;
  std::optional<plan::PointMm> point_mm;
  double planned_dose_gy = 0.0;            // sum of the contributions
  std::optional<double> computed_dose_gy;  // set only when every contribution was computed
  std::optional<double> deviation_percent;
  std::vector<Contribution> contributions;
  std::string note;  // why there is no computed total, if there is none
};

struct PlanCheck {
  std::string source_file;
  std::string sop_instance_uid;
  std::string patient_id;
  std::string patient_name;
  std::string plan_label;
  std::string approval_status;
  std::vector<std::string> warnings;  // the reader's (text it could not decode), shown with every report
  Status status = Status::not_checked;
  Finding reason;
  std::vector<BeamCheck> beams;
  std::vector<DoseReferenceCheck> dose_references;
  std::string beamdata_root;
  std::string beamdata_sha256;
  CheckOptions options;  // what the check ran with (policy included)

  // 0 within, 1 outside, 2 not checked (README, "Exit codes").
  [[nodiscard]] ExitCode exit_code() const;

  struct BeamCounts {
    int within = 0, outside = 0, not_checked = 0, skipped = 0;
  };
  // How many beams ended in each status.
  [[nodiscard]] BeamCounts beam_counts() const;
};

[[nodiscard]] PlanCheck check_plan(const plan::Plan& plan, const beamdata::Library& library,
                                   const CheckOptions& options);

// The verdict for one computed beam (exposed for tests and for `explain`): sets status, reason,
// deviation, tolerance, category and independent MU from beam.calculation and beam.planned_dose_gy.
void judge_beam(BeamCheck& beam, const TolerancePolicy& policy);

}  // namespace countersign::check
