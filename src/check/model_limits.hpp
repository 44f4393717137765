#pragma once

// Verdict honesty rules (issue 12): whether the plan's distances agree with each other, and whether
// the point lies where the model can describe it. Facts come from the engine (BeamDose::model, the
// depth, the fields); the reason codes and sentences are made here.

#include <countersign/check/reason.hpp>
#include <countersign/check/tolerance_policy.hpp>
#include <countersign/engine/beam_dose.hpp>

#include <optional>

namespace countersign::check {

// Plan depth + Beam Dose Point SSD against the ray length, and SSD against SPD - depth (flat
// surface), at any off-axis distance: geometry_inconsistent (outside tolerance) beyond the policy limit.
[[nodiscard]] std::optional<Finding> geometry_finding(const engine::BeamDose& c,
                                                      const TolerancePolicy& policy);

// Edges of the model (not checked): build-up region, small field, SSD outside the library's range
// or an extended distance, and the two formalisms disagreeing at the point.
[[nodiscard]] std::optional<Finding> model_edge_finding(const engine::BeamDose& c,
                                                        const TolerancePolicy& policy);

// Edges of the electron model (electron_limits.cpp, not checked): the SSD outside the beam's
// ssd_range_cm (or an extended distance without one), a cutout smaller than the tables' smallest
// field, the point beyond the depth of 80 % dose, and, with a CT, oblique incidence.
[[nodiscard]] std::optional<Finding> electron_edge_finding(const engine::BeamDose& c,
                                                           const TolerancePolicy& policy);

}  // namespace countersign::check
