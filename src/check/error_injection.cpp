#include <countersign/check/error_injection.hpp>
#include <countersign/check/synthetic_plans.hpp>

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <numbers>

namespace countersign::check {

namespace {

constexpr double absent_energy_step_mv = 4.0;  // used when the library has no other energy

plan::ReferencedBeam* referenced_beam(plan::Plan& plan, int group_number, int beam_number) {
  for (plan::FractionGroup& group : plan.fraction_groups) {
    if (group.number != group_number) continue;
    for (plan::ReferencedBeam& rb : group.beams) {
      if (rb.beam_number == beam_number) return &rb;
    }
  }
  return nullptr;
}

plan::Beam* beam_of(plan::Plan& plan, int beam_number) {
  const auto it = std::find_if(plan.beams.begin(), plan.beams.end(),
                               [&](const plan::Beam& b) { return b.number == beam_number; });
  return it == plan.beams.end() ? nullptr : &*it;
}

const beamdata::BeamData* library_beam(const plan::Beam& beam, const beamdata::Library& library) {
  if (beam.control_points.empty() || !beam.control_points.front().nominal_energy_mv) return nullptr;
  return library
      .match(beam.machine_name, beam.radiation_type.text, *beam.control_points.front().nominal_energy_mv)
      .beam;
}

bool scale_meterset(plan::ReferencedBeam& rb, double percent, std::string& description) {
  if (!rb.meterset_mu) return false;
  const double before = *rb.meterset_mu;
  rb.meterset_mu = before * (1.0 + percent / 100.0);
  description = fmt::format("Beam Meterset (300A,0086) {:.2f} -> {:.2f} MU", before, *rb.meterset_mu);
  return true;
}

bool scale_beam_dose(plan::ReferencedBeam& rb, double percent, std::string& description) {
  if (!rb.dose_gy) return false;
  const double before = *rb.dose_gy;
  rb.dose_gy = before * (1.0 + percent / 100.0);
  description = fmt::format("Beam Dose (300A,0084) {:.4f} -> {:.4f} Gy", before, *rb.dose_gy);
  return true;
}

bool shift_ssd(plan::Beam& beam, double mm, std::string& description) {
  bool changed = false;
  for (plan::ControlPoint& cp : beam.control_points) {
    if (!cp.ssd_mm) continue;
    if (!changed)
      description = fmt::format("Source to Surface Distance (300A,0130) {:.1f} -> {:.1f} mm", *cp.ssd_mm,
                                *cp.ssd_mm + mm);
    cp.ssd_mm = *cp.ssd_mm + mm;
    changed = true;
  }
  return changed;
}

bool shift_depth(plan::ReferencedBeam& rb, plan::Beam& beam, double mm, std::string& description) {
  bool changed = false;
  const auto shift = [&](plan::DosePointDistances& d) {
    if (!d.depth_mm) return;
    if (!changed)
      description =
          fmt::format("Beam Dose Point Depth (300A,0088) {:.1f} -> {:.1f} mm", *d.depth_mm, *d.depth_mm + mm);
    d.depth_mm = *d.depth_mm + mm;
    if (d.equivalent_depth_mm) d.equivalent_depth_mm = *d.equivalent_depth_mm + mm;
    changed = true;
  };
  shift(rb.distances_in_referenced_beam);
  shift(rb.distances_in_verification_sequence);
  for (plan::BeamDoseReference& ref : beam.dose_references) shift(ref.distances);
  return changed;
}

bool change_energy(plan::Beam& beam, const beamdata::Library& library, Injection& out) {
  if (beam.control_points.empty() || !beam.control_points.front().nominal_energy_mv) return false;
  const double before = *beam.control_points.front().nominal_energy_mv;
  double after = before + absent_energy_step_mv;
  double best = std::numeric_limits<double>::infinity();
  if (const beamdata::Machine* machine = library.machine(beam.machine_name)) {
    for (const beamdata::BeamData& data : machine->beams) {
      const double distance = std::abs(data.energy_mv - before);
      if (data.radiation != beam.radiation_type.text || distance < 0.5 || distance >= best) continue;
      after = data.energy_mv;
      best = distance;
      out.energy_to = &data;
    }
  }
  for (plan::ControlPoint& cp : beam.control_points) {
    if (cp.nominal_energy_mv) cp.nominal_energy_mv = after;
  }
  out.description = fmt::format("Nominal Beam Energy (300A,0114) {:g} -> {:g} MV", before, after);
  return true;
}

bool toggle_wedge(plan::Beam& beam, const beamdata::Library& library, Injection& out) {
  const beamdata::BeamData* data = library_beam(beam, library);
  if (!beam.wedges.empty()) {
    if (data != nullptr) out.wedge_removed = data->wedge(beam.wedges.front().id);
    out.description =
        fmt::format("Wedge Sequence (300A,00D1) with Wedge ID \"{}\" removed", beam.wedges.front().id);
    beam.wedges.clear();
    for (plan::ControlPoint& cp : beam.control_points) cp.wedge_positions.clear();
    return true;
  }
  if (data == nullptr || data->wedges.empty()) return false;
  const beamdata::WedgeData& wedge = data->wedges.front();
  beam.wedges.push_back({1, plan::parse_term<plan::WedgeType>(wedge_type(wedge)), wedge.id, wedge.angle_deg,
                         std::nullopt, 0.0});
  for (plan::ControlPoint& cp : beam.control_points)
    cp.wedge_positions.push_back({1, plan::parse_term<plan::WedgePositionState>("IN")});
  out.wedge_added = &wedge;
  out.description = fmt::format("Wedge \"{}\" added to the open beam", wedge.id);
  return true;
}

bool toggle_tray(plan::Beam& beam, const beamdata::Library& library, Injection& out) {
  const beamdata::BeamData* data = library_beam(beam, library);
  if (!beam.blocks.empty()) {
    if (data != nullptr) out.tray_removed = data->tray(beam.blocks.front().tray_id);
    out.description = fmt::format("Block Tray ID (300A,00F5) \"{}\" removed", beam.blocks.front().tray_id);
    beam.blocks.clear();
    return true;
  }
  if (data == nullptr || data->trays.empty()) return false;
  beam.blocks.push_back(tray_marker_block(data->trays.front().id));
  out.tray_added = &data->trays.front();
  out.description = fmt::format("Block tray \"{}\" added", data->trays.front().id);
  return true;
}

bool open_x2_jaw(plan::Beam& beam, double mm, std::string& description) {
  bool changed = false;
  for (plan::ControlPoint& cp : beam.control_points) {
    for (plan::DevicePositions& device : cp.devices) {
      if ((device.type != plan::DeviceType::x && device.type != plan::DeviceType::asymx) ||
          device.positions_mm.size() != 2)
        continue;
      if (!changed)
        description = fmt::format("{} jaw X2 (300A,011C) {:.1f} -> {:.1f} mm", device.type.text,
                                  device.positions_mm[1], device.positions_mm[1] + mm);
      device.positions_mm[1] += mm;
      changed = true;
    }
  }
  return changed;
}

bool move_point(plan::ReferencedBeam& rb, const plan::Beam& beam, double mm, std::string& description) {
  if (!rb.dose_specification_point_mm || beam.control_points.empty()) return false;
  const plan::ControlPoint& cp = beam.control_points.front();
  if (!cp.gantry_deg || !cp.isocenter_mm) return false;
  // HFS, couch 0: gantry 0 looks along +y (posterior); the source rotates in the x-y plane.
  const double g = *cp.gantry_deg * std::numbers::pi / 180.0;
  plan::PointMm& p = *rb.dose_specification_point_mm;
  const plan::PointMm before = p;
  p[0] += -std::sin(g) * mm;
  p[1] += std::cos(g) * mm;
  description = fmt::format(
      "Beam Dose Specification Point (300A,0082) ({:.1f}, {:.1f}, {:.1f}) -> ({:.1f}, {:.1f}, "
      "{:.1f}) mm",
      before[0], before[1], before[2], p[0], p[1], p[2]);
  return true;
}

bool change_position(plan::Plan& plan, const plan::Beam& beam, std::string& description) {
  plan::PatientSetup* setup = nullptr;
  for (plan::PatientSetup& s : plan.patient_setups) {
    if (beam.referenced_patient_setup_number && s.number == *beam.referenced_patient_setup_number) setup = &s;
  }
  if (setup == nullptr || setup->patient_position != plan::PatientPosition::hfs) return false;
  setup->patient_position = plan::parse_term<plan::PatientPosition>("HFP");
  description = "Patient Position (0018,5100) HFS -> HFP";
  return true;
}

}  // namespace

std::string_view to_code(ErrorKind kind) {
  switch (kind) {
    case ErrorKind::meterset:
      return "meterset";
    case ErrorKind::beam_dose:
      return "beam_dose";
    case ErrorKind::ssd:
      return "ssd";
    case ErrorKind::depth:
      return "depth";
    case ErrorKind::energy:
      return "energy";
    case ErrorKind::wedge:
      return "wedge";
    case ErrorKind::tray:
      return "tray";
    case ErrorKind::jaw:
      return "jaw";
    case ErrorKind::point_position:
      return "point_position";
    case ErrorKind::patient_position:
      return "patient_position";
  }
  return "unknown";
}

std::string_view size_unit(ErrorKind kind) {
  switch (kind) {
    case ErrorKind::meterset:
    case ErrorKind::beam_dose:
      return "%";
    case ErrorKind::ssd:
    case ErrorKind::depth:
    case ErrorKind::jaw:
    case ErrorKind::point_position:
      return "mm";
    default:
      return "";
  }
}

std::optional<Injection> inject_error(const plan::Plan& plan, int fraction_group_number, int beam_number,
                                      const InjectedError& error, const beamdata::Library& library) {
  Injection out{plan, {}};
  plan::ReferencedBeam* rb = referenced_beam(out.plan, fraction_group_number, beam_number);
  plan::Beam* beam = beam_of(out.plan, beam_number);
  if (rb == nullptr || beam == nullptr) return std::nullopt;
  bool applied = false;
  switch (error.kind) {
    case ErrorKind::meterset:
      applied = scale_meterset(*rb, error.size, out.description);
      break;
    case ErrorKind::beam_dose:
      applied = scale_beam_dose(*rb, error.size, out.description);
      break;
    case ErrorKind::ssd:
      applied = shift_ssd(*beam, error.size, out.description);
      break;
    case ErrorKind::depth:
      applied = shift_depth(*rb, *beam, error.size, out.description);
      break;
    case ErrorKind::energy:
      applied = change_energy(*beam, library, out);
      break;
    case ErrorKind::wedge:
      applied = toggle_wedge(*beam, library, out);
      break;
    case ErrorKind::tray:
      applied = toggle_tray(*beam, library, out);
      break;
    case ErrorKind::jaw:
      applied = open_x2_jaw(*beam, error.size, out.description);
      break;
    case ErrorKind::point_position:
      applied = move_point(*rb, *beam, error.size, out.description);
      break;
    case ErrorKind::patient_position:
      applied = change_position(out.plan, *beam, out.description);
      break;
  }
  if (!applied) return std::nullopt;
  return out;
}

}  // namespace countersign::check
