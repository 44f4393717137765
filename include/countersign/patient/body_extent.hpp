#pragma once

// How far the body reaches from a point inside it, along one straight line: where a sector ray of
// the scatter integration leaves the body (the missing tissue of tangential fields). Uses the same
// segment-body intersection as the depths (exact for planar contours extruded over each slice's
// thickness; voxel faces for a threshold body).

#include <countersign/patient/body_outline.hpp>

#include <Eigen/Core>

#include <optional>

namespace countersign::patient {

// The distance (mm) from `point_mm` along the unit vector `direction` to where the body ends, when
// it ends within reach_mm. nullopt when the body continues to reach_mm, when it continues to the edge
// of the CT (what lies beyond is unknown: tissue is assumed), or when the point is not in the body.
// Gaps shorter than 1 µm between pieces of the body (slice boundaries) are not an end.
[[nodiscard]] std::optional<double> body_extent_mm(const BodyOutline& body, const Eigen::Vector3d& point_mm,
                                                   const Eigen::Vector3d& direction, double reach_mm);

}  // namespace countersign::patient
