#include <countersign/patient/body_extent.hpp>

#include <countersign/patient/ray_trace.hpp>

#include <vector>

namespace countersign::patient {

namespace {

// Pieces of the body closer than this are one piece (rounding at slice and voxel faces).
constexpr double join_mm = 1e-3 * 1e-3;

}  // namespace

std::optional<double> body_extent_mm(const BodyOutline& body, const Eigen::Vector3d& point_mm,
                                     const Eigen::Vector3d& direction, double reach_mm) {
  if (!(reach_mm > 0.0)) return std::nullopt;
  const Eigen::Vector3d to_mm = point_mm + reach_mm * direction.normalized();
  std::vector<VoxelCrossing> crossings;
  const std::optional<AlphaRange> inside_ct = trace_voxels(body.study().ct.grid, point_mm, to_mm, crossings);
  const double join = join_mm / reach_mm;
  if (!inside_ct || inside_ct->alpha_in > join) return std::nullopt;  // the point is outside the CT
  const std::vector<AlphaRange> pieces = body.intervals(point_mm, to_mm, *inside_ct, crossings);
  if (pieces.empty() || pieces.front().alpha_in > join) return std::nullopt;  // not in the body
  double end = pieces.front().alpha_out;
  for (std::size_t i = 1; i < pieces.size() && pieces[i].alpha_in - end <= join; ++i)
    end = pieces[i].alpha_out;
  // The body reaches the far end of the segment or the CT's edge: no end known within the reach.
  if (end >= inside_ct->alpha_out - join) return std::nullopt;
  return end * reach_mm;
}

}  // namespace countersign::patient
