#pragma once

// Everything a dose calculation asks of the patient, for one study and one CT-number-to-density
// relation: made once per study (indexes the outline, tabulates the densities), then asked for any
// number of rays. Const methods only; safe to share between threads.

#include <countersign/patient/batho.hpp>
#include <countersign/patient/body_extent.hpp>
#include <countersign/patient/body_outline.hpp>
#include <countersign/patient/density.hpp>
#include <countersign/patient/missing_tissue.hpp>
#include <countersign/patient/ray_depth.hpp>

namespace countersign::patient {

class PatientModel {
 public:
  // Keeps a reference: the study must outlive the model.
  PatientModel(const study::Study& study, const HuToDensity& densities)
      : densities_(densities), outline_(study) {}

  [[nodiscard]] const study::Study& study() const { return outline_.study(); }
  [[nodiscard]] const DensityMap& densities() const { return densities_; }
  [[nodiscard]] const BodyOutline& outline() const { return outline_; }

  // Depth, radiological depth and entry point of the ray source -> point.
  [[nodiscard]] study::Result<RayDepth> depth(const Eigen::Vector3d& source_mm,
                                              const Eigen::Vector3d& point_mm) const {
    return trace_depth(outline_, densities_, source_mm, point_mm);
  }
  // SSD along the beam's central axis.
  [[nodiscard]] study::Result<SurfaceDistance> ssd(const geometry::BeamFrame& frame) const {
    return central_axis_ssd(outline_, frame);
  }
  // Fraction of a field cross-section outside the body.
  [[nodiscard]] MissingTissue missing_tissue(const FieldPlane& plane,
                                             std::span<const std::array<double, 2>> field_uv_mm,
                                             double row_spacing_mm = 0.5) const {
    return patient::missing_tissue(outline_, plane, field_uv_mm, row_spacing_mm);
  }
  // Where the body ends along a line from a point inside it (sector rays at the outline).
  [[nodiscard]] std::optional<double> body_extent_mm(const Eigen::Vector3d& point_mm,
                                                     const Eigen::Vector3d& direction,
                                                     double reach_mm) const {
    return patient::body_extent_mm(outline_, point_mm, direction, reach_mm);
  }

 private:
  DensityMap densities_;
  BodyOutline outline_;
};

}  // namespace countersign::patient
