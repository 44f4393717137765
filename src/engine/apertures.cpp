// Stage 4, apertures: the opening of each part, and the outline a drawing of the beam shows.

#include "stages.hpp"

#include <countersign/geometry/swept_opening.hpp>

namespace countersign::engine::stages {

StageResult<geometry::Aperture> aperture_at(const plan::Beam& beam, const plan::ControlPoint& cp,
                                            int control_point_index, const beamdata::BeamData& data) {
  auto built = geometry::build_aperture(beam, cp, data.mlc_leaf_end_offset_mm.value_or(0.0));
  if (!built) {
    CalculationProblem problem;
    problem.kind = ProblemKind::aperture_unusable;
    problem.control_point = control_point_index;
    problem.cause = std::move(built).error();
    return problem;
  }
  return std::move(built).value();
}

bool shaped_field(const geometry::Aperture& aperture, const ResolvedBeam& resolved) {
  return aperture.shaped_by_mlc() || !resolved.blocks.empty();
}

BeamOutline beam_outline(const plan::Beam& beam, const geometry::Aperture& aperture0, bool modulated) {
  BeamOutline outline;
  outline.jaws = aperture0.jaws();
  if (!modulated) {
    outline.open = aperture0.rows();
    outline.shaped_by_mlc = aperture0.shaped_by_mlc();
    outline.known = true;
    return outline;
  }
  if (auto swept = geometry::swept_opening(beam)) {
    outline.jaws = swept->envelope;
    outline.open = std::move(swept->open);
    outline.known = true;
  }
  return outline;
}

}  // namespace countersign::engine::stages
