#include <countersign/study/volume.hpp>

#include <cmath>

namespace countersign::study {

bool VoxelGrid::contains(const PointMm& point) const {
  for (int axis = 0; axis < 3; ++axis) {
    if (!(point[axis] >= lower_edge_mm(axis) && point[axis] <= upper_edge_mm(axis))) return false;
  }
  return true;
}

std::optional<std::array<std::size_t, 3>> VoxelGrid::voxel_at(const PointMm& point) const {
  if (!contains(point)) return std::nullopt;
  std::array<std::size_t, 3> voxel{};
  for (int axis = 0; axis < 3; ++axis) {
    const double n = std::floor((point[axis] - lower_edge_mm(axis)) / spacing_mm[axis]);
    // The upper face belongs to the last voxel.
    voxel[axis] = std::min(static_cast<std::size_t>(std::max(n, 0.0)), size[axis] - 1);
  }
  return voxel;
}

}  // namespace countersign::study
