#pragma once

// Facts about how far the model can be trusted at this point, computed after the dose (the
// consistency step, src/engine/consistency.cpp): whether the plan's own distances agree with each
// other, what the other formalism gives, and an estimated standard uncertainty of the calculation.
// Facts only: the check module turns them into reason codes and sentences.

#include <countersign/engine/point_dose.hpp>

#include <optional>

namespace countersign::engine {

// The plan's distances against each other, at any off-axis distance.
struct GeometryConsistency {
  std::optional<double> plan_depth_mm;           // Beam Dose Point Depth (300A,0088), along the ray
  std::optional<double> plan_dose_point_ssd_mm;  // Beam Dose Point SSD (300A,008A), along the ray
  std::optional<double> plan_ssd_mm;             // Source to Surface Distance (300A,0130), on the axis
  double ray_length_mm = 0.0;                    // source to the point along the ray through it
  double spd_mm = 0.0;                           // source to the point's plane, along the axis
  // plan depth + dose point SSD - ray length (both along the same ray: should be 0).
  std::optional<double> ray_mismatch_mm;
  // SSD - (SPD - depth projected on the axis): a flat surface perpendicular to the axis.
  std::optional<double> ssd_mismatch_mm;
};

// The formalism not used, computed with the same inputs (static beams).
struct FormalismComparison {
  bool computed = false;  // false for modulated beams or when not computable
  Method other = Method::pdd;
  double used_dose_per_mu_cgy = 0.0;
  double other_dose_per_mu_cgy = 0.0;
  double difference_percent = 0.0;  // 100 (other - used) / used
  bool other_extrapolated = false;  // the other form needed a value outside its tables
};

// Estimated standard uncertainty of the computed dose, in percent, and its parts (combined in
// quadrature). The estimate is ours (common practice, no source): a rough guide beside the
// deviation, not a verdict.
struct UncertaintyEstimate {
  double interpolation_percent = 0.0;  // linear interpolation: local curvature x grid spacing^2 / 8, /sqrt(3)
  double formalism_percent = 0.0;      // half the TMR/PDD difference (static beams)
  double sector_percent = 0.0;         // half the sector-vs-equivalent-square difference (0 until it exists)
  double heterogeneity_percent = 0.0;  // the plan's equivalent depth vs the depth used, whole change
  double combined_percent = 0.0;
};

struct ModelFacts {
  GeometryConsistency geometry;
  FormalismComparison formalism;
  UncertaintyEstimate uncertainty;
};

}  // namespace countersign::engine
