// Stage 1, resolve: the beam's data in the library, its accessories, its patient setup.

#include "stages.hpp"

#include <countersign/geometry/patient_position.hpp>

namespace countersign::engine::stages {

namespace {

namespace attribute = plan::attribute;

CalculationProblem problem_of(ProblemKind kind) {
  CalculationProblem problem;
  problem.kind = kind;
  return problem;
}

// The single wedge and tray of the beam, found in the beam data.
StageResult<void> resolve_accessories(const plan::Beam& beam, const beamdata::BeamData& data,
                                      ResolvedBeam& resolved) {
  if (!beam.compensators.empty()) return problem_of(ProblemKind::compensator_present);
  if (!beam.applicators.empty()) return problem_of(ProblemKind::applicator_present);
  if (beam.wedges.size() > 1) return problem_of(ProblemKind::several_wedges);
  if (beam.wedges.size() == 1) {
    const plan::Wedge& w = beam.wedges.front();
    resolved.wedge = data.wedge(w.id);
    if (resolved.wedge == nullptr) {
      CalculationProblem problem = problem_of(ProblemKind::wedge_not_in_library);
      problem.attribute = attribute::wedge_id;
      problem.plan_text = w.id;
      problem.library_beam = data.id;
      problem.library_radiation = data.radiation;
      return problem;
    }
    resolved.wedge_orientation_deg = w.orientation_deg;
    const bool plan_dynamic = w.type == plan::WedgeType::dynamic;
    if (plan_dynamic != (resolved.wedge->kind == beamdata::WedgeKind::dynamic)) {
      CalculationProblem problem = problem_of(ProblemKind::wedge_kind_mismatch);
      problem.attribute = attribute::wedge_type;
      problem.plan_text = w.type.text;
      problem.item_id = w.id;
      return problem;
    }
  }
  std::string tray_id;
  for (const plan::Block& block : beam.blocks) {
    if (block.tray_id.empty()) continue;
    if (!tray_id.empty() && block.tray_id != tray_id) return problem_of(ProblemKind::several_block_trays);
    tray_id = block.tray_id;
  }
  if (!tray_id.empty()) {
    resolved.tray = data.tray(tray_id);
    if (resolved.tray == nullptr) {
      CalculationProblem problem = problem_of(ProblemKind::tray_not_in_library);
      problem.attribute = attribute::block_tray_id;
      problem.plan_text = tray_id;
      problem.library_beam = data.id;
      return problem;
    }
  }
  return {};
}

// The beam's blocks as the sector integration and the primary path see them: outlines at the
// isocentre plane (as Block Data states them), each with the plan's Block Transmission or else the
// library's block_transmission; neither: not checked.
StageResult<void> resolve_blocks(const plan::Beam& beam, const beamdata::BeamData& data,
                                 ResolvedBeam& resolved) {
  for (const plan::Block& block : beam.blocks) {
    BlockShape shape;
    shape.outline_mm = block.outline_mm;
    shape.aperture = block.type == plan::BlockType::aperture;
    if (block.transmission) {
      shape.transmission = *block.transmission;
    } else if (data.block_transmission) {
      shape.transmission = *data.block_transmission;
    } else {
      CalculationProblem problem = problem_of(ProblemKind::block_transmission_missing);
      problem.attribute = attribute::block_transmission;
      problem.library_beam = data.id;
      problem.item_id = block.number ? std::to_string(*block.number) : std::string{};
      return problem;
    }
    resolved.blocks.push_back(std::move(shape));
  }
  return {};
}

WedgeProfile wedge_profile_of(const ResolvedBeam& resolved) {
  if (resolved.wedge == nullptr) return WedgeProfile::not_wedged;
  if (!resolved.wedge->orientation_table) return WedgeProfile::no_table;
  if (!resolved.wedge_orientation_deg) return WedgeProfile::no_orientation;
  return WedgeProfile::orientation_table;
}

ProblemKind kind_of(const std::optional<beamdata::MatchFailure>& failure) {
  if (failure == beamdata::MatchFailure::unknown_machine) return ProblemKind::machine_not_in_library;
  if (failure == beamdata::MatchFailure::unknown_radiation) return ProblemKind::radiation_not_in_library;
  return ProblemKind::energy_not_in_library;
}

// The beam's own patient setup, or the plan's only one when the beam names none.
const plan::PatientSetup* setup_of(const plan::Plan& plan, const plan::Beam& beam) {
  if (beam.referenced_patient_setup_number) return plan.patient_setup(*beam.referenced_patient_setup_number);
  if (plan.patient_setups.size() == 1) return &plan.patient_setups.front();
  return nullptr;
}

// The beam's patient setup and a supported patient position.
StageResult<ResolvedBeam> resolve_setup(const plan::Plan& plan, const plan::Beam& beam,
                                        ResolvedBeam& resolved, BeamDose& r) {
  resolved.setup = setup_of(plan, beam);
  if (resolved.setup == nullptr) return problem_of(ProblemKind::patient_setup_not_found);
  r.patient_position = geometry::supported_patient_position(resolved.setup->patient_position.value);
  if (!r.patient_position) {
    CalculationProblem problem = problem_of(ProblemKind::patient_position_unsupported);
    problem.attribute = attribute::patient_position;
    problem.plan_text = resolved.setup->patient_position.text;
    return problem;
  }
  resolved.position = *r.patient_position;
  return resolved;
}

}  // namespace

StageResult<ResolvedBeam> resolve_beam(const plan::Plan& plan, const plan::Beam& beam,
                                       const plan::ReferencedBeam& referenced,
                                       const beamdata::Library& library, BeamDose& r) {
  const bool electron = beam.radiation_type == plan::RadiationType::electron;
  if (beam.radiation_type != plan::RadiationType::photon && !electron) {
    CalculationProblem problem = problem_of(ProblemKind::radiation_not_photon);
    problem.attribute = attribute::radiation_type;
    problem.plan_text = beam.radiation_type.text;
    return problem;
  }
  if (!beam.primary_dosimeter_unit.absent() && beam.primary_dosimeter_unit != plan::DosimeterUnit::mu) {
    CalculationProblem problem = problem_of(ProblemKind::dosimeter_unit_not_mu);
    problem.attribute = attribute::primary_dosimeter_unit;
    problem.plan_text = beam.primary_dosimeter_unit.text;
    return problem;
  }
  if (beam.control_points.empty()) return missing_value(attribute::control_point_sequence, PlanScope::beam);
  const plan::ControlPoint& cp0 = beam.control_points.front();
  if (!cp0.nominal_energy_mv)
    return missing_value(attribute::nominal_beam_energy, PlanScope::control_point, 0);
  if (!referenced.meterset_mu) return missing_value(attribute::beam_meterset, PlanScope::fraction_group);
  ResolvedBeam resolved;
  resolved.meterset_mu = *referenced.meterset_mu;
  r.meterset_mu = resolved.meterset_mu;

  if (electron) {
    TRY(resolve_electron(beam, *cp0.nominal_energy_mv, library, resolved, r));
    return resolve_setup(plan, beam, resolved, r);
  }
  const beamdata::BeamMatch match =
      library.match(beam.machine_name, beam.radiation_type.text, *cp0.nominal_energy_mv);
  r.machine = match.machine;
  if (match.beam == nullptr) {
    CalculationProblem problem = problem_of(kind_of(match.failure));
    problem.machine = beam.machine_name;
    problem.radiation = beam.radiation_type.text;
    problem.energy_mv = cp0.nominal_energy_mv;
    problem.library_detail = match.explanation;
    return problem;
  }
  resolved.machine = match.machine;
  resolved.data = match.beam;
  r.beam_data = match.beam;

  TRY(resolve_accessories(beam, *resolved.data, resolved));
  TRY(resolve_blocks(beam, *resolved.data, resolved));
  r.features.wedged = resolved.wedge != nullptr;
  r.features.wedge_profile = wedge_profile_of(resolved);
  r.features.tray = resolved.tray != nullptr;
  r.features.blocks = !beam.blocks.empty();

  return resolve_setup(plan, beam, resolved, r);
}

}  // namespace countersign::engine::stages
