#pragma once

// What the CT and the body outline said about one beam (or one part of it): SSD along the central
// axis, geometric and radiological depth along the source -> point ray, where the ray entered the
// body, the densities it crossed and how much of the field at the point's depth lies outside the
// body. Facts only: the check module compares them with the plan and words them.

#include <countersign/patient/ray_depth.hpp>
#include <countersign/plan/plan.hpp>

#include <array>
#include <cstddef>
#include <optional>
#include <string_view>
#include <vector>

namespace countersign::patient {
class PatientModel;
}

namespace countersign::engine {

// How a CT changes the dose (the --heterogeneity option).
enum class Heterogeneity {
  off,    // homogeneous water at the CT's geometric depth
  epl,    // effective path length: the radiological depth in the TMR/PDD look-ups (the default)
  batho,  // the homogeneous dose at the geometric depth times the Batho power-law factor (modified form)
};
[[nodiscard]] std::string_view to_code(Heterogeneity method);

// The CT's answer for one source -> point ray.
struct CtRay {
  double ssd_mm = 0.0;                 // source to the body along the central axis
  plan::PointMm axis_entry_mm{};       // where the central axis enters the body
  plan::PointMm entry_mm{};            // where the ray to the point enters the body
  double source_to_entry_mm = 0.0;     // along the ray (the point's SSD)
  double depth_mm = 0.0;               // geometric depth along the ray
  double radiological_depth_mm = 0.0;  // water-equivalent depth along the ray
  double lowest_density = 1.0;         // relative electron density, inside the body on the path
  double highest_density = 1.0;
  std::size_t voxels_beyond_table = 0;        // path voxels outside the CT table's rows (end rows used)
  int body_entries = 1;                       // more than 1: the ray crosses air inside the outline's gaps
  std::vector<patient::DensityLayer> layers;  // entry to point, equal densities merged
  double missing_tissue_fraction = 0.0;       // of the field at the point's depth: outside the body
  double outside_ct_fraction = 0.0;           // of the field at the point's depth: outside the CT
};

// The patient side of a beam's calculation with a CT.
struct PatientDose {
  Heterogeneity method = Heterogeneity::epl;
  CtRay ray;                           // control point 0
  double homogeneous_dose_gy = 0.0;    // the same beam in water at the CT's geometric depths
  std::optional<double> batho_factor;  // control point 0 (batho only)
  // The body's cross-section in the plane through the point perpendicular to the central axis, as
  // seen from the source and scaled to the isocentre plane (collimator x, y in mm), for the record's
  // beam's-eye view: where, going out from the central axis in each of 72 directions, the body ends
  // (sampled on the body mask in 1 mm steps; voxel accuracy). Empty when the axis is outside the body.
  std::vector<std::array<double, 2>> body_outline_iso_mm;
};

}  // namespace countersign::engine
