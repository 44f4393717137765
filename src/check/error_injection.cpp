#include <countersign/check/error_injection.hpp>

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>

namespace countersign::check {

namespace {

constexpr double meterset_step = 0.05;         // MU ±5 %
constexpr double beam_dose_step = 0.10;        // planned beam dose +10 %
constexpr double ssd_shift_mm = 20.0;          // SSD off by 2 cm
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

// The energy of another beam of the same machine and radiation in the library, nearest to the
// plan's; an energy the library lacks when there is none.
double other_energy_mv(const plan::Beam& beam, double energy_mv, const beamdata::Library& library) {
  double best = energy_mv + absent_energy_step_mv;
  double best_distance = std::numeric_limits<double>::infinity();
  if (const beamdata::Machine* machine = library.machine(beam.machine_name)) {
    for (const beamdata::BeamData& data : machine->beams) {
      const double distance = std::abs(data.energy_mv - energy_mv);
      if (data.radiation != beam.radiation_type.text || distance < 0.5 || distance >= best_distance) continue;
      best = data.energy_mv;
      best_distance = distance;
    }
  }
  return best;
}

bool scale_meterset(plan::ReferencedBeam& rb, double factor, std::string& description) {
  if (!rb.meterset_mu) return false;
  const double before = *rb.meterset_mu;
  rb.meterset_mu = before * factor;
  description = fmt::format("Beam Meterset (300A,0086) {:.2f} -> {:.2f} MU", before, *rb.meterset_mu);
  return true;
}

bool change_energy(plan::Beam& beam, const beamdata::Library& library, std::string& description) {
  if (beam.control_points.empty() || !beam.control_points.front().nominal_energy_mv) return false;
  const double before = *beam.control_points.front().nominal_energy_mv;
  const double after = other_energy_mv(beam, before, library);
  for (plan::ControlPoint& cp : beam.control_points) {
    if (cp.nominal_energy_mv) cp.nominal_energy_mv = after;
  }
  description = fmt::format("Nominal Beam Energy (300A,0114) {:g} -> {:g} MV", before, after);
  return true;
}

bool shift_ssd(plan::Beam& beam, std::string& description) {
  bool changed = false;
  for (plan::ControlPoint& cp : beam.control_points) {
    if (!cp.ssd_mm) continue;
    if (!changed)
      description = fmt::format("Source to Surface Distance (300A,0130) {:.1f} -> {:.1f} mm", *cp.ssd_mm,
                                *cp.ssd_mm + ssd_shift_mm);
    cp.ssd_mm = *cp.ssd_mm + ssd_shift_mm;
    changed = true;
  }
  return changed;
}

bool remove_wedge(plan::Beam& beam, std::string& description) {
  if (beam.wedges.empty()) return false;
  description =
      fmt::format("Wedge Sequence (300A,00D1) with Wedge ID \"{}\" removed", beam.wedges.front().id);
  beam.wedges.clear();
  for (plan::ControlPoint& cp : beam.control_points) cp.wedge_positions.clear();
  return true;
}

// The X1 and X2 jaw values exchanged, as when two fields are typed into each other's box.
bool swap_jaws(plan::Beam& beam, std::string& description) {
  bool changed = false;
  for (plan::ControlPoint& cp : beam.control_points) {
    for (plan::DevicePositions& device : cp.devices) {
      if ((device.type != plan::DeviceType::x && device.type != plan::DeviceType::asymx) ||
          device.positions_mm.size() != 2)
        continue;
      if (!changed) {
        description = fmt::format("{} jaws (300A,011C) {:.1f}\\{:.1f} -> {:.1f}\\{:.1f} mm", device.type.text,
                                  device.positions_mm[0], device.positions_mm[1], device.positions_mm[1],
                                  device.positions_mm[0]);
      }
      std::swap(device.positions_mm[0], device.positions_mm[1]);
      changed = true;
    }
  }
  return changed;
}

bool scale_beam_dose(plan::ReferencedBeam& rb, std::string& description) {
  if (!rb.dose_gy) return false;
  const double before = *rb.dose_gy;
  rb.dose_gy = before * (1.0 + beam_dose_step);
  description = fmt::format("Beam Dose (300A,0084) {:.4f} -> {:.4f} Gy", before, *rb.dose_gy);
  return true;
}

}  // namespace

std::string_view to_code(InjectedError error) {
  switch (error) {
    case InjectedError::meterset_plus_5_percent:
      return "meterset_plus_5_percent";
    case InjectedError::meterset_minus_5_percent:
      return "meterset_minus_5_percent";
    case InjectedError::wrong_energy:
      return "wrong_energy";
    case InjectedError::ssd_plus_20_mm:
      return "ssd_plus_20_mm";
    case InjectedError::wedge_removed:
      return "wedge_removed";
    case InjectedError::jaws_swapped:
      return "jaws_swapped";
    case InjectedError::beam_dose_plus_10_percent:
      return "beam_dose_plus_10_percent";
  }
  return "unknown";
}

std::optional<double> known_ratio_change(InjectedError error) {
  switch (error) {
    case InjectedError::meterset_plus_5_percent:
      return meterset_step;
    case InjectedError::meterset_minus_5_percent:
      return -meterset_step;
    case InjectedError::beam_dose_plus_10_percent:
      return 1.0 / (1.0 + beam_dose_step) - 1.0;
    default:
      return std::nullopt;
  }
}

std::optional<Injection> inject_error(const plan::Plan& plan, int fraction_group_number, int beam_number,
                                      InjectedError error, const beamdata::Library& library) {
  Injection out{plan, {}};
  plan::ReferencedBeam* rb = referenced_beam(out.plan, fraction_group_number, beam_number);
  plan::Beam* beam = beam_of(out.plan, beam_number);
  if (rb == nullptr || beam == nullptr) return std::nullopt;
  bool applied = false;
  switch (error) {
    case InjectedError::meterset_plus_5_percent:
      applied = scale_meterset(*rb, 1.0 + meterset_step, out.description);
      break;
    case InjectedError::meterset_minus_5_percent:
      applied = scale_meterset(*rb, 1.0 - meterset_step, out.description);
      break;
    case InjectedError::wrong_energy:
      applied = change_energy(*beam, library, out.description);
      break;
    case InjectedError::ssd_plus_20_mm:
      applied = shift_ssd(*beam, out.description);
      break;
    case InjectedError::wedge_removed:
      applied = remove_wedge(*beam, out.description);
      break;
    case InjectedError::jaws_swapped:
      applied = swap_jaws(*beam, out.description);
      break;
    case InjectedError::beam_dose_plus_10_percent:
      applied = scale_beam_dose(*rb, out.description);
      break;
  }
  if (!applied) return std::nullopt;
  return out;
}

}  // namespace countersign::check
