#pragma once

// The body on the CT grid as runs of inside voxels along x, row by row (a row is one j, k): a
// body is one or two runs per row, so a 512 x 512 x 100 mask takes under a megabyte instead of 26.

#include <countersign/study/volume.hpp>

#include <cstddef>
#include <cstdint>
#include <span>
#include <vector>

namespace countersign::study {

struct VoxelRun {
  std::uint32_t begin = 0;  // first voxel index i inside
  std::uint32_t end = 0;    // one past the last
};

class BodyMask {
 public:
  BodyMask() = default;
  // Nothing inside yet.
  explicit BodyMask(const VoxelGrid& grid);

  // Sets row (j, k) to these runs (sorted, disjoint; touching runs are joined). Rows are set in
  // increasing k, then j; rows never set stay empty.
  void set_row(std::size_t j, std::size_t k, std::span<const VoxelRun> runs);

  [[nodiscard]] bool contains(std::size_t i, std::size_t j, std::size_t k) const;
  [[nodiscard]] bool contains(std::size_t voxel_index) const;  // VoxelGrid::index order
  [[nodiscard]] std::span<const VoxelRun> row(std::size_t j, std::size_t k) const;
  [[nodiscard]] std::size_t voxel_count() const { return voxel_count_; }
  [[nodiscard]] std::size_t size() const { return size_[0] * size_[1] * size_[2]; }  // voxels of the grid

 private:
  std::array<std::size_t, 3> size_{};
  std::vector<std::uint32_t> row_begin_;  // per row, where its runs start in runs_; one more at the end
  std::vector<VoxelRun> runs_;
  std::size_t rows_set_ = 0;  // rows before this one are final
  std::size_t voxel_count_ = 0;
};

}  // namespace countersign::study
