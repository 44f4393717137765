// Stage 8, segments: the meterset split into parts (one per delivering pair of control points, arcs
// in gantry steps), each part through apertures, scatter, primary and formula, the doses summed.

#include "stages.hpp"

#include <countersign/patient/batho.hpp>

#include <countersign/util/assert.hpp>
#include <countersign/util/units.hpp>

#include <algorithm>
#include <cmath>

namespace countersign::engine::stages {

namespace {

namespace attribute = plan::attribute;

// Signed rotation from a to b, following the stated direction when there is one.
double rotation_step_deg(double from_deg, double to_deg, plan::RotationDirection direction) {
  double step = std::fmod(to_deg - from_deg, 360.0);
  if (direction == plan::RotationDirection::cw) {
    if (step < 0.0) step += 360.0;
  } else if (direction == plan::RotationDirection::cc) {
    if (step > 0.0) step -= 360.0;
  } else {
    if (step > 180.0) step -= 360.0;
    if (step < -180.0) step += 360.0;
  }
  return step;
}

double wrap_deg(double angle_deg) {
  const double a = std::fmod(angle_deg, 360.0);
  return a < 0.0 ? a + 360.0 : a;
}

// An angle a fraction t of the way from a to b in the stated direction.
std::optional<double> angle_between(const std::optional<double>& a, const std::optional<double>& b,
                                    const plan::Coded<plan::RotationDirection>& direction, double t) {
  if (!a || !b) return a;
  return wrap_deg(*a + t * rotation_step_deg(*a, *b, direction.value));
}

// A control point between a and b at fraction t: angles and device positions interpolated linearly.
plan::ControlPoint interpolate(const plan::ControlPoint& a, const plan::ControlPoint& b, double t) {
  plan::ControlPoint c = a;
  c.gantry_deg = angle_between(a.gantry_deg, b.gantry_deg, a.gantry_rotation, t);
  c.collimator_deg = angle_between(a.collimator_deg, b.collimator_deg, a.collimator_rotation, t);
  c.couch_deg = angle_between(a.couch_deg, b.couch_deg, a.couch_rotation, t);
  for (plan::DevicePositions& d : c.devices) {
    const plan::DevicePositions* other = b.device(d.type);
    if (other == nullptr || other->positions_mm.size() != d.positions_mm.size()) continue;
    for (std::size_t i = 0; i < d.positions_mm.size(); ++i) {
      d.positions_mm[i] += t * (other->positions_mm[i] - d.positions_mm[i]);
    }
  }
  if (a.ssd_mm && b.ssd_mm) c.ssd_mm = *a.ssd_mm + t * (*b.ssd_mm - *a.ssd_mm);
  return c;
}

CalculationProblem at_control_point(ProblemKind kind, int control_point) {
  CalculationProblem problem;
  problem.kind = kind;
  problem.control_point = control_point;
  return problem;
}

// The part's depths and SSD: from its own ray through the CT when there is one (control point 0's
// when the part has its geometry), else control point 0's depth moved by the part's distances.
bool same_jaws(const geometry::JawOpening& a, const geometry::JawOpening& b) {
  return a.x1_mm == b.x1_mm && a.x2_mm == b.x2_mm && a.y1_mm == b.y1_mm && a.y2_mm == b.y2_mm;
}

// Batho's factor (modified power law, TMR at X_m + dmax) on the part's own ray, times the homogeneous
// dose at the geometric depth.
StageResult<void> apply_batho(const beamdata::BeamData& data, const PointDose& homogeneous, Segment& s) {
  const double field_cm = homogeneous.fields.point_cm;
  const auto tmr = [&data, field_cm](double depth_cm) { return data.tmr.at(depth_cm, field_cm).value; };
  const std::optional<double> factor =
      patient::batho_correction(util::checked(s.ct).layers, tmr, patient::BathoForm::modified, data.dmax_cm);
  if (!factor) {
    CalculationProblem problem = at_control_point(ProblemKind::batho_not_computable, s.from_control_point);
    problem.library_beam = data.id;
    return problem;
  }
  s.batho_factor = *factor;
  s.dose = homogeneous;
  s.dose.dose_per_mu_cgy *= *factor;
  s.dose.dose_cgy *= *factor;
  return {};
}

StageResult<PartDepths> part_depths(const plan::ControlPoint& cp, const geometry::BeamFrame& frame,
                                    const DosePoint& point, const geometry::Aperture& aperture,
                                    double ssd0_mm, const patient::PatientModel* model, const BeamDose& r,
                                    Segment& s) {
  if (r.patient) {
    const geometry::BeamFrame frame0(r.patient_position.value_or(geometry::PatientPosition::hfs), r.angles,
                                     r.isocenter_mm, r.sad_mm);
    const bool same_ray = (frame.source_in_patient_mm() - frame0.source_in_patient_mm()).norm() < 1e-6 &&
                          same_jaws(aperture.jaws(), r.aperture.jaws());
    if (!same_ray) {
      TRY_ASSIGN(
          s.ct, trace_ct(util::checked(model), frame, point.point_mm, aperture.jaws(), s.from_control_point));
    } else {
      s.ct = r.patient->ray;
    }
    s.ssd_mm = s.ct->ssd_mm;
    return ct_part_depths(*s.ct, r.patient->method);
  }
  s.ssd_mm = cp.ssd_mm.value_or(ssd0_mm);
  const double depth_mm = part_depth_mm(r, s.point.spd_mm, s.ssd_mm, ssd0_mm);
  const double geometric_mm =
      r.depth.geometric_depth_mm ? depth_mm - r.depth.depth_mm + *r.depth.geometric_depth_mm : depth_mm;
  return PartDepths{depth_mm, geometric_mm};
}

// One part through stages 4-7 (apertures, scatter, primary, formula).
StageResult<Segment> compute_part(const plan::Beam& beam, const DosePoint& point,
                                  const ResolvedBeam& resolved, const PartPlan& part, double ssd0_mm,
                                  const EngineOptions& options, const BeamDose& r) {
  const double max_sector_deg = options.max_sector_deg;
  const patient::PatientModel* model = options.patient;
  const plan::ControlPoint& cp = part.geometry();
  const plan::ControlPoint& cp0 = beam.control_points.front();
  Segment s;
  s.from_control_point = part.from_control_point;
  s.meterset_mu = part.meterset_mu;
  s.angles = {cp.gantry_deg.value_or(r.angles.gantry_deg),
              cp.collimator_deg.value_or(r.angles.collimator_deg), cp.couch_deg.value_or(r.angles.couch_deg)};
  const geometry::BeamFrame frame(resolved.position, s.angles, cp.isocenter_mm.value_or(r.isocenter_mm),
                                  r.sad_mm);
  s.point = frame.locate(point.point_mm);
  if (s.point.spd_mm <= 0.0)
    return at_control_point(ProblemKind::point_not_in_front_of_source, s.from_control_point);

  // Control point 0's opening is already built; other parts build their own.
  std::optional<geometry::Aperture> own;
  if (&cp != &cp0 && !same_geometry(cp, cp0))
    TRY_ASSIGN(own, aperture_at(beam, cp, s.from_control_point, *resolved.data));
  const geometry::Aperture& aperture = own ? *own : r.aperture;
  s.jaws = aperture.jaws();
  s.open_area_mm2 = aperture.area_mm2();
  s.open_perimeter_mm = aperture.perimeter_mm();
  s.edge_distance_mm = aperture.distance_to_edge_mm(s.point.iso_plane_x_mm, s.point.iso_plane_y_mm);

  const PrimaryPath path = primary_path(aperture, s.point, r.features.modulated, resolved);
  s.point_in_opening = path.in_opening;
  s.point_in_jaws = path.in_jaws;
  PartDepths depths;
  TRY_ASSIGN(depths, part_depths(cp, frame, point, aperture, ssd0_mm, model, r, s));
  s.depth_mm = depths.dose_depth_mm;
  if (s.depth_mm <= 0.0) {
    CalculationProblem problem = at_control_point(ProblemKind::point_not_below_surface, s.from_control_point);
    problem.plan_value = s.depth_mm;
    return problem;
  }

  const bool sectors = shaped_field(aperture, resolved) && path.counted;
  const SectorSetup setup{s.point,        s.depth_mm, s.point.spd_mm, r.sad_mm,
                          max_sector_deg, &options,   &frame,         point.point_mm};
  const ScatterInputs scatter = scatter_inputs(aperture, resolved, sectors ? &setup : nullptr);
  const PartGeometry geometry{s.meterset_mu,         s.depth_mm,
                              s.point.spd_mm,        s.ssd_mm,
                              s.point.off_axis_mm,   s.point.iso_plane_x_mm,
                              s.point.iso_plane_y_mm};
  s.inputs = formula_inputs(r, resolved, geometry, scatter, path);
  if (!path.counted) {
    s.dose.method = r.method;  // outside the jaws: no dose counted
    return s;
  }
  TRY(require_oar(*resolved.data, s.point));
  s.dose = compute_point_dose(*resolved.data, s.inputs);
  s.equivalent_square_dose_cgy = s.dose.dose_cgy;
  if (scatter.sectors) {
    s.scatter_method = ScatterMethod::sector_integration;
    s.sectors = scatter.sectors;
    s.primary = scatter.sectors->sp0 * scatter.sectors->tmr0 * scatter.sectors->primary_transmission *
                s.dose.factors.oar.value;
    apply_sector_scatter(*resolved.data, s.inputs, *scatter.sectors, s.dose);
  }
  s.homogeneous_dose_cgy = s.dose.dose_cgy;
  if (depths.geometric_depth_mm != depths.dose_depth_mm ||
      (r.patient && r.patient->method == Heterogeneity::batho)) {
    PartGeometry water = geometry;
    water.depth_mm = depths.geometric_depth_mm;
    const DoseInputs water_inputs = formula_inputs(r, resolved, water, scatter, path);
    PointDose homogeneous = compute_point_dose(*resolved.data, water_inputs);
    // The sectors were summed at the dose depth; their ratio to the equivalent square is taken to
    // hold at the geometric depth too (the homogeneous column is shown for comparison only).
    if (scatter.sectors) apply_sector_scatter(*resolved.data, water_inputs, *scatter.sectors, homogeneous);
    s.homogeneous_dose_cgy = homogeneous.dose_cgy;
    if (r.patient && r.patient->method == Heterogeneity::batho)
      TRY(apply_batho(*resolved.data, homogeneous, s));
  }
  return s;
}

// What a shaped or modulated beam needs from the library before any part is computed: the MLC
// transmission and the leaf-end offset (the contract gives neither a default).
StageResult<void> require_mlc_data(const MetersetSplit& split, const ResolvedBeam& resolved) {
  const beamdata::BeamData& data = *resolved.data;
  const bool leaves = std::any_of(split.parts.begin(), split.parts.end(), [](const PartPlan& p) {
    return p.geometry().device(plan::DeviceType::mlcx) != nullptr;
  });
  if (!leaves || (data.mlc_transmission && data.mlc_leaf_end_offset_mm)) return {};
  CalculationProblem problem;
  problem.kind =
      data.mlc_transmission ? ProblemKind::leaf_end_offset_missing : ProblemKind::mlc_transmission_missing;
  problem.library_beam = data.id;
  problem.machine = resolved.machine->name;
  return problem;
}

}  // namespace

const plan::ControlPoint& PartPlan::geometry() const {
  return interpolated ? *interpolated : util::checked(control_point);
}

bool same_geometry(const plan::ControlPoint& a, const plan::ControlPoint& b) {
  if (a.gantry_deg != b.gantry_deg || a.collimator_deg != b.collimator_deg || a.couch_deg != b.couch_deg ||
      a.isocenter_mm != b.isocenter_mm || a.ssd_mm != b.ssd_mm || a.devices.size() != b.devices.size()) {
    return false;
  }
  for (const plan::DevicePositions& d : a.devices) {
    const plan::DevicePositions* other = b.device(d.type);
    if (other == nullptr || other->positions_mm != d.positions_mm) return false;
  }
  return true;
}

StageResult<MetersetSplit> split_meterset(const plan::Beam& beam, double meterset_mu) {
  const double final_weight = beam.final_cumulative_meterset_weight.value_or(
      beam.control_points.back().cumulative_meterset_weight.value_or(0.0));
  if (!(final_weight > 0.0)) {
    CalculationProblem problem;
    problem.kind = ProblemKind::final_weight_unusable;
    problem.attribute = attribute::final_cumulative_meterset_weight;
    return problem;
  }
  MetersetSplit split;
  const plan::ControlPoint& cp0 = beam.control_points.front();
  if (beam.control_points.size() == 1) split.parts.push_back({cp0.index, meterset_mu, &cp0, std::nullopt});
  for (std::size_t i = 0; i + 1 < beam.control_points.size(); ++i) {
    const plan::ControlPoint& a = beam.control_points[i];
    const plan::ControlPoint& b = beam.control_points[i + 1];
    if (!a.cumulative_meterset_weight || !b.cumulative_meterset_weight) {
      return missing_value(attribute::cumulative_meterset_weight, PlanScope::control_point, b.index);
    }
    const double weight = *b.cumulative_meterset_weight - *a.cumulative_meterset_weight;
    if (weight <= 1e-9 * final_weight) continue;
    const double gantry_step = (a.gantry_deg && b.gantry_deg)
                                   ? rotation_step_deg(*a.gantry_deg, *b.gantry_deg, a.gantry_rotation.value)
                                   : 0.0;
    if (std::abs(gantry_step) > 1e-6) split.moving = true;
    const int steps =
        std::max(1, static_cast<int>(std::ceil(std::abs(gantry_step) / max_arc_step_deg - 1e-9)));
    const double part_mu = meterset_mu * weight / final_weight / steps;
    if (steps == 1 && same_geometry(a, b)) {
      split.parts.push_back({a.index, part_mu, &a, std::nullopt});
      continue;
    }
    for (int k = 0; k < steps; ++k) {
      split.parts.push_back({a.index, part_mu, nullptr, interpolate(a, b, (k + 0.5) / steps)});
    }
  }
  if (split.parts.empty()) {
    CalculationProblem problem;
    problem.kind = ProblemKind::no_delivered_meterset;
    return problem;
  }
  return split;
}

StageResult<void> compute_segments(const plan::Beam& beam, const DosePoint& point,
                                   const ResolvedBeam& resolved, const MetersetSplit& split,
                                   const EngineOptions& options, BeamDose& r) {
  TRY(require_mlc_data(split, resolved));
  const double ssd0_mm = surface_distance_mm(r);
  r.segments.reserve(split.parts.size());
  double total_cgy = 0.0;
  double equivalent_square_cgy = 0.0;
  double homogeneous_cgy = 0.0;
  for (const PartPlan& part : split.parts) {
    Segment s;
    TRY_ASSIGN(s, compute_part(beam, point, resolved, part, ssd0_mm, options, r));
    total_cgy += s.dose.dose_cgy;
    equivalent_square_cgy += s.equivalent_square_dose_cgy;
    homogeneous_cgy += s.homogeneous_dose_cgy;
    r.segments.push_back(std::move(s));
  }
  r.computed_dose_gy = util::cgy_to_gy(total_cgy);
  if (r.depth.geometric_depth_mm || r.patient) r.homogeneous_dose_gy = util::cgy_to_gy(homogeneous_cgy);
  double near_edge_mu = 0.0;
  double counted_mu = 0.0;
  for (const Segment& s : r.segments) {
    if (s.point_in_opening || s.point_in_jaws) counted_mu += s.meterset_mu;
    if (s.point_in_jaws && s.edge_distance_mm < options.segment_edge_distance_mm)
      near_edge_mu += s.meterset_mu;
  }
  r.edge_meterset_share = counted_mu > 0.0 ? near_edge_mu / counted_mu : 0.0;
  r.equivalent_square_dose_gy = util::cgy_to_gy(equivalent_square_cgy);
  r.sector_vs_equivalent_square_percent =
      equivalent_square_cgy > 0.0 ? 100.0 * (total_cgy - equivalent_square_cgy) / equivalent_square_cgy : 0.0;
  return {};
}

}  // namespace countersign::engine::stages
