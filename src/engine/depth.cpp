// Stage 3, depth: the depth at the dose point, from the plan or derived by a stated method.

#include "stages.hpp"

#include <cmath>

namespace countersign::engine::stages {

namespace {

CalculationProblem problem_of(ProblemKind kind) {
  CalculationProblem problem;
  problem.kind = kind;
  return problem;
}

bool derived(DepthSource source) {
  return source == DepthSource::derived_spd_minus_ssd || source == DepthSource::derived_from_dose_point_ssd;
}

// Without a CT, a plan whose equivalent depth differs from its depth: the equivalent depth (the
// planning system's heterogeneity correction, not independent) is used, and the geometric one kept for
// the homogeneous dose beside it; never only a wider tolerance.
void prefer_plan_equivalent_depth(const EngineOptions& options, DepthUsed& depth) {
  if (!depth.plan_depth_mm || !depth.plan_equivalent_depth_mm || !(*depth.plan_depth_mm > 0.0)) return;
  if (depth.kind == DepthChoice::equivalent) {
    depth.geometric_depth_mm = depth.plan_depth_mm;
    return;
  }
  if (depth.source != DepthSource::referenced_beam_item &&
      depth.source != DepthSource::fraction_verification_item &&
      depth.source != DepthSource::beam_dose_reference_item)
    return;
  const double difference_percent =
      100.0 * std::abs(*depth.plan_equivalent_depth_mm - *depth.plan_depth_mm) / *depth.plan_depth_mm;
  if (difference_percent <= options.equivalent_depth_switch_percent) return;
  depth.geometric_depth_mm = depth.depth_mm;
  depth.depth_mm = *depth.plan_equivalent_depth_mm;
  depth.equivalent_by_policy = true;
}

}  // namespace

StageResult<void> choose_depth(const plan::Beam& beam, const plan::ReferencedBeam& referenced,
                               const DosePoint& point, const EngineOptions& options, BeamDose& r) {
  const DepthChoice choice = options.depth;
  DepthUsed& depth = r.depth;
  depth.kind = choice;
  const PlanDistances distances = plan_distances_for(beam, referenced, point);
  if (distances.distances != nullptr) {
    depth.plan_depth_mm = distances.distances->depth_mm;
    depth.plan_equivalent_depth_mm = distances.distances->equivalent_depth_mm;
    depth.plan_dose_point_ssd_mm = distances.distances->ssd_mm;
  }
  if (r.ssd_mm) depth.spd_minus_ssd_mm = r.point.spd_mm - *r.ssd_mm;
  if (options.patient != nullptr) {
    TRY(choose_ct_depth(*options.patient, options.heterogeneity, point, r));
  } else if (choice == DepthChoice::equivalent) {
    if (!depth.plan_equivalent_depth_mm) return problem_of(ProblemKind::equivalent_depth_missing);
    depth.depth_mm = *depth.plan_equivalent_depth_mm;
    depth.source = distances.layout;
  } else if (depth.plan_depth_mm) {
    depth.depth_mm = *depth.plan_depth_mm;
    depth.source = distances.layout;
  } else if (distances.distances != nullptr && distances.distances->ssd_mm) {
    depth.depth_mm = r.point.ray_length_mm - *distances.distances->ssd_mm;
    depth.source = DepthSource::derived_from_dose_point_ssd;
  } else if (depth.spd_minus_ssd_mm) {
    depth.depth_mm = *depth.spd_minus_ssd_mm;
    depth.source = DepthSource::derived_spd_minus_ssd;
  } else {
    return problem_of(ProblemKind::depth_and_ssd_missing);
  }
  if (options.patient == nullptr) prefer_plan_equivalent_depth(options, depth);
  depth.chosen = true;
  if (depth.depth_mm <= 0.0) {
    CalculationProblem problem = problem_of(ProblemKind::point_not_below_surface);
    problem.plan_value = depth.depth_mm;
    return problem;
  }
  if (!beam.boli.empty()) {
    // A bolus is part of the CT's body outline only when the structure set includes it, which is not
    // known here: the CT's depth is not used. Without a CT the plan's own depth must include it.
    if (options.patient != nullptr) {
      CalculationProblem problem = problem_of(ProblemKind::bolus_without_plan_depth);
      problem.plan_text = "ct";
      return problem;
    }
    if (derived(depth.source)) return problem_of(ProblemKind::bolus_without_plan_depth);
    // Electron beams add the bolus's thickness to the plan's depth below the skin (electron_beam.cpp).
    if (beam.radiation_type != plan::RadiationType::electron)
    r.approximations.push_back({ApproximationKind::bolus_in_plan_depth});
  }
  if (derived(depth.source)) r.approximations.push_back({ApproximationKind::derived_depth});
  return {};
}

double surface_distance_mm(const BeamDose& r) {
  if (r.patient) return r.patient->ray.ssd_mm;
  return r.ssd_mm.value_or(r.point.spd_mm - r.depth.depth_mm);
}

double part_depth_mm(const BeamDose& r, double part_spd_mm, double part_ssd_mm, double ssd0_mm) {
  // The depth moves with the source-to-point distance and the SSD relative to control point 0.
  return r.depth.depth_mm + (part_spd_mm - r.point.spd_mm) - (part_ssd_mm - ssd0_mm);
}

}  // namespace countersign::engine::stages
