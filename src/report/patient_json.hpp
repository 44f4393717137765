#pragma once

// The `patient` object of a beam (and of each segment) in the check's JSON (README, "JSON"): where
// the geometry came from (CT, the plan, a flat surface), what the CT said beside the plan's values,
// the heterogeneity method and the homogeneous dose.

#include <countersign/check/check_plan.hpp>

#include <nlohmann/json.hpp>

namespace countersign::report {

[[nodiscard]] nlohmann::json beam_patient_json(const check::BeamCheck& beam, const check::StudyUsed& study);
[[nodiscard]] nlohmann::json segment_patient_json(const engine::Segment& segment);
[[nodiscard]] nlohmann::json study_json(const check::StudyUsed& study);

}  // namespace countersign::report
