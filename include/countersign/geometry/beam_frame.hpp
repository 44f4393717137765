#pragma once

// IEC 61217 chain for one beam direction: patient -> table top (patient position) -> fixed
// (couch angle about Z) -> gantry (gantry angle about Y) -> beam limiting device (collimator
// angle about Z). All rotations are right-handed about the positive axis; the source sits on
// +Z of the gantry system at the source-axis distance, the isocentre at the origin.

#include <countersign/geometry/patient_position.hpp>
#include <countersign/plan/plan.hpp>

#include <Eigen/Core>

namespace countersign::geometry {

struct BeamAngles {
  double gantry_deg = 0.0;
  double collimator_deg = 0.0;
  double couch_deg = 0.0;
};

// A point as the beam sees it.
struct PointInBeam {
  Eigen::Vector3d collimator_mm = Eigen::Vector3d::Zero();  // in the beam limiting device system
  double spd_mm = 0.0;          // source to the point's plane, along the central axis
  double ray_length_mm = 0.0;   // source to the point along the ray through it
  double iso_plane_x_mm = 0.0;  // the point projected from the source onto the isocentre plane
  double iso_plane_y_mm = 0.0;
  double off_axis_mm = 0.0;  // distance from the central axis at the isocentre plane
};

class BeamFrame {
 public:
  BeamFrame(PatientPosition position, const BeamAngles& angles, const plan::PointMm& isocenter_mm,
            double sad_mm);

  // Patient coordinates (mm) -> beam limiting device coordinates (mm, origin at the isocentre).
  [[nodiscard]] Eigen::Vector3d to_collimator(const plan::PointMm& patient_mm) const;
  // The source position in patient coordinates (mm).
  [[nodiscard]] Eigen::Vector3d source_in_patient_mm() const;
  // Unit vector of the central axis (source towards isocentre) in patient coordinates.
  [[nodiscard]] Eigen::Vector3d beam_direction_in_patient() const;
  [[nodiscard]] PointInBeam locate(const plan::PointMm& patient_mm) const;
  [[nodiscard]] double sad_mm() const { return sad_mm_; }
  // Rotation patient -> beam limiting device.
  [[nodiscard]] const Eigen::Matrix3d& rotation() const { return patient_to_collimator_; }

 private:
  Eigen::Matrix3d patient_to_collimator_;
  Eigen::Vector3d isocenter_mm_;
  double sad_mm_;
};

// Right-handed rotation matrices (active) about the IEC axes.
[[nodiscard]] Eigen::Matrix3d rotation_about_y(double angle_deg);
[[nodiscard]] Eigen::Matrix3d rotation_about_z(double angle_deg);

}  // namespace countersign::geometry
