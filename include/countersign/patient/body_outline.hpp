#pragma once

// The body of a study prepared for segment queries: where a straight segment runs inside the body.
// With a body from the structure set the answer is exact for the contours extruded over each
// slice's thickness (the usual meaning of planar contours); with a body from the CT threshold it
// follows the voxel faces. Each slice's outline edges are indexed in bands of x and of y so that a
// short segment (a non-coplanar ray within one slice) tests only the edges near it.

#include <countersign/patient/ray_trace.hpp>
#include <countersign/study/study.hpp>

#include <Eigen/Core>

#include <span>
#include <vector>

namespace countersign::patient {

class BodyOutline {
 public:
  // Keeps a reference: the study must outlive the outline.
  explicit BodyOutline(const study::Study& study);

  [[nodiscard]] const study::Study& study() const { return *study_; }

  // The parts of the segment from -> to inside the body, in increasing alpha, disjoint, within
  // `inside_ct` (from trace_voxels of the same segment, which also gave `crossings`).
  [[nodiscard]] std::vector<AlphaRange> intervals(const Eigen::Vector3d& from_mm,
                                                  const Eigen::Vector3d& to_mm, const AlphaRange& inside_ct,
                                                  std::span<const VoxelCrossing> crossings) const;

  struct Edge {
    double x0, y0, x1, y1;
  };
  // One slice's edges, and the same edges by band of y and by band of x (an edge is in every band
  // its extent touches).
  struct SliceEdges {
    std::vector<Edge> all;
    double y_low = 0.0, y_band_mm = 1.0, x_low = 0.0, x_band_mm = 1.0;
    std::vector<std::vector<Edge>> by_y, by_x;
  };

 private:
  [[nodiscard]] std::vector<AlphaRange> contour_intervals(const Eigen::Vector3d& from,
                                                          const Eigen::Vector3d& to,
                                                          const AlphaRange& inside_ct) const;

  const study::Study* study_;
  std::vector<SliceEdges> slices_;  // empty for a threshold body
};

}  // namespace countersign::patient
