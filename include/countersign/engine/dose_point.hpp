#pragma once

// Which point a beam is checked at, and which depth is used there.

#include <countersign/plan/plan.hpp>

#include <optional>
#include <string>
#include <string_view>

namespace countersign::engine {

enum class DosePointSource {
  beam_dose_specification_point,  // the retired Beam Dose Specification Point (300A,0082)
  full_coefficient_reference,     // the dose reference whose final cumulative coefficient is 1 for the beam
  single_dose_reference,          // the plan's only dose reference with coordinates
  dose_reference,                 // a dose reference the beam contributes to (for per-reference totals)
};
[[nodiscard]] std::string_view to_code(DosePointSource source);

struct DosePoint {
  plan::PointMm point_mm{};
  DosePointSource source = DosePointSource::beam_dose_specification_point;
  std::optional<int> dose_reference_number;  // set unless the source is the specification point
};

// The beam's dose point in the order: specification point; reference with final coefficient 1;
// the single reference with coordinates. nullopt when none applies.
[[nodiscard]] std::optional<DosePoint> select_dose_point(const plan::Plan& plan, const plan::Beam& beam,
                                                         const plan::ReferencedBeam& referenced);

// Which depth the user wants from the plan.
enum class DepthChoice { planned, equivalent };
[[nodiscard]] std::string_view to_code(DepthChoice choice);

// Where the depth came from: one of the three DICOM layouts, or derived by a stated method.
enum class DepthSource {
  referenced_beam_item,         // Beam Dose Point Depth in the fraction group's Referenced Beam item
  fraction_verification_item,   // in its Beam Dose Verification Control Point Sequence (300A,008C)
  beam_dose_reference_item,     // in the beam's Referenced Dose Reference item (300C,0050)
  derived_from_dose_point_ssd,  // ray length to the point minus Beam Dose Point SSD (300A,008A)
  derived_spd_minus_ssd,        // SPD − SSD of control point 0, flat surface
  ct_geometric,                 // along the ray through the CT, entry into the body to the point
  ct_radiological,              // the same ray, lengths weighted by relative electron density
};
[[nodiscard]] std::string_view to_code(DepthSource source);

// The plan's distances that belong to this dose point, and which layout held them; nullptr when
// the plan has none for it.
struct PlanDistances {
  const plan::DosePointDistances* distances = nullptr;
  DepthSource layout = DepthSource::referenced_beam_item;
};
[[nodiscard]] PlanDistances plan_distances_for(const plan::Beam& beam, const plan::ReferencedBeam& referenced,
                                               const DosePoint& point);

}  // namespace countersign::engine
