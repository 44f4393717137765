#include <countersign/geometry/beam_frame.hpp>

#include <Eigen/Geometry>
#include <cmath>
#include <numbers>

namespace countersign::geometry {

namespace {
double radians(double degrees) { return degrees * std::numbers::pi / 180.0; }
}  // namespace

Eigen::Matrix3d rotation_about_y(double angle_deg) {
  return Eigen::AngleAxisd(radians(angle_deg), Eigen::Vector3d::UnitY()).toRotationMatrix();
}

Eigen::Matrix3d rotation_about_z(double angle_deg) {
  return Eigen::AngleAxisd(radians(angle_deg), Eigen::Vector3d::UnitZ()).toRotationMatrix();
}

BeamFrame::BeamFrame(PatientPosition position, const BeamAngles& angles, const plan::PointMm& isocenter_mm,
                     double sad_mm)
    : isocenter_mm_(isocenter_mm[0], isocenter_mm[1], isocenter_mm[2]), sad_mm_(sad_mm) {
  // v_fixed = Rz(couch) * P * v_patient; v_fixed = Ry(gantry) * v_gantry; v_gantry = Rz(coll) * v_coll.
  const Eigen::Matrix3d patient_to_fixed =
      rotation_about_z(angles.couch_deg) * patient_to_table_top(position);
  patient_to_collimator_ = rotation_about_z(angles.collimator_deg).transpose() *
                           rotation_about_y(angles.gantry_deg).transpose() * patient_to_fixed;
}

Eigen::Vector3d BeamFrame::to_collimator(const plan::PointMm& patient_mm) const {
  const Eigen::Vector3d p(patient_mm[0], patient_mm[1], patient_mm[2]);
  return patient_to_collimator_ * (p - isocenter_mm_);
}

Eigen::Vector3d BeamFrame::source_in_patient_mm() const {
  return isocenter_mm_ + patient_to_collimator_.transpose() * Eigen::Vector3d(0.0, 0.0, sad_mm_);
}

Eigen::Vector3d BeamFrame::beam_direction_in_patient() const {
  return patient_to_collimator_.transpose() * Eigen::Vector3d(0.0, 0.0, -1.0);
}

PointInBeam BeamFrame::locate(const plan::PointMm& patient_mm) const {
  PointInBeam result;
  result.collimator_mm = to_collimator(patient_mm);
  const Eigen::Vector3d& c = result.collimator_mm;
  result.spd_mm = sad_mm_ - c.z();
  result.ray_length_mm = (c - Eigen::Vector3d(0.0, 0.0, sad_mm_)).norm();
  // Points at or behind the source have no projection; callers reject spd_mm <= 0 first.
  const double scale = result.spd_mm > 0.0 ? sad_mm_ / result.spd_mm : 0.0;
  result.iso_plane_x_mm = c.x() * scale;
  result.iso_plane_y_mm = c.y() * scale;
  result.off_axis_mm = std::hypot(result.iso_plane_x_mm, result.iso_plane_y_mm);
  return result;
}

}  // namespace countersign::geometry
