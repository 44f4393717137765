// Stage 1, resolve, for electron beams: the electron beam data, the applicator, the cutout (an
// APERTURE item of the Block Sequence) and the bolus with its thickness.

#include "stages.hpp"

#include <countersign/util/assert.hpp>

#include <cmath>

namespace countersign::engine::stages {

namespace {

namespace attribute = plan::attribute;

// The calibration SSD must be the tables' standard SSD (within rounding): the formula applies the
// effective-SSD inverse square from the standard SSD only.
constexpr double calibration_ssd_match_cm = 0.05;

CalculationProblem problem_of(ProblemKind kind) {
  CalculationProblem problem;
  problem.kind = kind;
  return problem;
}

CalculationProblem unsupported(std::string what) {
  CalculationProblem problem = problem_of(ProblemKind::electron_accessory_unsupported);
  problem.plan_text = std::move(what);
  return problem;
}

ProblemKind kind_of(const std::optional<beamdata::MatchFailure>& failure) {
  if (failure == beamdata::MatchFailure::unknown_machine) return ProblemKind::machine_not_in_library;
  if (failure == beamdata::MatchFailure::unknown_radiation) return ProblemKind::radiation_not_in_library;
  return ProblemKind::energy_not_in_library;
}

// The one applicator of the beam, found in the beam data.
StageResult<void> resolve_applicator(const plan::Beam& beam, const beamdata::ElectronBeamData& data,
                                     ResolvedBeam& resolved) {
  if (beam.applicators.empty()) return missing_value(attribute::applicator_sequence, PlanScope::beam);
  if (beam.applicators.size() > 1) return problem_of(ProblemKind::several_applicators);
  resolved.plan_applicator = &beam.applicators.front();
  resolved.applicator = data.applicator(resolved.plan_applicator->id);
  if (resolved.applicator == nullptr) {
    CalculationProblem problem = problem_of(ProblemKind::applicator_not_in_library);
    problem.attribute = attribute::applicator_id;
    problem.plan_text = resolved.plan_applicator->id;
    problem.library_beam = data.id;
    return problem;
  }
  return {};
}

// The cutout: at most one block, of type APERTURE, and a cutout-factor table to go with it.
StageResult<void> resolve_cutout(const plan::Beam& beam, const beamdata::ElectronBeamData& data,
                                 ResolvedBeam& resolved) {
  for (const plan::Block& block : beam.blocks) {
    if (block.type != plan::BlockType::aperture) return unsupported("a shielding block");
    if (resolved.cutout != nullptr) return unsupported("more than one aperture block");
    resolved.cutout = &block;
  }
  if (resolved.cutout != nullptr && !util::checked(resolved.applicator).cutout) {
    CalculationProblem problem = problem_of(ProblemKind::cutout_table_missing);
    problem.library_beam = data.id;
    problem.item_id = resolved.applicator->id;
    return problem;
  }
  return {};
}

// The bolus: at most one, and its thickness from the library (an RT Plan carries none).
StageResult<void> resolve_bolus(const plan::Beam& beam, const beamdata::Machine& machine,
                                ResolvedBeam& resolved) {
  if (beam.boli.empty()) return {};
  if (beam.boli.size() > 1) return problem_of(ProblemKind::several_boli);
  resolved.bolus = &beam.boli.front();
  const beamdata::BolusData* known = machine.bolus(resolved.bolus->id);
  if (known == nullptr) {
    CalculationProblem problem = problem_of(ProblemKind::bolus_thickness_unknown);
    problem.attribute = attribute::bolus_id;
    problem.plan_text = resolved.bolus->id;
    problem.machine = machine.name;
    return problem;
  }
  resolved.bolus_thickness_cm = known->thickness_cm;
  return {};
}

}  // namespace

StageResult<void> resolve_electron(const plan::Beam& beam, double energy_mev,
                                   const beamdata::Library& library, ResolvedBeam& resolved, BeamDose& r) {
  const beamdata::ElectronMatch match = library.match_electron(beam.machine_name, energy_mev);
  r.machine = match.machine;
  if (match.beam == nullptr) {
    CalculationProblem problem = problem_of(kind_of(match.failure));
    problem.machine = beam.machine_name;
    problem.radiation = beam.radiation_type.text;
    problem.energy_mv = energy_mev;
    problem.library_detail = match.explanation;
    return problem;
  }
  resolved.machine = match.machine;
  resolved.electron = match.beam;
  r.electron_data = match.beam;
  const beamdata::ElectronBeamData& data = *match.beam;
  if (std::abs(data.calibration.ssd_cm - data.pdd_ssd_cm) > calibration_ssd_match_cm) {
    CalculationProblem problem = problem_of(ProblemKind::electron_calibration_ssd_differs);
    problem.library_beam = data.id;
    problem.plan_value = data.calibration.ssd_cm;
    problem.library_value = data.pdd_ssd_cm;
    return problem;
  }
  if (!beam.compensators.empty()) return problem_of(ProblemKind::compensator_present);
  if (!beam.wedges.empty()) return unsupported("a wedge");
  TRY(resolve_applicator(beam, data, resolved));
  TRY(resolve_cutout(beam, data, resolved));
  TRY(resolve_bolus(beam, *match.machine, resolved));
  return {};
}

}  // namespace countersign::engine::stages
