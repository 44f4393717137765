// Even-odd point tests and scanline filling of transverse polygons. Both use the same half-open
// crossing rule (an edge counts when exactly one end lies above the line), so a voxel centre the
// scanline fills is exactly a point inside_even_odd accepts.

#include <countersign/study/body.hpp>

#include <algorithm>
#include <cmath>

namespace countersign::study {

namespace {

// The x of every polygon edge crossing the line y = y_mm, unsorted.
void crossings_at(std::span<const Polygon> polygons, double y_mm, std::vector<double>& xs) {
  xs.clear();
  for (const Polygon& polygon : polygons) {
    const std::size_t n = polygon.size();
    for (std::size_t a = 0, b = n - 1; a < n; b = a++) {
      const auto& p = polygon[a];
      const auto& q = polygon[b];
      if ((p[1] > y_mm) == (q[1] > y_mm)) continue;
      xs.push_back(p[0] + (y_mm - p[1]) * (q[0] - p[0]) / (q[1] - p[1]));
    }
  }
}

}  // namespace

bool inside_even_odd(std::span<const Polygon> polygons, double x_mm, double y_mm) {
  bool inside = false;
  for (const Polygon& polygon : polygons) {
    const std::size_t n = polygon.size();
    for (std::size_t a = 0, b = n - 1; a < n; b = a++) {
      const auto& p = polygon[a];
      const auto& q = polygon[b];
      if ((p[1] > y_mm) == (q[1] > y_mm)) continue;
      const double x_cross = p[0] + (y_mm - p[1]) * (q[0] - p[0]) / (q[1] - p[1]);
      if (x_mm < x_cross) inside = !inside;
    }
  }
  return inside;
}

void rasterise_slice(const VoxelGrid& grid, std::size_t k, std::span<const Polygon> polygons,
                     BodyMask& mask) {
  std::vector<double> xs;
  std::vector<VoxelRun> runs;
  const double x0 = grid.origin_mm[0];
  const double dx = grid.spacing_mm[0];
  const auto columns = static_cast<long long>(grid.size[0]);
  for (std::size_t j = 0; j < grid.size[1]; ++j) {
    crossings_at(polygons, grid.centre_mm(1, j), xs);
    std::sort(xs.begin(), xs.end());
    runs.clear();
    // Centres x with xs[2m] <= x < xs[2m+1] are inside.
    for (std::size_t m = 0; m + 1 < xs.size(); m += 2) {
      const auto first = std::max(0LL, static_cast<long long>(std::ceil((xs[m] - x0) / dx)));
      const auto end = std::min(columns, static_cast<long long>(std::ceil((xs[m + 1] - x0) / dx)));
      if (end > first) runs.push_back({static_cast<std::uint32_t>(first), static_cast<std::uint32_t>(end)});
    }
    mask.set_row(j, k, runs);
  }
}

}  // namespace countersign::study
