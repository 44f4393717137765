#include <countersign/patient/ray_trace.hpp>

#include <algorithm>
#include <cmath>
#include <limits>

namespace countersign::patient {

namespace {

constexpr double infinity = std::numeric_limits<double>::infinity();

// The part of the segment inside the volume's outer faces (the first step of Siddon's method).
std::optional<AlphaRange> clip_to_volume(const study::VoxelGrid& grid, const Eigen::Vector3d& from,
                                         const Eigen::Vector3d& d) {
  AlphaRange range{0.0, 1.0};
  for (int a = 0; a < 3; ++a) {
    const double lo = grid.lower_edge_mm(a);
    const double hi = grid.upper_edge_mm(a);
    if (d[a] == 0.0) {
      if (from[a] < lo || from[a] > hi) return std::nullopt;
      continue;
    }
    const double t1 = (lo - from[a]) / d[a];
    const double t2 = (hi - from[a]) / d[a];
    range.alpha_in = std::max(range.alpha_in, std::min(t1, t2));
    range.alpha_out = std::min(range.alpha_out, std::max(t1, t2));
  }
  if (!(range.alpha_in < range.alpha_out)) return std::nullopt;
  return range;
}

}  // namespace

std::optional<AlphaRange> trace_voxels(const study::VoxelGrid& grid, const Eigen::Vector3d& from_mm,
                                       const Eigen::Vector3d& to_mm, std::vector<VoxelCrossing>& crossings) {
  crossings.clear();
  const Eigen::Vector3d d = to_mm - from_mm;
  if (d.squaredNorm() == 0.0) return std::nullopt;
  const auto range = clip_to_volume(grid, from_mm, d);
  if (!range) return std::nullopt;

  long long index[3];
  long long step[3];
  double next[3];  // alpha of the next face crossed along each axis
  const auto face_alpha = [&](int a, long long face) {
    return (grid.lower_edge_mm(a) + static_cast<double>(face) * grid.spacing_mm[a] - from_mm[a]) / d[a];
  };
  for (int a = 0; a < 3; ++a) {
    const auto n = static_cast<long long>(grid.size[a]);
    const double entry = from_mm[a] + range->alpha_in * d[a];
    index[a] = std::clamp(
        static_cast<long long>(std::floor((entry - grid.lower_edge_mm(a)) / grid.spacing_mm[a])), 0LL, n - 1);
    step[a] = d[a] > 0.0 ? 1 : (d[a] < 0.0 ? -1 : 0);
    if (step[a] == 0) {
      next[a] = infinity;
      continue;
    }
    // The voxel the segment runs into: when the entry lies on a face, the one beyond it.
    next[a] = face_alpha(a, step[a] > 0 ? index[a] + 1 : index[a]);
    if (next[a] <= range->alpha_in && index[a] + step[a] >= 0 && index[a] + step[a] < n) {
      index[a] += step[a];
      next[a] = face_alpha(a, step[a] > 0 ? index[a] + 1 : index[a]);
    }
  }
  crossings.reserve(grid.size[0] + grid.size[1] + grid.size[2]);
  double alpha = range->alpha_in;
  while (true) {
    const int a = next[0] <= next[1] ? (next[0] <= next[2] ? 0 : 2) : (next[1] <= next[2] ? 1 : 2);
    const double until = std::min(next[a], range->alpha_out);
    if (until > alpha) {
      crossings.push_back({grid.index(static_cast<std::size_t>(index[0]), static_cast<std::size_t>(index[1]),
                                      static_cast<std::size_t>(index[2])),
                           alpha, until});
      alpha = until;
    }
    if (next[a] >= range->alpha_out) break;
    index[a] += step[a];
    if (index[a] < 0 || index[a] >= static_cast<long long>(grid.size[a])) break;
    next[a] = face_alpha(a, step[a] > 0 ? index[a] + 1 : index[a]);
  }
  return range;
}

}  // namespace countersign::patient
