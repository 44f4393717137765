// The body from the CT alone (no EXTERNAL ROI): threshold, largest 6-connected component, and
// cavities filled slice by slice (a cavity is background not connected to the slice's border).

#include <countersign/study/body.hpp>

#include <fmt/format.h>

#include <algorithm>
#include <cstdint>
#include <deque>

namespace countersign::study {

namespace {

enum : std::uint8_t { outside = 0, candidate = 1, visited = 2, chosen = 3 };

// Flood fill over voxels equal to `from`, setting them to `to`; returns how many were set.
std::size_t flood_3d(const VoxelGrid& grid, VoxelArray<std::uint8_t>& state, std::size_t seed,
                     std::uint8_t from, std::uint8_t to) {
  const std::size_t nx = grid.size[0];
  const std::size_t nxy = nx * grid.size[1];
  const std::size_t n = state.size();
  std::deque<std::size_t> queue{seed};
  state[seed] = to;
  std::size_t count = 0;
  while (!queue.empty()) {
    const std::size_t v = queue.front();
    queue.pop_front();
    ++count;
    const std::size_t i = v % nx;
    const std::size_t j = (v / nx) % grid.size[1];
    const std::size_t neighbours[6] = {i > 0 ? v - 1 : n,      i + 1 < nx ? v + 1 : n,
                                       j > 0 ? v - nx : n,     j + 1 < grid.size[1] ? v + nx : n,
                                       v >= nxy ? v - nxy : n, v + nxy < n ? v + nxy : n};
    for (const std::size_t w : neighbours) {
      if (w < n && state[w] == from) {
        state[w] = to;
        queue.push_back(w);
      }
    }
  }
  return count;
}

// Sets to 1 the background pixels of slice k that the slice's border cannot reach (4-connected).
std::size_t fill_cavities(const VoxelGrid& grid, std::size_t k, VoxelArray<std::uint8_t>& mask) {
  const std::size_t nx = grid.size[0];
  const std::size_t ny = grid.size[1];
  std::uint8_t* slice = mask.data() + grid.index(0, 0, k);
  std::vector<std::uint8_t> reached(nx * ny, 0);
  std::deque<std::size_t> queue;
  auto push = [&](std::size_t p) {
    if (slice[p] == 0 && !reached[p]) {
      reached[p] = 1;
      queue.push_back(p);
    }
  };
  for (std::size_t i = 0; i < nx; ++i) push(i), push(i + nx * (ny - 1));
  for (std::size_t j = 0; j < ny; ++j) push(j * nx), push(j * nx + nx - 1);
  while (!queue.empty()) {
    const std::size_t p = queue.front();
    queue.pop_front();
    const std::size_t i = p % nx;
    const std::size_t j = p / nx;
    if (i > 0) push(p - 1);
    if (i + 1 < nx) push(p + 1);
    if (j > 0) push(p - nx);
    if (j + 1 < ny) push(p + nx);
  }
  std::size_t filled = 0;
  for (std::size_t p = 0; p < nx * ny; ++p) {
    if (slice[p] == 0 && !reached[p]) slice[p] = 1, ++filled;
  }
  return filled;
}

// The 0/1 mask as runs along x.
BodyMask runs_of(const VoxelGrid& grid, const VoxelArray<std::uint8_t>& dense) {
  BodyMask mask(grid);
  std::vector<VoxelRun> runs;
  for (std::size_t k = 0; k < grid.size[2]; ++k) {
    for (std::size_t j = 0; j < grid.size[1]; ++j) {
      runs.clear();
      const std::uint8_t* row = dense.data() + grid.index(0, j, k);
      for (std::size_t i = 0; i < grid.size[0]; ++i) {
        if (row[i] == 0) continue;
        if (!runs.empty() && runs.back().end == i) {
          ++runs.back().end;
        } else {
          runs.push_back({static_cast<std::uint32_t>(i), static_cast<std::uint32_t>(i + 1)});
        }
      }
      mask.set_row(j, k, runs);
    }
  }
  return mask;
}

}  // namespace

Result<Body> body_from_threshold(const CtVolume& ct, double threshold_hu) {
  const VoxelGrid& grid = ct.grid;
  VoxelArray<std::uint8_t> state(grid.voxel_count(), outside);
  for (std::size_t v = 0; v < state.size(); ++v) {
    if (ct.hu[v] >= threshold_hu) state[v] = candidate;
  }
  std::size_t best_seed = state.size();
  std::size_t best_size = 0;
  std::size_t components = 0;
  for (std::size_t v = 0; v < state.size(); ++v) {
    if (state[v] != candidate) continue;
    ++components;
    const std::size_t size = flood_3d(grid, state, v, candidate, visited);
    if (size > best_size) best_size = size, best_seed = v;
  }
  if (best_size == 0) {
    return Problem{ProblemKind::body_not_found, "", "", "",
                   fmt::format("no EXTERNAL ROI, and no CT voxel at or above {} HU", threshold_hu)};
  }
  flood_3d(grid, state, best_seed, visited, chosen);
  Body body;
  body.source = BodySource::ct_threshold;
  body.threshold_hu = threshold_hu;
  for (auto& s : state) s = s == chosen ? 1 : 0;
  std::size_t filled = 0;
  for (std::size_t k = 0; k < grid.size[2]; ++k) filled += fill_cavities(grid, k, state);
  body.mask = runs_of(grid, state);
  body.voxel_count = body.mask.voxel_count();
  body.notes.push_back(fmt::format(
      "body: no EXTERNAL ROI in the structure set; taken from the CT as the voxels at or above {} HU, the "
      "largest 6-connected component ({} voxels; {} smaller components ignored), with {} voxels of cavities "
      "enclosed in a slice filled; surface at voxel resolution",
      threshold_hu, best_size, components - 1, filled));
  return body;
}

}  // namespace countersign::study
