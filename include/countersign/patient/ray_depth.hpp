#pragma once

// Depths along the ray from the source to a dose point, and the SSD along the central axis, from
// the CT and the body outline. Radiological (effective, water-equivalent) depth is the integral of
// the relative electron density along the ray from the body surface to the point (AAPM TG-114
// discusses it as the effective path length); voxels outside the body count as air (density 0).

#include <countersign/patient/body_outline.hpp>
#include <countersign/patient/density.hpp>
#include <countersign/study/problem.hpp>
#include <countersign/study/study.hpp>

#include <Eigen/Core>

#include <cstddef>
#include <cstdint>
#include <vector>

namespace countersign::geometry {
class BeamFrame;
}

namespace countersign::patient {

// A run of the path with one density, in order from the surface towards the point.
struct DensityLayer {
  double thickness_mm = 0.0;
  double relative_density = 1.0;
};

struct RayDepth {
  Eigen::Vector3d entry_mm = Eigen::Vector3d::Zero();  // where the ray from the source first enters the body
  double source_to_entry_mm = 0.0;                     // along the ray
  double source_to_point_mm = 0.0;
  double depth_mm = 0.0;               // geometric depth: entry to point along the ray
  double tissue_path_mm = 0.0;         // the part of it inside the body (less when the ray crosses air gaps)
  double radiological_depth_mm = 0.0;  // sum of length x relative electron density from entry to point
  int body_entries = 0;                // 1 normally; more when the ray leaves and re-enters the body
  double lowest_density = 0.0;         // over the voxels inside the body on the path
  double highest_density = 0.0;
  std::int16_t lowest_hu = 0;  // likewise, CT numbers
  std::int16_t highest_hu = 0;
  std::size_t voxels_beyond_table = 0;  // path voxels whose HU lies outside the table's rows (end rows used)
  std::vector<DensityLayer> layers;     // the path from the entry to the point, equal densities merged
};

// Depths for the ray source -> point. Problems: point_outside_ct, point_outside_body,
// ray_leaves_ct_inside_body (the surface the ray enters through is not in the CT).
[[nodiscard]] study::Result<RayDepth> trace_depth(const BodyOutline& body, const DensityMap& densities,
                                                  const Eigen::Vector3d& source_mm,
                                                  const Eigen::Vector3d& point_mm);

struct SurfaceDistance {
  Eigen::Vector3d entry_mm = Eigen::Vector3d::Zero();  // where the axis enters the body
  double distance_mm = 0.0;                            // source to entry (the SSD on the central axis)
};

// Source to the body surface along a direction (for the SSD: the central axis, source -> isocentre).
// Problems: central_axis_misses_body, ray_leaves_ct_inside_body.
[[nodiscard]] study::Result<SurfaceDistance> surface_along(const BodyOutline& body,
                                                           const Eigen::Vector3d& source_mm,
                                                           const Eigen::Vector3d& direction);

// The SSD of a beam direction: surface_along from the frame's source along its central axis.
[[nodiscard]] study::Result<SurfaceDistance> central_axis_ssd(const BodyOutline& body,
                                                              const geometry::BeamFrame& frame);

}  // namespace countersign::patient
