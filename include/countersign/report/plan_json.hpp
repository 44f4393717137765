#pragma once

// The plan model as JSON, for `countersign show --json` (keys documented in the README).
// Every key carries its unit; an absent value is null, never 0.

#include <countersign/plan/plan.hpp>

#include <nlohmann/json.hpp>

namespace countersign::report {

// One plan: {"source_file", "plan", "patient_setups", "dose_references", "fraction_groups", "beams"}.
[[nodiscard]] nlohmann::json plan_to_json(const plan::Plan& plan);

}  // namespace countersign::report
