#pragma once

// Where a straight segment runs inside the body. With a body from the structure set the answer is
// exact for the contours extruded over each slice's thickness (the usual meaning of planar
// contours); with a body from the CT threshold it follows the voxel faces.

#include <countersign/patient/ray_trace.hpp>
#include <countersign/study/study.hpp>

#include <Eigen/Core>

#include <span>
#include <vector>

namespace countersign::patient {

// The parts of the segment from -> to inside the body, in increasing alpha, disjoint, within
// `inside_ct` (from trace_voxels of the same segment, which also gave `crossings`).
[[nodiscard]] std::vector<AlphaRange> body_intervals(const study::Study& study,
                                                     const Eigen::Vector3d& from_mm,
                                                     const Eigen::Vector3d& to_mm,
                                                     const AlphaRange& inside_ct,
                                                     std::span<const VoxelCrossing> crossings);

}  // namespace countersign::patient
