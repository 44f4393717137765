#pragma once

// The self-test's own plans, made for whatever library it is given: for every machine and photon
// energy an isocentric and a fixed-SSD field on the axis, an isocentric field with the point off
// the axis, a static MLC field, a step-and-shoot beam and an arc, and one field with each wedge and
// each block tray of the beam. Water phantom with a flat surface; every distance the plan states
// agrees with the others. The planned Beam Dose is left absent: the self-test fills it.

#include <countersign/beamdata/library.hpp>
#include <countersign/plan/plan.hpp>

#include <string>
#include <vector>

namespace countersign::check {

struct SyntheticPlan {
  std::string name;  // e.g. "FERN-LINAC-1 6X isocentric off axis"
  plan::Plan plan;   // one fraction group, one beam (number 1)
};

[[nodiscard]] std::vector<SyntheticPlan> synthetic_plans(const beamdata::Library& library);

// The Wedge Type (300A,00D3) a plan gives the library's wedge: STANDARD (physical) or DYNAMIC.
[[nodiscard]] const char* wedge_type(const beamdata::WedgeData& wedge);

// A block on the tray `tray_id` that shields nothing: a 1 cm square far outside any field (30 cm off
// axis), transmission 5 %, so that the tray (and its factor) is in the beam and the field is not.
[[nodiscard]] plan::Block tray_marker_block(const std::string& tray_id);

}  // namespace countersign::check
