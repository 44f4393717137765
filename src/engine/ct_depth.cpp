// Stage 3 with a CT: the depth at the dose point along the ray through the patient's CT (Siddon
// tracing in the patient module), the SSD along the central axis, and the missing tissue of the
// field at the point's depth. Any problem with the study stops the calculation (never water).

#include "stages.hpp"

#include <countersign/patient/patient_model.hpp>
#include <countersign/util/units.hpp>

#include <algorithm>
#include <cmath>

namespace countersign::engine::stages {

namespace {

CalculationProblem study_problem(const study::Problem& p, std::optional<int> control_point) {
  CalculationProblem problem;
  problem.kind = ProblemKind::patient_geometry_unusable;
  problem.plan_text = std::string(study::code(p.kind));
  problem.library_detail = p.message();
  problem.control_point = control_point;
  return problem;
}

plan::PointMm to_point(const Eigen::Vector3d& v) { return {v.x(), v.y(), v.z()}; }

bool inside_body(const study::Study& s, const Eigen::Vector3d& p) {
  const auto voxel = s.ct.grid.voxel_at({p.x(), p.y(), p.z()});
  return voxel && s.body.mask.contains((*voxel)[0], (*voxel)[1], (*voxel)[2]);
}

// The body outline in the plane at spd_mm (see PatientDose::body_outline_iso_mm).
std::vector<std::array<double, 2>> body_outline_in_plane(const patient::PatientModel& model,
                                                         const geometry::BeamFrame& frame, double spd_mm,
                                                         double reach_mm) {
  constexpr int directions = 72;
  constexpr double step_mm = 1.0;
  const patient::FieldPlane plane = patient::field_plane(frame, spd_mm);
  std::vector<std::array<double, 2>> outline;
  if (!inside_body(model.study(), plane.centre_mm)) return outline;
  const double to_iso = frame.sad_mm() / spd_mm;
  for (int k = 0; k < directions; ++k) {
    const double angle = 2.0 * 3.14159265358979323846 * k / directions;
    const Eigen::Vector3d direction = std::cos(angle) * plane.u_axis + std::sin(angle) * plane.v_axis;
    double r = 0.0;
    while (r < reach_mm && inside_body(model.study(), plane.centre_mm + (r + step_mm) * direction))
      r += step_mm;
    outline.push_back({r * std::cos(angle) * to_iso, r * std::sin(angle) * to_iso});
  }
  return outline;
}

}  // namespace

StageResult<CtRay> trace_ct(const patient::PatientModel& model, const geometry::BeamFrame& frame,
                            const plan::PointMm& point_mm, const geometry::JawOpening& jaws,
                            std::optional<int> control_point) {
  const auto axis = model.ssd(frame);
  if (!axis) return study_problem(axis.problem(), control_point);
  const Eigen::Vector3d point(point_mm[0], point_mm[1], point_mm[2]);
  const auto traced = model.depth(frame.source_in_patient_mm(), point);
  if (!traced) return study_problem(traced.problem(), control_point);
  CtRay ray;
  ray.ssd_mm = axis->distance_mm;
  ray.axis_entry_mm = to_point(axis->entry_mm);
  ray.entry_mm = to_point(traced->entry_mm);
  ray.source_to_entry_mm = traced->source_to_entry_mm;
  ray.depth_mm = traced->depth_mm;
  ray.radiological_depth_mm = traced->radiological_depth_mm;
  ray.lowest_density = traced->lowest_density;
  ray.highest_density = traced->highest_density;
  ray.voxels_beyond_table = traced->voxels_beyond_table;
  ray.body_entries = traced->body_entries;
  ray.layers = traced->layers;

  // The jaw opening projected to the plane through the point, perpendicular to the central axis.
  const double spd_mm = frame.locate(point_mm).spd_mm;
  const double scale = spd_mm / frame.sad_mm();
  const auto field =
      patient::rectangle_mm(jaws.x1_mm * scale, jaws.x2_mm * scale, jaws.y1_mm * scale, jaws.y2_mm * scale);
  const patient::MissingTissue missing = model.missing_tissue(patient::field_plane(frame, spd_mm), field);
  ray.missing_tissue_fraction = missing.outside_body_fraction;
  ray.outside_ct_fraction = missing.outside_ct_fraction;
  return ray;
}

PartDepths ct_part_depths(const CtRay& ray, Heterogeneity method) {
  const double dose_depth = method == Heterogeneity::epl ? ray.radiological_depth_mm : ray.depth_mm;
  return {dose_depth, ray.depth_mm};
}

StageResult<void> choose_ct_depth(const patient::PatientModel& model, Heterogeneity method,
                                  const DosePoint& point, BeamDose& r) {
  const geometry::BeamFrame frame0(r.patient_position.value_or(geometry::PatientPosition::hfs), r.angles,
                                   r.isocenter_mm, r.sad_mm);
  PatientDose patient;
  patient.method = method;
  TRY_ASSIGN(patient.ray, trace_ct(model, frame0, point.point_mm, r.aperture.jaws(), std::nullopt));
  const PartDepths depths = ct_part_depths(patient.ray, method);
  r.depth.depth_mm = depths.dose_depth_mm;
  r.depth.source = method == Heterogeneity::epl ? DepthSource::ct_radiological : DepthSource::ct_geometric;
  if (method != Heterogeneity::off) r.depth.geometric_depth_mm = depths.geometric_depth_mm;
  const geometry::JawOpening& j = r.aperture.jaws();
  const double reach_mm = 1.5 *
                          std::max({std::abs(j.x1_mm), std::abs(j.x2_mm), std::abs(j.y1_mm),
                                    std::abs(j.y2_mm), r.point.off_axis_mm, 50.0}) *
                          r.point.spd_mm / r.sad_mm;
  patient.body_outline_iso_mm = body_outline_in_plane(model, frame0, r.point.spd_mm, reach_mm);
  r.patient = std::move(patient);
  return {};
}

}  // namespace countersign::engine::stages

namespace countersign::engine {

std::string_view to_code(Heterogeneity method) {
  switch (method) {
    case Heterogeneity::off:
      return "off";
    case Heterogeneity::epl:
      return "epl";
    case Heterogeneity::batho:
      return "batho";
  }
  return "unknown";
}

}  // namespace countersign::engine
