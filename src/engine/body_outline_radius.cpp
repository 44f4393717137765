// Sector rays end at the body outline (include/countersign/engine/body_outline_radius.hpp).

#include <countersign/engine/body_outline_radius.hpp>

#include <countersign/patient/patient_model.hpp>

#include <cmath>
#include <numbers>

namespace countersign::engine {

OutlineRadius outline_radius_from(const patient::PatientModel& model) {
  return [&model](const geometry::BeamFrame& frame, const plan::PointMm& point_mm, double direction_deg,
                  double reach_mm) -> std::optional<double> {
    const double spd_mm = frame.locate(point_mm).spd_mm;
    if (!(spd_mm > 0.0)) return std::nullopt;
    const double to_point_plane = spd_mm / frame.sad_mm();
    const patient::FieldPlane plane = patient::field_plane(frame, spd_mm);
    const double angle = direction_deg * std::numbers::pi / 180.0;
    const Eigen::Vector3d direction = std::cos(angle) * plane.u_axis + std::sin(angle) * plane.v_axis;
    const Eigen::Vector3d point(point_mm[0], point_mm[1], point_mm[2]);
    const std::optional<double> extent = model.body_extent_mm(point, direction, reach_mm * to_point_plane);
    if (!extent) return std::nullopt;
    return *extent / to_point_plane;
  };
}

}  // namespace countersign::engine
