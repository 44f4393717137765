#pragma once

// `countersign explain`: one beam in depth. Every factor with its provenance, the geometry, both
// formalisms side by side (by calling the engine again with each method) and what single change of
// depth, SSD or field size would reconcile the independent dose with the planned dose.

#include <countersign/check/check_plan.hpp>
#include <countersign/engine/point_dose.hpp>
#include <countersign/engine/sensitivity.hpp>

#include <nlohmann/json.hpp>

#include <optional>
#include <string>
#include <vector>

namespace countersign::report {

// The beam summed over its parts with one formalism.
struct FormalismDose {
  engine::Method method = engine::Method::tmr;
  double dose_cgy = 0.0;
  engine::PointDose first_part;  // the factors of the first part that delivers dose at the point
};

struct BeamExplanation {
  std::vector<engine::DoseInputs> parts;  // inputs of every part that delivers dose at the point
  std::optional<FormalismDose> tmr;
  std::optional<FormalismDose> pdd;
  std::optional<double> formalism_difference_percent;  // 100 (PDD form - TMR form) / TMR form
  std::optional<engine::Sensitivity> sensitivity;
  std::string sensitivity_note;  // why there is no sensitivity section, if there is none
};

// One line for a reconciliation: the change that alone reconciles the doses, or the range searched.
[[nodiscard]] std::string reconciliation_sentence(const engine::Reconciliation& reconciliation);

[[nodiscard]] BeamExplanation explain_beam(const check::BeamCheck& beam,
                                           const engine::SensitivityLimits& limits = {});

// The beam of `check` with this number (first fraction group that has it, or the given group).
[[nodiscard]] const check::BeamCheck* find_beam(const check::PlanCheck& check, int beam_number,
                                                std::optional<int> fraction_group = std::nullopt);

[[nodiscard]] nlohmann::json explanation_to_json(const check::PlanCheck& check, const check::BeamCheck& beam,
                                                 const BeamExplanation& explanation);

[[nodiscard]] std::string explanation_text(const check::PlanCheck& check, const check::BeamCheck& beam,
                                           const BeamExplanation& explanation);

}  // namespace countersign::report
