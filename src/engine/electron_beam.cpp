// Stages 4 and 7 for electron beams: the applicator's opening, then the TG-71 electron formula at
// the point (electron_dose.hpp) with the cutout's size, the bolus, the effective-SSD inverse square,
// the depth of 80 % dose and, with a CT, the surface's obliquity. One part: electron beams are static.

#include "stages.hpp"

#include <countersign/geometry/polygon.hpp>
#include <countersign/patient/patient_model.hpp>
#include <countersign/util/assert.hpp>
#include <countersign/util/units.hpp>

#include <Eigen/Geometry>

#include <cmath>
#include <numbers>

namespace countersign::engine::stages {

namespace {

// Electron beams are checked on the central axis only: the library has no off-axis data for them.
constexpr double on_axis_mm = 1.0;
// Half the distance between the neighbouring points whose rays give the surface's tilt (with a CT).
constexpr double obliquity_step_mm = 10.0;

CalculationProblem problem_of(ProblemKind kind) {
  CalculationProblem problem;
  problem.kind = kind;
  return problem;
}

// With a CT: the angle between the central axis and the body surface's normal where the rays to
// four points around the dose point (±10 mm along the collimator's x and y, in its plane) enter the
// body; nullopt when any of those rays cannot be traced.
std::optional<double> surface_obliquity_deg(const patient::PatientModel& model, const BeamDose& r,
                                            const ResolvedBeam& resolved, const DosePoint& point) {
  const geometry::BeamFrame frame(resolved.position, r.angles, r.isocenter_mm, r.sad_mm);
  const Eigen::Vector3d centre(point.point_mm[0], point.point_mm[1], point.point_mm[2]);
  std::array<Eigen::Vector3d, 4> entries;
  for (std::size_t i = 0; i < entries.size(); ++i) {
    const double sign = i % 2 == 0 ? 1.0 : -1.0;
    const Eigen::Vector3d along = frame.rotation().row(static_cast<Eigen::Index>(i / 2)).transpose();
    const Eigen::Vector3d p = centre + sign * obliquity_step_mm * along;
    const auto ray = trace_ct(model, frame, {p.x(), p.y(), p.z()}, r.aperture.jaws(), std::nullopt);
    if (!ray) return std::nullopt;
    entries[i] = Eigen::Vector3d(ray->entry_mm[0], ray->entry_mm[1], ray->entry_mm[2]);
  }
  const Eigen::Vector3d normal = (entries[0] - entries[1]).cross(entries[2] - entries[3]);
  if (!(normal.norm() > 0.0)) return std::nullopt;
  const double cosine = std::abs(normal.normalized().dot(frame.beam_direction_in_patient()));
  return std::acos(std::min(1.0, cosine)) * 180.0 / std::numbers::pi;
}

// Where the point lies in the cutout (or the open applicator) at the isocentre plane.
void locate_in_opening(const ResolvedBeam& resolved, BeamDose& r) {
  const double x = r.point.iso_plane_x_mm;
  const double y = r.point.iso_plane_y_mm;
  if (resolved.cutout != nullptr) {
    r.point_in_field = geometry::polygon_contains(resolved.cutout->outline_mm, x, y);
    r.edge_distance_mm = geometry::polygon_edge_distance_mm(resolved.cutout->outline_mm, x, y);
    return;
  }
  r.point_in_field = r.aperture.contains(x, y);
  r.edge_distance_mm = r.aperture.distance_to_edge_mm(x, y);
}

// The cutout's size at the tables' plane (the standard SSD): Block Data is at the isocentre plane.
StageResult<CutoutSize> size_of_cutout(const ResolvedBeam& resolved, const BeamDose& r) {
  const beamdata::ApplicatorData& applicator = util::checked(resolved.applicator);
  if (resolved.cutout == nullptr) return open_applicator_size(applicator);
  const double scale = resolved.electron->pdd_ssd_cm / util::mm_to_cm(r.sad_mm);
  const auto size = cutout_size(resolved.cutout->outline_mm, scale);
  if (!size) {
    CalculationProblem problem = problem_of(ProblemKind::cutout_unusable);
    problem.attribute = plan::attribute::block_data;
    problem.item_id = resolved.cutout->number ? std::to_string(*resolved.cutout->number) : std::string{};
    return problem;
  }
  return *size;
}

double smallest_table_field_cm(const beamdata::ApplicatorData& applicator) {
  double smallest = applicator.pdd.columns().empty() ? 0.0 : applicator.pdd.columns().front();
  if (applicator.cutout && !applicator.cutout->axis().empty())
    smallest = std::max(smallest, applicator.cutout->axis().front());
  return smallest;
}

// The one part of the beam, as the reports and the check read parts.
Segment single_part(const BeamDose& r, const ElectronFacts& facts, const PointDose& dose) {
  Segment s;
  s.meterset_mu = r.meterset_mu;
  s.angles = r.angles;
  s.point = r.point;
  s.depth_mm = util::cm_to_mm(facts.depth_cm);
  s.ssd_mm = util::cm_to_mm(facts.entrance_ssd_cm);
  s.jaws = r.aperture.jaws();
  s.open_area_mm2 = facts.cutout.area_cm2 * util::mm2_per_cm2;
  s.open_perimeter_mm = util::cm_to_mm(facts.cutout.perimeter_cm);
  s.point_in_opening = r.point_in_field;
  s.point_in_jaws = true;
  s.edge_distance_mm = r.edge_distance_mm;
  s.inputs.method = Method::electron;
  s.inputs.meterset_mu = r.meterset_mu;
  s.inputs.depth_cm = facts.depth_cm;
  s.inputs.ssd_cm = facts.entrance_ssd_cm;
  s.inputs.spd_cm = util::mm_to_cm(r.point.spd_mm);
  s.inputs.sad_cm = util::mm_to_cm(r.sad_mm);
  s.inputs.field_at_isocentre_cm = facts.cutout.equivalent_square_cm;
  s.dose = dose;
  s.equivalent_square_dose_cgy = dose.dose_cgy;
  s.homogeneous_dose_cgy = dose.dose_cgy;
  return s;
}

void add_electron_approximations(const ElectronFacts& facts, BeamDose& r) {
  r.approximations.push_back({ApproximationKind::electron_cutout_size});
  if (std::abs(facts.air_gap_cm) > 0.05) {
    Approximation a{ApproximationKind::electron_pdd_at_standard_ssd};
    a.ssd_cm = facts.entrance_ssd_cm;
    a.table_ssd_cm = facts.standard_ssd_cm;
    r.approximations.push_back(a);
  }
  if (facts.bolus_thickness_cm) r.approximations.push_back({ApproximationKind::electron_bolus_added});
  if (!r.patient) r.approximations.push_back({ApproximationKind::electron_normal_incidence});
}

}  // namespace

void electron_opening(const plan::Beam& beam, const ResolvedBeam& resolved, BeamDose& r) {
  const beamdata::ApplicatorData& applicator = util::checked(resolved.applicator);
  const double half_mm = util::cm_to_mm(applicator.field_cm) / 2.0 * r.sad_mm /
                         util::cm_to_mm(util::checked(resolved.electron).pdd_ssd_cm);
  geometry::JawOpening square{-half_mm, half_mm, -half_mm, half_mm};
  r.aperture =
      geometry::Aperture(square, {geometry::ApertureRow{-half_mm, half_mm, -half_mm, half_mm}}, false);
  r.outline = beam_outline(beam, r.aperture, resolved.blocks, false);
  r.ssd_mm = beam.control_points.front().ssd_mm;
}

StageResult<void> compute_electron_beam(const ResolvedBeam& resolved, const DosePoint& point,
                                        const EngineOptions& options, BeamDose& r) {
  const beamdata::ElectronBeamData& data = util::checked(resolved.electron);
  const beamdata::ApplicatorData& applicator = util::checked(resolved.applicator);
  r.method = Method::electron;
  r.setup_technique = util::checked(resolved.setup).setup_technique;
  if (r.point.off_axis_mm > on_axis_mm) {
    CalculationProblem problem = problem_of(ProblemKind::electron_point_off_axis);
    problem.plan_value = r.point.off_axis_mm;
    return problem;
  }
  ElectronFacts facts;
  facts.applicator_id = applicator.id;
  facts.applicator_type = util::checked(resolved.plan_applicator).type.text;
  facts.applicator_field_cm = applicator.field_cm;
  facts.effective_ssd_cm = applicator.effective_ssd_cm;
  facts.standard_ssd_cm = data.pdd_ssd_cm;
  TRY_ASSIGN(facts.cutout, size_of_cutout(resolved, r));
  facts.smallest_table_cutout_cm = smallest_table_field_cm(applicator);
  if (resolved.bolus != nullptr) facts.bolus_id = resolved.bolus->id;
  facts.bolus_thickness_cm = resolved.bolus_thickness_cm;
  // The plan's depth is below the skin and its SSD (300A,0130) is to the skin; a bolus moves the
  // surface the beam enters towards the source by its thickness and adds it to the depth.
  const double bolus_cm = facts.bolus_thickness_cm.value_or(0.0);
  facts.skin_depth_cm = util::mm_to_cm(r.depth.depth_mm);
  facts.depth_cm = facts.skin_depth_cm + bolus_cm;
  facts.entrance_ssd_cm = util::mm_to_cm(surface_distance_mm(r)) - bolus_cm;
  facts.air_gap_cm = facts.entrance_ssd_cm - data.pdd_ssd_cm;
  facts.r80_cm = depth_of_80_percent_cm(data, applicator, facts.cutout);
  if (options.patient != nullptr)
    facts.obliquity_deg = surface_obliquity_deg(*options.patient, r, resolved, point);
  if (!r.ssd_mm) r.approximations.push_back({ApproximationKind::ssd_from_spd_minus_depth});
  locate_in_opening(resolved, r);

  const ElectronInputs inputs{r.meterset_mu, facts.depth_cm, facts.entrance_ssd_cm, facts.cutout};
  const PointDose dose = compute_electron_dose(data, applicator, inputs);
  r.segments = {single_part(r, facts, dose)};
  r.inputs = r.segments.front().inputs;
  r.dose = dose;
  r.computed_dose_gy = util::cgy_to_gy(dose.dose_cgy);
  r.equivalent_square_dose_gy = r.computed_dose_gy;
  r.dose_computed = true;
  add_electron_approximations(facts, r);
  r.electron = std::move(facts);
  return {};
}

}  // namespace countersign::engine::stages
