#pragma once

// Missing tissue: how much of a field's cross-section at the point's depth lies outside the body
// (tangential breast fields, head and neck). The plane is perpendicular to the central axis; the
// field is a polygon in that plane's (u, v) coordinates, e.g. the aperture projected to the
// point's distance. Along u each row is exact (the same segment-body intersection as the rays);
// rows are spaced at most row_spacing_mm apart in v (midpoint rule).

#include <countersign/patient/body_outline.hpp>

#include <Eigen/Core>

#include <array>
#include <span>
#include <vector>

namespace countersign::geometry {
class BeamFrame;
}

namespace countersign::patient {

struct FieldPlane {
  Eigen::Vector3d centre_mm = Eigen::Vector3d::Zero();  // where the central axis crosses the plane
  Eigen::Vector3d u_axis = Eigen::Vector3d::UnitX();    // unit vectors in the plane, orthogonal
  Eigen::Vector3d v_axis = Eigen::Vector3d::UnitY();
};

struct MissingTissue {
  double field_area_mm2 = 0.0;
  double outside_body_fraction = 0.0;  // of the field area: inside the CT but outside the body
  double outside_ct_fraction = 0.0;    // of the field area: outside the CT (not assessed)
  double row_spacing_mm = 0.0;         // the spacing used
};

// The plane at distance spd_mm from the source along the central axis, u and v along the beam
// limiting device's IEC X and Y.
[[nodiscard]] FieldPlane field_plane(const geometry::BeamFrame& frame, double spd_mm);

// A rectangle [x1, x2] x [y1, y2] (mm) as a polygon.
[[nodiscard]] std::vector<std::array<double, 2>> rectangle_mm(double x1, double x2, double y1, double y2);

// Fractions of the polygon's area (u, v in mm, the closing edge implicit) outside the body and
// outside the CT. A polygon without area gives all zeros.
[[nodiscard]] MissingTissue missing_tissue(const BodyOutline& body, const FieldPlane& plane,
                                           std::span<const std::array<double, 2>> field_uv_mm,
                                           double row_spacing_mm = 0.5);

}  // namespace countersign::patient
