#include <countersign/engine/dose_point.hpp>

#include <algorithm>
#include <cmath>

namespace countersign::engine {

std::string_view to_code(DosePointSource source) {
  switch (source) {
    case DosePointSource::beam_dose_specification_point:
      return "beam_dose_specification_point";
    case DosePointSource::full_coefficient_reference:
      return "dose_reference_full_coefficient";
    case DosePointSource::single_dose_reference:
      return "single_dose_reference";
    case DosePointSource::dose_reference:
      return "dose_reference";
  }
  return "unknown";
}

std::string_view to_code(DepthChoice choice) {
  return choice == DepthChoice::planned ? "planned" : "equivalent";
}

std::string_view to_code(DepthSource source) {
  switch (source) {
    case DepthSource::referenced_beam_item:
      return "plan_referenced_beam";
    case DepthSource::fraction_verification_item:
      return "plan_beam_dose_verification_control_point";
    case DepthSource::beam_dose_reference_item:
      return "plan_beam_dose_reference";
    case DepthSource::derived_from_dose_point_ssd:
      return "derived_ray_length_minus_dose_point_ssd";
    case DepthSource::derived_spd_minus_ssd:
      return "derived_spd_minus_ssd_flat_surface";
    case DepthSource::ct_geometric:
      return "ct_geometric";
    case DepthSource::ct_radiological:
      return "ct_radiological";
  }
  return "unknown";
}

std::optional<DosePoint> select_dose_point(const plan::Plan& plan, const plan::Beam& beam,
                                           const plan::ReferencedBeam& referenced) {
  if (referenced.dose_specification_point_mm) {
    return DosePoint{*referenced.dose_specification_point_mm, DosePointSource::beam_dose_specification_point,
                     std::nullopt};
  }
  if (!beam.control_points.empty()) {
    for (const plan::DoseReferenceCoefficient& c : beam.control_points.back().dose_reference_coefficients) {
      if (!c.cumulative_coefficient || std::abs(*c.cumulative_coefficient - 1.0) > 1e-6) continue;
      const plan::DoseReference* ref = plan.dose_reference(c.dose_reference_number);
      if (ref != nullptr && ref->point_mm) {
        return DosePoint{*ref->point_mm, DosePointSource::full_coefficient_reference, ref->number};
      }
    }
  }
  const auto with_point = std::count_if(plan.dose_references.begin(), plan.dose_references.end(),
                                        [](const plan::DoseReference& r) { return r.point_mm.has_value(); });
  if (with_point == 1) {
    const auto it = std::find_if(plan.dose_references.begin(), plan.dose_references.end(),
                                 [](const plan::DoseReference& r) { return r.point_mm.has_value(); });
    return DosePoint{*it->point_mm, DosePointSource::single_dose_reference, it->number};
  }
  return std::nullopt;
}

PlanDistances plan_distances_for(const plan::Beam& beam, const plan::ReferencedBeam& referenced,
                                 const DosePoint& point) {
  const auto usable = [](const plan::DosePointDistances& d) { return !d.empty(); };
  if (!point.dose_reference_number) {
    // The specification point: the 2012-edition values in the Referenced Beam item, or a
    // verification item that names no dose reference.
    if (usable(referenced.distances_in_referenced_beam)) {
      return {&referenced.distances_in_referenced_beam, DepthSource::referenced_beam_item};
    }
    if (!referenced.verification_dose_reference_number &&
        usable(referenced.distances_in_verification_sequence)) {
      return {&referenced.distances_in_verification_sequence, DepthSource::fraction_verification_item};
    }
    return {};
  }
  const int number = *point.dose_reference_number;
  for (const plan::BeamDoseReference& r : beam.dose_references) {
    if (r.dose_reference_number == number && usable(r.distances)) {
      return {&r.distances, DepthSource::beam_dose_reference_item};
    }
  }
  if (referenced.verification_dose_reference_number == number &&
      usable(referenced.distances_in_verification_sequence)) {
    return {&referenced.distances_in_verification_sequence, DepthSource::fraction_verification_item};
  }
  // The Referenced Beam item's own values describe the beam's dose point, whichever way it was found.
  if (point.source != DosePointSource::dose_reference && usable(referenced.distances_in_referenced_beam)) {
    return {&referenced.distances_in_referenced_beam, DepthSource::referenced_beam_item};
  }
  return {};
}

}  // namespace countersign::engine
