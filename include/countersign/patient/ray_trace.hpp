#pragma once

// Exact ray tracing through the CT's voxel grid (R. L. Siddon, "Fast calculation of the exact
// radiological path for a three-dimensional CT array", Med. Phys. 12 (1985) 252-255), in the
// incremental form: the crossings of the three families of voxel faces are visited in order, each
// parameter computed directly from its face (no accumulated error).

#include <countersign/study/volume.hpp>

#include <Eigen/Core>

#include <cstddef>
#include <optional>
#include <vector>

namespace countersign::patient {

// Positions along a segment from -> to are parameters alpha: point = from + alpha (to - from).
struct AlphaRange {
  double alpha_in = 0.0;
  double alpha_out = 0.0;
};

// One voxel the segment passes through, and where (alpha_in < alpha_out).
struct VoxelCrossing {
  std::size_t voxel = 0;  // VoxelGrid::index
  double alpha_in = 0.0;
  double alpha_out = 0.0;
};

// Every voxel the segment from -> to crosses, in order from `from`, into `crossings` (cleared first).
// Returns the part of the segment inside the volume, or nullopt when it misses the volume (or has
// no length). Length of a crossing in mm: (alpha_out - alpha_in) * |to - from|.
[[nodiscard]] std::optional<AlphaRange> trace_voxels(const study::VoxelGrid& grid,
                                                     const Eigen::Vector3d& from_mm,
                                                     const Eigen::Vector3d& to_mm,
                                                     std::vector<VoxelCrossing>& crossings);

[[nodiscard]] inline study::PointMm to_point(const Eigen::Vector3d& v) { return {v.x(), v.y(), v.z()}; }

}  // namespace countersign::patient
