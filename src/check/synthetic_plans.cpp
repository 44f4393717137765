#include <countersign/check/synthetic_plans.hpp>

#include <countersign/util/units.hpp>

#include <fmt/format.h>

#include <cmath>

namespace countersign::check {

namespace {

constexpr double depth_mm = 100.0;      // every point 10 cm deep (well past dmax, inside every table)
constexpr double half_field_mm = 50.0;  // 10 x 10 cm fields
constexpr int leaf_pairs = 40;
constexpr double leaf_width_mm = 10.0;

enum class Shape { open, off_axis, fixed_ssd, static_mlc, step_and_shoot, arc };

struct Spec {
  Shape shape = Shape::open;
  const beamdata::WedgeData* wedge = nullptr;
  const beamdata::TrayData* tray = nullptr;
};

plan::DevicePositions device(const char* type, std::vector<double> positions) {
  return {plan::parse_term<plan::DeviceType>(type), std::move(positions)};
}

// Leaves closed to the given opening in x for every pair whose centre lies within |y| < half_y.
std::vector<double> leaves(double x1, double x2, double half_y) {
  std::vector<double> a;
  std::vector<double> b;
  for (int i = 0; i < leaf_pairs; ++i) {
    const double centre = -200.0 + leaf_width_mm * (i + 0.5);
    const bool open = std::abs(centre) < half_y;
    a.push_back(open ? x1 : -1.0);
    b.push_back(open ? x2 : 1.0);
  }
  a.insert(a.end(), b.begin(), b.end());
  return a;
}

plan::ControlPoint control_point(int index, double weight, double gantry_deg, double ssd_mm,
                                 double energy_mv) {
  plan::ControlPoint cp;
  cp.index = index;
  cp.nominal_energy_mv = energy_mv;
  cp.dose_rate_mu_per_min = 600.0;
  cp.gantry_deg = gantry_deg;
  cp.gantry_rotation = plan::parse_term<plan::RotationDirection>("NONE");
  cp.collimator_deg = 0.0;
  cp.collimator_rotation = plan::parse_term<plan::RotationDirection>("NONE");
  cp.couch_deg = 0.0;
  cp.couch_rotation = plan::parse_term<plan::RotationDirection>("NONE");
  cp.isocenter_mm = plan::PointMm{0.0, 0.0, 0.0};
  cp.ssd_mm = ssd_mm;
  cp.cumulative_meterset_weight = weight;
  return cp;
}

// The control points of each shape (jaws always; MLC where the shape has one).
std::vector<plan::ControlPoint> control_points(Shape shape, double ssd_mm, double energy_mv) {
  std::vector<plan::ControlPoint> cps;
  const double h = half_field_mm;
  const auto jaws = [&](plan::ControlPoint& cp, double x1, double x2) {
    cp.devices.push_back(device("ASYMX", {x1, x2}));
    cp.devices.push_back(device("ASYMY", {-h, h}));
  };
  switch (shape) {
    case Shape::open:
    case Shape::fixed_ssd:
    case Shape::off_axis: {
      const double x2 = shape == Shape::off_axis ? 2.0 * h + 20.0 : h;  // off axis: point 40 mm out, 80 mm in
      for (int i = 0; i < 2; ++i) {
        plan::ControlPoint cp = control_point(i, i, 0.0, ssd_mm, energy_mv);
        jaws(cp, -h, x2);
        cps.push_back(cp);
      }
      break;
    }
    case Shape::static_mlc:
      for (int i = 0; i < 2; ++i) {
        plan::ControlPoint cp = control_point(i, i, 0.0, ssd_mm, energy_mv);
        jaws(cp, -h - 10.0, h + 10.0);
        cp.devices.push_back(device("MLCX", leaves(-h, h, h)));
        cps.push_back(cp);
      }
      break;
    case Shape::step_and_shoot: {
      const std::vector<double> halves{h, 0.8 * h, 0.6 * h};  // three segments, all around the point
      int index = 0;
      for (std::size_t s = 0; s < halves.size(); ++s) {
        for (int end = 0; end < 2; ++end) {
          const double weight = (static_cast<double>(s) + end) / static_cast<double>(halves.size());
          plan::ControlPoint cp = control_point(index++, weight, 0.0, ssd_mm, energy_mv);
          jaws(cp, -h, h);
          cp.devices.push_back(device("MLCX", leaves(-halves[s], halves[s], halves[s])));
          cps.push_back(cp);
        }
      }
      break;
    }
    case Shape::arc:
      for (int i = 0; i < 5; ++i) {
        // 340 -> 20 degrees clockwise through 0 (a cylinder about the isocentre: SSD constant).
        plan::ControlPoint cp =
            control_point(i, i / 4.0, std::fmod(340.0 + 10.0 * i, 360.0), ssd_mm, energy_mv);
        cp.gantry_rotation = plan::parse_term<plan::RotationDirection>(i < 4 ? "CW" : "NONE");
        jaws(cp, -h, h);
        cps.push_back(cp);
      }
      break;
  }
  return cps;
}

std::vector<plan::BeamLimitingDevice> devices(Shape shape) {
  std::vector<plan::BeamLimitingDevice> out;
  out.push_back({plan::parse_term<plan::DeviceType>("ASYMX"), std::nullopt, 1, {}});
  out.push_back({plan::parse_term<plan::DeviceType>("ASYMY"), std::nullopt, 1, {}});
  if (shape == Shape::static_mlc || shape == Shape::step_and_shoot) {
    std::vector<double> boundaries;
    for (int i = 0; i <= leaf_pairs; ++i) boundaries.push_back(-200.0 + leaf_width_mm * i);
    out.push_back({plan::parse_term<plan::DeviceType>("MLCX"), std::nullopt, leaf_pairs, boundaries});
  }
  return out;
}

const char* shape_name(Shape shape) {
  switch (shape) {
    case Shape::open:
      return "isocentric on axis";
    case Shape::off_axis:
      return "isocentric off axis";
    case Shape::fixed_ssd:
      return "fixed SSD on axis";
    case Shape::static_mlc:
      return "static MLC";
    case Shape::step_and_shoot:
      return "step-and-shoot";
    case Shape::arc:
      return "arc";
  }
  return "?";
}

SyntheticPlan make_plan(const beamdata::Machine& machine, const beamdata::BeamData& data, const Spec& spec,
                        int serial) {
  const double sad_mm = util::cm_to_mm(machine.sad_cm);
  const bool fixed_ssd = spec.shape == Shape::fixed_ssd;
  // Isocentric: the isocentre 10 cm deep. Fixed SSD: the surface at the PDD table's SSD, the
  // isocentre on the surface... the point 10 cm deep on the axis either way.
  const double ssd_mm = fixed_ssd ? util::cm_to_mm(data.pdd_ssd_cm) : sad_mm - depth_mm;
  const double point_y_mm = ssd_mm + depth_mm - sad_mm;  // along +y (gantry 0, HFS: away from the source)
  const double point_x_mm = spec.shape == Shape::off_axis ? 40.0 * (ssd_mm + depth_mm) / sad_mm : 0.0;
  const double spd_mm = ssd_mm + depth_mm;
  const double ray_scale = std::hypot(spd_mm, point_x_mm) / spd_mm;

  SyntheticPlan out;
  std::string accessory = spec.wedge != nullptr ? " wedge " + spec.wedge->id : "";
  if (spec.tray != nullptr) accessory += " tray " + spec.tray->id;
  out.name = fmt::format("{} {} {}{}", machine.name, data.id, shape_name(spec.shape), accessory);
  plan::Plan& p = out.plan;
  p.source_file = fmt::format("selftest-{:03d}.dcm", serial);
  p.sop_class_uid = "1.2.840.10008.5.1.4.1.1.481.5";
  p.sop_instance_uid = fmt::format("2.25.{}{:03d}", 1000000 + serial, serial);
  p.patient_id = "SELFTEST";
  p.specific_character_set = "ISO_IR 192";  // what the writer declares: the model's text is UTF-8
  p.date = "20260101";
  p.patient_name = "SELFTEST^PHANTOM";
  p.label = fmt::format("ST{:03d}", serial);
  p.name = out.name;
  p.geometry = "TREATMENT_DEVICE";
  p.approval_status = "UNAPPROVED";
  p.manufacturer = "countersign selftest (synthetic water phantom)";
  p.patient_setups.push_back({1, plan::parse_term<plan::PatientPosition>("HFS"),
                              plan::parse_term<plan::SetupTechnique>(fixed_ssd ? "FIXED_SSD" : "ISOCENTRIC"),
                              ""});
  plan::ReferencedBeam rb;
  rb.beam_number = 1;
  rb.meterset_mu = 100.0;
  rb.dose_specification_point_mm = plan::PointMm{point_x_mm, point_y_mm, 0.0};
  rb.distances_in_referenced_beam.depth_mm = depth_mm * ray_scale;
  rb.distances_in_referenced_beam.ssd_mm = ssd_mm * ray_scale;
  p.fraction_groups.push_back({1, 1, plan::parse_term<plan::BeamDoseMeaning>("BEAM_LEVEL"), {rb}});

  plan::Beam beam;
  beam.number = 1;
  beam.name = fmt::format("ST-{}", serial);
  beam.machine_name = machine.name;
  beam.radiation_type = plan::parse_term<plan::RadiationType>(data.radiation);
  beam.delivery_type = plan::parse_term<plan::DeliveryType>("TREATMENT");
  const bool moving = spec.shape == Shape::step_and_shoot || spec.shape == Shape::arc;
  beam.beam_type = plan::parse_term<plan::BeamType>(moving ? "DYNAMIC" : "STATIC");
  beam.primary_dosimeter_unit = plan::parse_term<plan::DosimeterUnit>("MU");
  beam.sad_mm = sad_mm;
  beam.beam_limiting_devices = devices(spec.shape);
  beam.control_points = control_points(spec.shape, ssd_mm, data.energy_mv);
  if (spec.wedge != nullptr) {
    beam.wedges.push_back({1, plan::parse_term<plan::WedgeType>(wedge_type(*spec.wedge)), spec.wedge->id,
                           spec.wedge->angle_deg, std::nullopt, 0.0});
    for (plan::ControlPoint& cp : beam.control_points)
      cp.wedge_positions.push_back({1, plan::parse_term<plan::WedgePositionState>("IN")});
  }
  if (spec.tray != nullptr) beam.blocks.push_back(tray_marker_block(spec.tray->id));
  beam.final_cumulative_meterset_weight = beam.control_points.back().cumulative_meterset_weight;
  beam.referenced_patient_setup_number = 1;
  p.beams.push_back(std::move(beam));
  return out;
}

}  // namespace

plan::Block tray_marker_block(const std::string& tray_id) {
  plan::Block block;
  block.number = 1;
  block.tray_id = tray_id;
  block.type = plan::parse_term<plan::BlockType>("SHIELDING");
  block.divergence = plan::parse_term<plan::BlockDivergence>("PRESENT");
  block.source_to_tray_mm = 650.0;
  block.material_id = "ALLOY";
  block.thickness_mm = 75.0;
  block.transmission = 0.05;
  block.outline_mm = {{300.0, 300.0}, {310.0, 300.0}, {310.0, 310.0}, {300.0, 310.0}};
  return block;
}

const char* wedge_type(const beamdata::WedgeData& wedge) {
  return wedge.kind == beamdata::WedgeKind::dynamic ? "DYNAMIC" : "STANDARD";
}

std::vector<SyntheticPlan> synthetic_plans(const beamdata::Library& library) {
  std::vector<SyntheticPlan> plans;
  int serial = 0;
  for (const beamdata::Machine& machine : library.machines) {
    for (const beamdata::BeamData& data : machine.beams) {
      for (Shape shape : {Shape::open, Shape::off_axis, Shape::fixed_ssd, Shape::static_mlc,
                          Shape::step_and_shoot, Shape::arc}) {
        plans.push_back(make_plan(machine, data, {shape, nullptr, nullptr}, ++serial));
      }
      for (const beamdata::WedgeData& wedge : data.wedges)
        plans.push_back(make_plan(machine, data, {Shape::open, &wedge, nullptr}, ++serial));
      for (const beamdata::TrayData& tray : data.trays)
        plans.push_back(make_plan(machine, data, {Shape::open, nullptr, &tray}, ++serial));
    }
  }
  return plans;
}

}  // namespace countersign::check
