#pragma once

// A CT series as one volume on a regular, axis-aligned grid in the DICOM patient coordinate system
// (x towards the patient's left, y posterior, z head; mm). The reader reorders rows, columns and
// slices so that indices increase along +x, +y and +z whatever the scan orientation.

#include <countersign/study/voxel_array.hpp>

#include <array>
#include <cstddef>
#include <cstdint>
#include <optional>
#include <string>
#include <vector>

namespace countersign::study {

using PointMm = std::array<double, 3>;

struct VoxelGrid {
  std::array<std::size_t, 3> size{};   // voxels along x (columns), y (rows), z (slices)
  std::array<double, 3> origin_mm{};   // centre of voxel (0, 0, 0)
  std::array<double, 3> spacing_mm{};  // centre-to-centre distance along x, y, z; all > 0

  [[nodiscard]] std::size_t voxel_count() const { return size[0] * size[1] * size[2]; }
  // x fastest, then y, then z.
  [[nodiscard]] std::size_t index(std::size_t i, std::size_t j, std::size_t k) const {
    return i + size[0] * (j + size[1] * k);
  }
  [[nodiscard]] double centre_mm(int axis, std::size_t n) const {
    return origin_mm[axis] + static_cast<double>(n) * spacing_mm[axis];
  }
  // The volume's outer faces: voxel centres +- half a spacing.
  [[nodiscard]] double lower_edge_mm(int axis) const { return origin_mm[axis] - 0.5 * spacing_mm[axis]; }
  [[nodiscard]] double upper_edge_mm(int axis) const {
    return origin_mm[axis] + (static_cast<double>(size[axis]) - 0.5) * spacing_mm[axis];
  }
  // Whether a point lies inside the volume (faces count as inside).
  [[nodiscard]] bool contains(const PointMm& point) const;
  // The voxel holding a point, or nullopt outside the volume.
  [[nodiscard]] std::optional<std::array<std::size_t, 3>> voxel_at(const PointMm& point) const;
};

struct CtVolume {
  VoxelGrid grid;
  // Hounsfield units, Rescale Slope (0028,1053) and Intercept (0028,1052) applied per slice and
  // rounded to the nearest integer (1 HU is far below what a density table resolves).
  VoxelArray<std::int16_t> hu;
  std::size_t clamped_voxel_count = 0;  // values beyond the int16 range, clamped (stated, normally 0)

  std::string study_instance_uid;                    // (0020,000D)
  std::string series_instance_uid;                   // (0020,000E)
  std::string frame_of_reference_uid;                // (0020,0052)
  std::string station_name;                          // Station Name (0008,1010); empty if absent
  std::string manufacturer;                          // (0008,0070)
  std::string patient_position;                      // Patient Position (0018,5100) of the scan, e.g. "HFS"
  std::vector<std::string> slice_files;              // in increasing z
  std::vector<std::string> slice_sop_instance_uids;  // in increasing z

  [[nodiscard]] std::int16_t hu_at(std::size_t i, std::size_t j, std::size_t k) const {
    return hu[grid.index(i, j, k)];
  }
};

}  // namespace countersign::study
