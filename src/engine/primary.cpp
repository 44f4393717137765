// Stage 6, primary and transmission: whether the point sees the source through a part's opening,
// lies behind the leaves, or outside the jaws, and what fraction of the primary reaches it.

#include "stages.hpp"

#include <countersign/util/units.hpp>

#include <cmath>
#include <numbers>

namespace countersign::engine::stages {

namespace {

constexpr double on_axis_limit_mm = 1.0;  // closer than this to the axis, an absent OAR table is harmless

}  // namespace

PrimaryPath primary_path(const geometry::Aperture& aperture, const geometry::PointInBeam& point,
                         bool modulated, const ResolvedBeam& resolved) {
  const beamdata::BeamData& data = *resolved.data;
  const double x = point.iso_plane_x_mm;
  const double y = point.iso_plane_y_mm;
  const geometry::JawOpening& jaws = aperture.jaws();
  PrimaryPath path;
  path.in_opening = aperture.area_mm2() > 0.0 && aperture.contains(x, y);
  path.in_jaws = x >= jaws.x1_mm && x <= jaws.x2_mm && y >= jaws.y1_mm && y <= jaws.y2_mm;
  // A static field is judged on its own opening (the check decides about points outside it); a
  // part of a modulated beam outside the jaws gives no dose, behind the leaves their transmission.
  path.counted = !modulated || path.in_opening || path.in_jaws;
  path.under_leaves = modulated && !path.in_opening && path.in_jaws;
  if (path.under_leaves) path.transmission = data.mlc_transmission.value_or(1.0);
  // Behind a block (outside an APERTURE block's outline, inside a SHIELDING block's): its transmission.
  for (const BlockShape& block : resolved.blocks) {
    if (block.contains(x, y) != block.aperture) {
      path.under_block = true;
      path.transmission *= block.transmission;
    }
  }
  return path;
}

std::optional<WedgeAxes> wedge_axes(const ResolvedBeam& resolved, double iso_plane_x_mm,
                                    double iso_plane_y_mm) {
  if (resolved.wedge == nullptr || !resolved.wedge->orientation_table || !resolved.wedge_orientation_deg)
    return std::nullopt;
  const double theta = *resolved.wedge_orientation_deg * std::numbers::pi / 180.0;
  const double thin_x = -std::sin(theta);  // unit vector towards the thin end
  const double thin_y = std::cos(theta);
  WedgeAxes axes;
  axes.towards_thick_cm = -util::mm_to_cm(iso_plane_x_mm * thin_x + iso_plane_y_mm * thin_y);
  axes.across_cm = util::mm_to_cm(iso_plane_x_mm * thin_y - iso_plane_y_mm * thin_x);
  return axes;
}

StageResult<void> require_oar(const beamdata::BeamData& data, const geometry::PointInBeam& point) {
  if (data.oar || point.off_axis_mm <= on_axis_limit_mm) return {};
  CalculationProblem problem;
  problem.kind = ProblemKind::oar_table_missing;
  problem.library_beam = data.id;
  problem.plan_value = point.off_axis_mm;
  return problem;
}

}  // namespace countersign::engine::stages
