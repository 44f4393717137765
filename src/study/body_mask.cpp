#include <countersign/study/body_mask.hpp>

#include <algorithm>
#include <stdexcept>

namespace countersign::study {

BodyMask::BodyMask(const VoxelGrid& grid)
    : size_(grid.size), row_begin_(grid.size[1] * grid.size[2] + 1, 0) {}

void BodyMask::set_row(std::size_t j, std::size_t k, std::span<const VoxelRun> runs) {
  const std::size_t r = j + size_[1] * k;
  if (r < rows_set_ || r + 1 >= row_begin_.size()) throw std::logic_error("BodyMask: rows out of order");
  // Rows skipped since the last one stay empty: they start (and end) where the runs end now.
  for (std::size_t skipped = rows_set_; skipped <= r; ++skipped)
    row_begin_[skipped] = static_cast<std::uint32_t>(runs_.size());
  for (const VoxelRun& run : runs) {
    if (run.end <= run.begin) continue;
    if (runs_.size() > row_begin_[r] && run.begin <= runs_.back().end) {
      if (run.end > runs_.back().end) {
        voxel_count_ += run.end - runs_.back().end;
        runs_.back().end = run.end;
      }
      continue;
    }
    runs_.push_back(run);
    voxel_count_ += run.end - run.begin;
  }
  rows_set_ = r + 1;
  row_begin_[rows_set_] = static_cast<std::uint32_t>(runs_.size());
}

std::span<const VoxelRun> BodyMask::row(std::size_t j, std::size_t k) const {
  const std::size_t r = j + size_[1] * k;
  if (r >= rows_set_) return {};
  return {runs_.data() + row_begin_[r], runs_.data() + row_begin_[r + 1]};
}

bool BodyMask::contains(std::size_t i, std::size_t j, std::size_t k) const {
  for (const VoxelRun& run : row(j, k)) {
    if (i < run.begin) return false;
    if (i < run.end) return true;
  }
  return false;
}

bool BodyMask::contains(std::size_t voxel_index) const {
  const std::size_t i = voxel_index % size_[0];
  const std::size_t row_index = voxel_index / size_[0];
  return contains(i, row_index % size_[1], row_index / size_[1]);
}

}  // namespace countersign::study
