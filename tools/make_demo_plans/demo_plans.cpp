// The INVENTED demo plans of the fictional Fernhollow Radiotherapy Unit. Patients are phantoms;
// nothing here describes a real person, clinic or machine.

#include "plan_spec.hpp"
#include "planner.hpp"

#include <demo_linac/model.hpp>

#include <cmath>
#include <numbers>

namespace make_demo_plans {

namespace {

constexpr int leaf_pairs = demo_linac::mlc_leaf_pairs;

// Two static control points.
std::vector<ControlPointSpec> static_points(double gantry_deg, const std::vector<double>& mlc_mm = {}) {
  return {{gantry_deg, mlc_mm}, {gantry_deg, mlc_mm}};
}

// An MLC aperture: for each leaf pair whose centre lies within |y| <= half_height_mm, open from
// -half_width(y) to +half_width(y) (+ shift); other pairs closed at the shift.
template <class HalfWidth>
std::vector<double> mlc_shape(HalfWidth half_width_mm, double shift_mm = 0.0) {
  const auto boundaries = leaf_boundaries_mm();
  std::vector<double> positions(2 * leaf_pairs);
  for (int i = 0; i < leaf_pairs; ++i) {
    const double centre = 0.5 * (boundaries[i] + boundaries[i + 1]);
    const double half = std::max(0.0, half_width_mm(centre));
    positions[i] = shift_mm - half;
    positions[leaf_pairs + i] = shift_mm + half;
  }
  return positions;
}

std::vector<double> rectangle_mlc(double half_x_mm, double half_y_mm) {
  return mlc_shape([=](double y) { return std::abs(y) < half_y_mm ? half_x_mm : 0.0; });
}

// The dose point in patient coordinates for a head-first-supine patient at couch 0 and
// collimator 0: the isocentre moved along the central axis to the point's plane and along IEC X.
std::array<double, 3> dose_point(const PlanSpec& plan, const BeamSpec& beam) {
  const double gantry_rad = beam.control_points.front().gantry_deg * std::numbers::pi / 180.0;
  const double beyond_iso_mm = beam.ssd_mm + beam.depth_mm - demo_linac::sad_cm * 10.0;
  // Source-to-isocentre direction for HFS (IEC 61217): (-sin g, cos g, 0) in patient x, y, z.
  const double ax = -std::sin(gantry_rad), ay = std::cos(gantry_rad);
  // IEC X of the collimator at gantry g, collimator 0, HFS: (cos g, sin g, 0).
  const double bx = std::cos(gantry_rad), by = std::sin(gantry_rad);
  const auto& iso = plan.isocenter_mm;
  auto micrometre = [](double mm) { return std::round(mm * 1000.0) / 1000.0 + 0.0; };
  return {micrometre(iso[0] + ax * beyond_iso_mm + bx * beam.off_axis_mm),
          micrometre(iso[1] + ay * beyond_iso_mm + by * beam.off_axis_mm), iso[2]};
}

void finish(PlanSpec& plan) {
  plan_doses(plan);
  for (auto& beam : plan.beams) {
    beam.dose_point_mm = (beam.off_axis_mm == 0.0 && beam.ssd_mm + beam.depth_mm == demo_linac::sad_cm * 10.0)
                             ? plan.isocenter_mm
                             : dose_point(plan, beam);
  }
}

BeamSpec open_beam(int number, const std::string& name, double energy_mv, double gantry_deg, double depth_mm,
                   double dose_gy, std::array<double, 4> jaws_mm) {
  BeamSpec beam;
  beam.number = number;
  beam.name = name;
  beam.description = "INVENTED demo beam";
  beam.energy_mv = energy_mv;
  beam.jaws_mm = jaws_mm;
  beam.control_points = static_points(gantry_deg);
  beam.depth_mm = depth_mm;
  beam.ssd_mm = demo_linac::sad_cm * 10.0 - depth_mm;
  beam.planned_dose_gy = dose_gy;
  return beam;
}

PlanSpec base(const std::string& file, const std::string& suffix, const std::string& label,
              const std::string& name, const std::string& patient_id, const std::string& patient_name) {
  PlanSpec plan;
  plan.file_name = file;
  plan.uid_suffix = suffix;
  plan.label = label;
  plan.name = name;
  plan.description = "INVENTED demo plan of the fictional Fernhollow Radiotherapy Unit; not for clinical use";
  plan.patient_id = patient_id;
  plan.patient_name = patient_name;
  return plan;
}

// 10 MV four-field box on a 200 mm (AP) x 300 mm (lateral) box phantom, isocentre at its centre.
// Beam 2 carries the deliberate +7 % MU copying error (README).
PlanSpec box_4field() {
  auto plan = base("fern_box_4field.dcm", "101", "BOX4", "Pelvis box 4F", "FERN-PH-0101", "PHANTOM^BOX");
  plan.isocenter_mm = {0.0, 0.0, 0.0};
  const std::array<double, 4> jaws{-60.0, 60.0, -50.0, 50.0};
  plan.beams = {open_beam(1, "AP", 10.0, 0.0, 100.0, 0.60, jaws),
                open_beam(2, "LAT-L", 10.0, 90.0, 150.0, 0.40, jaws),
                open_beam(3, "PA", 10.0, 180.0, 100.0, 0.60, jaws),
                open_beam(4, "LAT-R", 10.0, 270.0, 150.0, 0.40, jaws)};
  for (auto& beam : plan.beams) beam.jaw_kind = JawKind::symmetric_xy;
  plan.beams[1].mu_error_factor = 1.07;
  finish(plan);
  return plan;
}

// 6 MV single posterior field at SSD 1200 mm (FIXED_SSD), dose point 50 mm deep on the axis,
// one corner block on tray TRAY-A.
PlanSpec extended_ssd() {
  auto plan = base("fern_extended_ssd.dcm", "102", "SPINE-XSSD", "Spine extended SSD", "FERN-PH-0102",
                   "PHANTOM^SLAB");
  plan.setup_technique = "FIXED_SSD";
  plan.isocenter_mm = {0.0, 80.0, -150.0};
  plan.fractions = 10;
  BeamSpec beam = open_beam(1, "PA-SPINE", 6.0, 180.0, 50.0, 3.0, {-40.0, 40.0, -150.0, 150.0});
  beam.ssd_mm = 1200.0;
  beam.fixed_ssd = true;
  beam.tray_id = "TRAY-A";
  plan.beams = {beam};
  finish(plan);
  return plan;
}

// 6 MV wedged pair (W30) at gantry 45 and 315, depth 70 mm; feet-first supine.
PlanSpec wedged_pair() {
  auto plan =
      base("fern_wedged_pair.dcm", "103", "WPAIR", "Wedged pair W30", "FERN-PH-0103", "PHANTOM^WEDGE");
  plan.patient_position = "FFS";
  plan.isocenter_mm = {35.0, -20.0, 110.0};
  plan.fractions = 30;
  const std::array<double, 4> jaws{-40.0, 40.0, -40.0, 40.0};
  plan.beams = {open_beam(1, "RAO-W30", 6.0, 315.0, 70.0, 1.0, jaws),
                open_beam(2, "LAO-W30", 6.0, 45.0, 70.0, 1.0, jaws)};
  plan.beams[0].wedge_id = "W30";
  plan.beams[0].wedge_orientation_deg = 90.0;
  plan.beams[1].wedge_id = "W30";
  plan.beams[1].wedge_orientation_deg = 270.0;
  finish(plan);
  return plan;
}

// 6 MV asymmetric half-beam (X1 = 0), dose point 50 mm off axis in the open half, depth 60 mm.
PlanSpec half_beam() {
  auto plan =
      base("fern_half_beam.dcm", "104", "HALFBEAM", "Half-beam block", "FERN-PH-0104", "PHANTOM^HALF");
  plan.isocenter_mm = {-10.0, 0.0, 20.0};
  BeamSpec beam = open_beam(1, "AP-HALF", 6.0, 0.0, 60.0, 2.0, {0.0, 100.0, -75.0, 75.0});
  beam.off_axis_mm = 50.0;
  plan.beams = {beam};
  finish(plan);
  return plan;
}

// 6 MV static MLC-shaped field (a rounded shape inside 120 x 120 mm jaws); head-first prone.
PlanSpec static_mlc() {
  auto plan =
      base("fern_static_mlc.dcm", "105", "MLC-STATIC", "MLC shaped field", "FERN-PH-0105", "PHANTOM^PRONE");
  plan.patient_position = "HFP";
  plan.isocenter_mm = {5.0, 40.0, -60.0};
  BeamSpec beam = open_beam(1, "PA-MLC", 6.0, 0.0, 80.0, 2.0, {-60.0, 60.0, -60.0, 60.0});
  beam.has_mlc = true;
  const auto shape =
      mlc_shape([](double y) { return std::abs(y) < 50.0 ? std::sqrt(50.0 * 50.0 - y * y) + 5.0 : 0.0; });
  beam.control_points = static_points(0.0, shape);
  plan.beams = {beam};
  finish(plan);
  return plan;
}

// 6 MV step-and-shoot: three beams on a cylindrical phantom (radius 100 mm, isocentre at its axis,
// so every beam has depth 100 mm), three segments each.
PlanSpec step_and_shoot() {
  auto plan =
      base("fern_step_shoot.dcm", "106", "SMLC-3F", "Step and shoot 3F", "FERN-PH-0106", "PHANTOM^CYLINDER");
  plan.isocenter_mm = {0.0, 0.0, 0.0};
  int number = 1;
  for (const double gantry : {0.0, 120.0, 240.0}) {
    BeamSpec beam = open_beam(number, "SMLC-G" + std::to_string(static_cast<int>(gantry)), 6.0, gantry, 100.0,
                              2.0 / 3.0, {-50.0, 50.0, -50.0, 50.0});
    beam.has_mlc = true;
    const std::vector<std::vector<double>> segments{rectangle_mlc(50.0, 50.0), rectangle_mlc(30.0, 50.0),
                                                    rectangle_mlc(50.0, 20.0)};
    beam.control_points.clear();
    for (const auto& segment : segments) {
      beam.control_points.push_back({gantry, segment});
      beam.control_points.push_back({gantry, segment});
    }
    beam.segment_weights = {0.5, 0.3, 0.2};
    plan.beams.push_back(beam);
    ++number;
  }
  finish(plan);
  return plan;
}

// 6 MV two-arc modulated plan on the cylindrical phantom: arc 1 CW 190 -> 170, arc 2 CC back,
// control points every 20 degrees, leaf gap varying smoothly with gantry angle.
PlanSpec two_arcs() {
  auto plan =
      base("fern_two_arc.dcm", "107", "ARC2", "Two-arc modulated", "FERN-PH-0107", "PHANTOM^CYLINDER");
  plan.isocenter_mm = {0.0, 0.0, 0.0};
  for (int arc = 0; arc < 2; ++arc) {
    BeamSpec beam = open_beam(arc + 1, arc == 0 ? "ARC-CW" : "ARC-CC", 6.0, 190.0, 100.0, 1.0,
                              {-60.0, 60.0, -60.0, 60.0});
    beam.has_mlc = true;
    beam.gantry_rotation = arc == 0 ? "CW" : "CC";
    beam.control_points.clear();
    for (int i = 0; i < 18; ++i) {
      const double step = arc == 0 ? 20.0 * i : 340.0 - 20.0 * i;
      const double gantry = std::fmod(190.0 + step, 360.0);
      const double phase = gantry * std::numbers::pi / 180.0;
      const double half = 35.0 + 15.0 * std::cos(phase) * (arc == 0 ? 1.0 : -1.0);
      beam.control_points.push_back({gantry, mlc_shape([half](double y) {
                                       return std::abs(y) < 45.0 ? half - 0.2 * std::abs(y) : 0.0;
                                     })});
    }
    plan.beams.push_back(beam);
  }
  finish(plan);
  return plan;
}

// A treatment beam plus two setup (imaging) beams without MU.
PlanSpec with_setup_beams() {
  auto plan =
      base("fern_setup_beam.dcm", "108", "SETUP+1F", "With setup beams", "FERN-PH-0108", "PHANTOM^SETUP");
  plan.isocenter_mm = {0.0, 0.0, 0.0};
  plan.beams = {open_beam(1, "AP", 6.0, 0.0, 100.0, 2.0, {-50.0, 50.0, -50.0, 50.0}),
                open_beam(2, "SETUP-AP", 6.0, 0.0, 100.0, 0.0, {-100.0, 100.0, -100.0, 100.0}),
                open_beam(3, "SETUP-LAT", 6.0, 270.0, 150.0, 0.0, {-100.0, 100.0, -100.0, 100.0})};
  plan.beams[1].delivery_type = "SETUP";
  plan.beams[2].delivery_type = "SETUP";
  finish(plan);
  return plan;
}

// Opposed pair on a 200 mm slab, one plan per dose-point layout.
PlanSpec dose_point_layout(DosePointLayout layout, const std::string& file, const std::string& suffix,
                           const std::string& label, double energy_mv) {
  auto plan =
      base(file, suffix, label, "Dose point layout", "FERN-PH-01" + suffix.substr(1), "PHANTOM^LAYOUT");
  plan.layout = layout;
  plan.isocenter_mm = {0.0, 15.0, -40.0};
  const std::array<double, 4> jaws{-50.0, 50.0, -70.0, 70.0};
  plan.beams = {open_beam(1, "AP", energy_mv, 0.0, 100.0, 1.0, jaws),
                open_beam(2, "PA", energy_mv, 180.0, 100.0, 1.0, jaws)};
  finish(plan);
  return plan;
}

}  // namespace

std::vector<PlanSpec> demo_plans() {
  return {box_4field(),
          extended_ssd(),
          wedged_pair(),
          half_beam(),
          static_mlc(),
          step_and_shoot(),
          two_arcs(),
          with_setup_beams(),
          dose_point_layout(DosePointLayout::referenced_beam_2012, "fern_dosepoint_2012.dcm", "109",
                            "DP-2012", 6.0),
          dose_point_layout(DosePointLayout::fraction_verification, "fern_dosepoint_fraction.dcm", "110",
                            "DP-FRACTION", 10.0),
          dose_point_layout(DosePointLayout::beam_level, "fern_dosepoint_beam.dcm", "111", "DP-BEAM", 6.0)};
}

}  // namespace make_demo_plans
