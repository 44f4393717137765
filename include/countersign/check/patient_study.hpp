#pragma once

// The patient's CT study in a check: made once per plan from a loaded study (or the problem that
// kept it from loading) and the library's CT-number-to-density table, then handed to check_plan
// through CheckOptions. The CLI (`check --study`) and a service with a study store both use it.
// Also the verdict rules that only a CT makes possible: plan versus CT geometry, missing tissue,
// and whether the ray is heterogeneous.

#include <countersign/beamdata/library.hpp>
#include <countersign/check/reason.hpp>
#include <countersign/check/tolerance_policy.hpp>
#include <countersign/engine/beam_dose.hpp>
#include <countersign/patient/patient_model.hpp>
#include <countersign/study/problem.hpp>
#include <countersign/study/study.hpp>

#include <memory>
#include <optional>
#include <string>

namespace countersign::check {

// What a check says about the study it used (JSON `patient`, text, record).
struct StudyUsed {
  bool present = false;            // a study was given to the check (loaded or not)
  std::optional<Finding> problem;  // it could not be used: every beam is not checked (study_unusable)
  std::string ct_series_uid;
  std::string structure_set_uid;
  std::string body_source;    // "rtstruct_external" | "ct_threshold"
  std::string density_table;  // the library's ct/*.csv used
  // Why no study was used, when none was (said in every output).
  std::string note = "no CT study was given: homogeneous water with the plan's depths";
};

// A loaded study and its patient model (owns both; must outlive the checks that use it).
class PatientStudy {
 public:
  // The study as the reader gave it; a problem (or a library without a CT table) makes every beam
  // not checked, never a fall-back to water.
  static PatientStudy from(study::Result<study::Study> loaded, const beamdata::Library& library);
  // No study for the plan: computed in water with the plan's depths, and `note` says why.
  static PatientStudy none(std::string note);

  [[nodiscard]] const StudyUsed& used() const { return used_; }
  [[nodiscard]] const patient::PatientModel* model() const { return model_.get(); }

 private:
  StudyUsed used_;
  std::unique_ptr<study::Study> study_;
  std::unique_ptr<patient::PatientModel> model_;
};

// Hands the study to a check: the engine's patient model, the body outline for sector rays
// (engine::outline_radius_from) and what the outputs say about the study.
struct CheckOptions;
void use_study(CheckOptions& options, const PatientStudy& study);

// True when the ray crosses at least the policy's path of tissue whose density differs from water
// by more than the policy's threshold.
[[nodiscard]] bool ray_is_heterogeneous(const engine::CtRay& ray, const TolerancePolicy& policy);

// Missing tissue above the policy fraction: not checked (in any part). A part by sector integration
// whose rays end at the body outline is held to patient_max_missing_tissue_fraction_sectors for the
// fraction outside the body; everything else (equivalent square, the fraction outside the CT) to
// patient_max_missing_tissue_fraction.
[[nodiscard]] std::optional<Finding> missing_tissue_finding(const engine::BeamDose& c,
                                                            const TolerancePolicy& policy);

// The plan's SSD, dose point SSD, depth and equivalent depth against the CT's (control point 0);
// the first beyond the policy limits.
[[nodiscard]] std::optional<Finding> plan_versus_ct_finding(const engine::BeamDose& c,
                                                            const TolerancePolicy& policy);

}  // namespace countersign::check
