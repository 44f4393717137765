#pragma once

// The sentences about one calculation, written here from the engine's facts (the engine writes
// none): the reason code and sentence for what stopped it, why a formalism was used, where the depth
// came from, and the approximations it made. Reports print these; they word nothing themselves.

#include <countersign/check/reason.hpp>
#include <countersign/engine/beam_dose.hpp>
#include <countersign/engine/problem.hpp>

#include <optional>
#include <string>
#include <vector>

namespace countersign::check {

struct CalculationWords {
  std::optional<Finding> problem;  // what stopped the calculation, when something did
  std::string method_reason;       // why the formalism used; empty when no formalism was chosen
  std::string depth_description;   // where the depth came from; empty when no depth was found
  std::string medium;              // the medium the dose assumes, in words
  std::vector<std::string> approximations;
};

// The reason code and sentence for a problem: missing plan data, unsupported radiation, ...
[[nodiscard]] Finding finding_for(const engine::CalculationProblem& problem);

[[nodiscard]] std::string depth_description(const engine::DepthUsed& depth);
// "homogeneous water with the plan's depths", "radiological depth from the CT ...", "equivalent depth
// from the plan (not independent) ...".
[[nodiscard]] std::string medium_description(const engine::BeamDose& dose);
[[nodiscard]] std::string method_reason(const engine::BeamDose& dose);
[[nodiscard]] std::string approximation_sentence(const engine::Approximation& approximation,
                                                 const engine::BeamDose& dose);

// All of the above for one calculation.
[[nodiscard]] CalculationWords describe_calculation(const engine::BeamDose& dose);

}  // namespace countersign::check
