#include <countersign/beamdata/library.hpp>
#include <countersign/beamdata/validation.hpp>

#include "inspection.hpp"

#include <algorithm>
#include <cmath>
#include <sstream>

namespace countersign::beamdata {

CalibrationGeometry default_calibration_geometry(double ssd_cm, double depth_cm, double sad_cm) {
  return std::abs(ssd_cm + depth_cm - sad_cm) > 0.01 ? CalibrationGeometry::ssd : CalibrationGeometry::sad;
}

std::string_view to_string(CalibrationGeometry geometry) {
  return geometry == CalibrationGeometry::sad ? "SAD" : "SSD";
}

std::string_view to_string(HeadScatterField field) {
  return field == HeadScatterField::jaws_and_mlc ? "jaws_and_mlc" : "jaws";
}

const WedgeData* BeamData::wedge(const std::string& wedge_id) const {
  for (const auto& w : wedges) {
    if (w.id == wedge_id) return &w;
  }
  return nullptr;
}

const TrayData* BeamData::tray(const std::string& tray_id) const {
  for (const auto& t : trays) {
    if (t.id == tray_id) return &t;
  }
  return nullptr;
}

const ApplicatorData* ElectronBeamData::applicator(const std::string& applicator_id) const {
  for (const auto& a : applicators) {
    if (a.id == applicator_id) return &a;
  }
  return nullptr;
}

bool Machine::answers_to(std::string_view treatment_machine_name) const {
  return name == treatment_machine_name ||
         std::find(aliases.begin(), aliases.end(), treatment_machine_name) != aliases.end();
}

const ElectronBeamData* Machine::electron_beam(double energy_mev) const {
  for (const auto& e : electron_beams) {
    if (std::abs(e.energy_mev - energy_mev) < 0.01) return &e;
  }
  return nullptr;
}

const BolusData* Machine::bolus(const std::string& id) const {
  for (const auto& b : boli) {
    if (b.id == id) return &b;
  }
  return nullptr;
}

const Machine* Library::machine(const std::string& name) const {
  for (const auto& m : machines) {
    if (m.answers_to(name)) return &m;
  }
  return nullptr;
}

std::string Library::machine_listing() const {
  std::string out;
  for (const auto& m : machines) {
    if (!out.empty()) out += ", ";
    out += "'" + m.name + "'";
    if (!m.aliases.empty()) {
      out += " (also";
      for (std::size_t i = 0; i < m.aliases.size(); ++i) out += (i == 0 ? " '" : ", '") + m.aliases[i] + "'";
      out += ")";
    }
  }
  return out.empty() ? "none" : out;
}

BeamMatch Library::match(const std::string& machine_name, const std::string& radiation_type,
                         double energy_mv) const {
  BeamMatch result;
  result.machine = machine(machine_name);
  if (result.machine == nullptr) {
    result.failure = MatchFailure::unknown_machine;
    result.explanation = "The beam-data library has no machine named '" + machine_name +
                         "' (names are exact and case-sensitive; the library has " + machine_listing() + ").";
    return result;
  }
  bool radiation_found = false;
  for (const auto& beam : result.machine->beams) {
    if (beam.radiation != radiation_type) continue;
    radiation_found = true;
    if (std::abs(beam.energy_mv - energy_mv) < 0.01) {
      result.beam = &beam;
      return result;
    }
  }
  std::ostringstream sentence;
  if (!radiation_found) {
    result.failure = MatchFailure::unknown_radiation;
    sentence << "Machine '" << result.machine->name << "' has no beam data for radiation type '"
             << radiation_type << "'.";
  } else {
    result.failure = MatchFailure::unknown_energy;
    sentence << "Machine '" << result.machine->name << "' has no " << radiation_type << " beam data at "
             << energy_mv << " MV.";
  }
  result.explanation = sentence.str();
  return result;
}

ElectronMatch Library::match_electron(const std::string& machine_name, double energy_mev) const {
  ElectronMatch result;
  const BeamMatch photon = match(machine_name, "ELECTRON", energy_mev);
  result.machine = photon.machine;
  if (result.machine == nullptr) {
    result.failure = MatchFailure::unknown_machine;
    result.explanation = photon.explanation;
    return result;
  }
  result.beam = result.machine->electron_beam(energy_mev);
  if (result.beam != nullptr) return result;
  std::ostringstream sentence;
  if (result.machine->electron_beams.empty()) {
    result.failure = MatchFailure::unknown_radiation;
    sentence << "Machine '" << result.machine->name << "' has no electron beam data.";
  } else {
    result.failure = MatchFailure::unknown_energy;
    sentence << "Machine '" << result.machine->name << "' has no electron beam data at " << energy_mev
             << " MeV (it has";
    for (const auto& e : result.machine->electron_beams) sentence << ' ' << e.energy_mev;
    sentence << " MeV).";
  }
  result.explanation = sentence.str();
  return result;
}

Expected<Library> load_library(const std::filesystem::path& folder) {
  detail::Inspection inspection = detail::inspect_library(folder);
  for (const auto& problem : inspection.problems) {
    if (problem.severity == Severity::error) return problem.to_error();
  }
  if (!inspection.complete) {
    return Error{ErrorKind::bad_beamdata, folder.string(), "", "",
                 "the library could not be read completely"};
  }
  detail::PhysicsFindings physics = detail::check_physics(inspection);
  for (const auto& problem : physics.problems) {
    if (problem.severity == Severity::error) return problem.to_error();
  }
  Library library = inspection.readable_library();
  library.warnings = std::move(inspection.problems);
  library.warnings.insert(library.warnings.end(), physics.problems.begin(), physics.problems.end());
  return library;
}

}  // namespace countersign::beamdata
