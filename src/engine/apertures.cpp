// Stage 4, apertures: the opening of each part, and the outline a drawing of the beam shows.

#include "stages.hpp"

#include <countersign/geometry/swept_opening.hpp>

#include <algorithm>
#include <cmath>

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

bool in_open_field(const geometry::Aperture& aperture, const std::vector<BlockShape>& blocks, double x_mm,
                   double y_mm) {
  if (aperture.area_mm2() <= 0.0 || !aperture.contains(x_mm, y_mm)) return false;
  return std::all_of(blocks.begin(), blocks.end(),
                     [&](const BlockShape& b) { return b.contains(x_mm, y_mm) == b.aperture; });
}

double open_field_edge_distance_mm(const geometry::Aperture& aperture, const std::vector<BlockShape>& blocks,
                                   double x_mm, double y_mm) {
  double nearest = aperture.distance_to_edge_mm(x_mm, y_mm);
  for (const BlockShape& block : blocks) {
    const auto& v = block.outline_mm;
    for (std::size_t i = 0; i < v.size(); ++i) {
      const auto& a = v[i];
      const auto& b = v[(i + 1) % v.size()];
      const double dx = b[0] - a[0];
      const double dy = b[1] - a[1];
      const double length2 = dx * dx + dy * dy;
      const double t =
          length2 > 0.0 ? std::clamp(((x_mm - a[0]) * dx + (y_mm - a[1]) * dy) / length2, 0.0, 1.0) : 0.0;
      const double cx = a[0] + t * dx;
      const double cy = a[1] + t * dy;
      // A block edge hidden behind the jaws or leaves is no edge of the open field.
      if (aperture.contains(cx, cy)) nearest = std::min(nearest, std::hypot(x_mm - cx, y_mm - cy));
    }
  }
  return nearest;
}

bool shaped_field(const geometry::Aperture& aperture, const ResolvedBeam& resolved) {
  return aperture.shaped_by_mlc() || !resolved.blocks.empty();
}

BeamOutline beam_outline(const plan::Beam& beam, const geometry::Aperture& aperture0,
                         const std::vector<BlockShape>& blocks, bool modulated) {
  BeamOutline outline;
  outline.blocks = blocks;
  outline.jaws = aperture0.jaws();
  outline.leaf_travel = aperture0.leaf_travel();
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
