#include <countersign/beamdata/library.hpp>
#include <countersign/beamdata/validation.hpp>

#include "inspection.hpp"

#include <cmath>
#include <sstream>

namespace countersign::beamdata {

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

const Machine* Library::machine(const std::string& name) const {
  for (const auto& m : machines) {
    if (m.name == name) return &m;
  }
  return nullptr;
}

BeamMatch Library::match(const std::string& machine_name, const std::string& radiation_type,
                         double energy_mv) const {
  BeamMatch result;
  result.machine = machine(machine_name);
  if (result.machine == nullptr) {
    result.failure = MatchFailure::unknown_machine;
    result.explanation = "The beam-data library has no machine named '" + machine_name + "'.";
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
    sentence << "Machine '" << machine_name << "' has no beam data for radiation type '" << radiation_type
             << "'.";
  } else {
    result.failure = MatchFailure::unknown_energy;
    sentence << "Machine '" << machine_name << "' has no " << radiation_type << " beam data at " << energy_mv
             << " MV.";
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
  Library library = std::move(inspection.library);
  detail::PhysicsFindings physics = detail::check_physics(library, inspection.lines);
  for (const auto& problem : physics.problems) {
    if (problem.severity == Severity::error) return problem.to_error();
  }
  library.warnings = std::move(inspection.problems);
  library.warnings.insert(library.warnings.end(), physics.problems.begin(), physics.problems.end());
  return library;
}

}  // namespace countersign::beamdata
