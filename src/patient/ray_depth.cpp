#include <countersign/patient/ray_depth.hpp>

#include <countersign/geometry/beam_frame.hpp>
#include <countersign/patient/ray_trace.hpp>

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>

namespace countersign::patient {

namespace {

using study::Problem;
using study::ProblemKind;

// The entry parameter counts as "on the CT's outer face" within this fraction of a micrometre.
constexpr double face_tolerance_mm = 1e-6;
// Pieces shorter than this are rounding between voxel faces and the outline, not tissue or air.
constexpr double sliver_mm = 1e-6;

std::string point_text(const Eigen::Vector3d& p) {
  return fmt::format("({:.1f}, {:.1f}, {:.1f}) mm", p.x(), p.y(), p.z());
}

void add_layer(std::vector<DensityLayer>& layers, double thickness_mm, double density) {
  if (!(thickness_mm >= sliver_mm)) return;
  if (!layers.empty() && layers.back().relative_density == density) {
    layers.back().thickness_mm += thickness_mm;
    return;
  }
  layers.push_back({thickness_mm, density});
}

// Integrates the density over the crossings from alpha `entry` to 1, counting only the parts inside
// the body intervals; fills path lengths, extremes and layers.
void integrate(const study::Study& study, const DensityMap& densities,
               const std::vector<VoxelCrossing>& crossings, const std::vector<AlphaRange>& body, double entry,
               double length_mm, RayDepth& out) {
  std::size_t b = 0;
  bool first = true;
  for (const VoxelCrossing& c : crossings) {
    if (c.alpha_out <= entry) continue;
    const double a0 = std::max(c.alpha_in, entry);
    double inside = 0.0;
    while (b < body.size() && body[b].alpha_out <= a0) ++b;
    for (std::size_t i = b; i < body.size() && body[i].alpha_in < c.alpha_out; ++i)
      inside += std::max(0.0, std::min(c.alpha_out, body[i].alpha_out) - std::max(a0, body[i].alpha_in));
    const double total_mm = (c.alpha_out - a0) * length_mm;
    double inside_mm = inside * length_mm;
    if (inside_mm < sliver_mm) {
      inside_mm = 0.0;
    } else if (total_mm - inside_mm < sliver_mm) {
      inside_mm = total_mm;
    }
    if (inside_mm > 0.0) {
      const std::int16_t hu = study.ct.hu[c.voxel];
      const double rho = densities.density(hu);
      out.radiological_depth_mm += inside_mm * rho;
      out.tissue_path_mm += inside_mm;
      if (!densities.covers(hu)) ++out.voxels_beyond_table;
      out.lowest_density = first ? rho : std::min(out.lowest_density, rho);
      out.highest_density = first ? rho : std::max(out.highest_density, rho);
      out.lowest_hu = first ? hu : std::min(out.lowest_hu, hu);
      out.highest_hu = first ? hu : std::max(out.highest_hu, hu);
      first = false;
      add_layer(out.layers, inside_mm, rho);
    }
    add_layer(out.layers, total_mm - inside_mm,
              0.0);  // air outside the body (the order inside a voxel is not kept)
  }
}

}  // namespace

study::Result<RayDepth> trace_depth(const BodyOutline& outline, const DensityMap& densities,
                                    const Eigen::Vector3d& source_mm, const Eigen::Vector3d& point_mm) {
  const study::Study& study = outline.study();
  const study::VoxelGrid& grid = study.ct.grid;
  if (!grid.contains(to_point(point_mm))) {
    return Problem{ProblemKind::point_outside_ct, "", "", "",
                   fmt::format("the point {} lies outside the CT volume", point_text(point_mm))};
  }
  std::vector<VoxelCrossing> crossings;
  const auto inside_ct = trace_voxels(grid, source_mm, point_mm, crossings);
  const double length_mm = (point_mm - source_mm).norm();
  if (!inside_ct) {
    return Problem{ProblemKind::point_outside_ct, "", "", "",
                   fmt::format("the ray to the point {} does not pass through the CT", point_text(point_mm))};
  }
  const auto body = outline.intervals(source_mm, point_mm, *inside_ct, crossings);
  if (body.empty() || body.back().alpha_out < 1.0 - face_tolerance_mm / length_mm) {
    return Problem{ProblemKind::point_outside_body, "", "", "",
                   fmt::format("the point {} lies outside the body outline", point_text(point_mm))};
  }
  const double entry = body.front().alpha_in;
  if (entry <= inside_ct->alpha_in + face_tolerance_mm / length_mm) {
    return Problem{
        ProblemKind::ray_leaves_ct_inside_body, "", "", "",
        fmt::format("towards the source, the ray from the point {} leaves the CT at {} still inside the "
                    "body: the surface it enters through was not scanned",
                    point_text(point_mm), point_text(source_mm + entry * (point_mm - source_mm)))};
  }
  RayDepth out;
  out.entry_mm = source_mm + entry * (point_mm - source_mm);
  out.source_to_point_mm = length_mm;
  out.source_to_entry_mm = entry * length_mm;
  out.depth_mm = (1.0 - entry) * length_mm;
  out.body_entries = static_cast<int>(body.size());
  integrate(study, densities, crossings, body, entry, length_mm, out);
  return out;
}

study::Result<SurfaceDistance> surface_along(const BodyOutline& outline, const Eigen::Vector3d& source_mm,
                                             const Eigen::Vector3d& direction) {
  const study::VoxelGrid& grid = outline.study().ct.grid;
  const Eigen::Vector3d unit = direction.normalized();
  Eigen::Vector3d centre;
  double diagonal_mm = 0.0;
  for (int a = 0; a < 3; ++a) {
    centre[a] = 0.5 * (grid.lower_edge_mm(a) + grid.upper_edge_mm(a));
    diagonal_mm += std::pow(grid.upper_edge_mm(a) - grid.lower_edge_mm(a), 2);
  }
  // Far enough to pass beyond the whole volume.
  const double reach_mm = (centre - source_mm).norm() + std::sqrt(diagonal_mm);
  const Eigen::Vector3d far_mm = source_mm + reach_mm * unit;
  std::vector<VoxelCrossing> crossings;
  const auto inside_ct = trace_voxels(grid, source_mm, far_mm, crossings);
  const auto body =
      inside_ct ? outline.intervals(source_mm, far_mm, *inside_ct, crossings) : std::vector<AlphaRange>{};
  if (body.empty()) {
    return Problem{ProblemKind::central_axis_misses_body, "", "", "",
                   "the central axis does not meet the body inside the CT"};
  }
  if (body.front().alpha_in <= inside_ct->alpha_in + face_tolerance_mm / reach_mm) {
    return Problem{
        ProblemKind::ray_leaves_ct_inside_body, "", "", "",
        fmt::format("the central axis enters the CT at {} already inside the body: the surface was not "
                    "scanned",
                    point_text(source_mm + inside_ct->alpha_in * (far_mm - source_mm)))};
  }
  return SurfaceDistance{source_mm + body.front().alpha_in * (far_mm - source_mm),
                         body.front().alpha_in * reach_mm};
}

study::Result<SurfaceDistance> central_axis_ssd(const BodyOutline& outline,
                                                const geometry::BeamFrame& frame) {
  return surface_along(outline, frame.source_in_patient_mm(), frame.beam_direction_in_patient());
}

}  // namespace countersign::patient
