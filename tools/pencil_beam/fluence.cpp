// The opening of a beam as relative fluence on a grid of the isocentre plane (pencil_beam.hpp).

#include "pencil_beam.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

namespace pencil_beam {

namespace {

double overlap(double a1, double a2, double b1, double b2) {
  return std::max(0.0, std::min(a2, b2) - std::max(a1, b1));
}

// Ray casting (even-odd rule); edges count as either side, which a 4 x 4 sample never notices.
bool inside(const std::vector<std::array<double, 2>>& polygon, double x, double y) {
  bool in = false;
  const std::size_t n = polygon.size();
  for (std::size_t i = 0, j = n - 1; i < n; j = i++) {
    const auto& a = polygon[i];
    const auto& b = polygon[j];
    if ((a[1] > y) != (b[1] > y) && x < (b[0] - a[0]) * (y - a[1]) / (b[1] - a[1]) + a[0]) in = !in;
  }
  return in;
}

// The blocks' transmission at one point: 1 where no block stops the beam.
double block_factor(const std::vector<Block>& blocks, double x, double y) {
  double factor = 1.0;
  for (const auto& block : blocks) {
    if (inside(block.outline_mm, x, y) != block.aperture) factor *= block.transmission;
  }
  return factor;
}

// Share of a cell's x extent [x1, x2) that the leaves of one pair leave open, and the share under
// the leaves, both within the jaws.
struct RowShares {
  double open = 0.0;
  double under_leaves = 0.0;
};

RowShares pair_shares(const Opening& o, std::size_t pair, double x1, double x2) {
  const std::size_t pairs = o.leaf_boundaries_mm.size() - 1;
  double a = o.leaf_positions_mm[pair];
  double b = o.leaf_positions_mm[pairs + pair];
  if (b > a) {  // rounded ends: an open pair's radiological tips lie beyond the nominal ones
    a -= o.leaf_end_offset_mm;
    b += o.leaf_end_offset_mm;
  }
  const double in_jaws = overlap(x1, x2, o.jaws_mm[0], o.jaws_mm[1]);
  const double open = b > a ? overlap(x1, x2, std::max(a, o.jaws_mm[0]), std::min(b, o.jaws_mm[1])) : 0.0;
  return {open, in_jaws - open};
}

// Fluence of one cell from jaws and leaves (blocks apart), as the cell-area-weighted mean.
double cell_value(const Opening& o, double x1, double x2, double y1, double y2) {
  const double area = (x2 - x1) * (y2 - y1);
  const double jy1 = std::max(y1, o.jaws_mm[2]);
  const double jy2 = std::min(y2, o.jaws_mm[3]);
  if (jy2 <= jy1) return 0.0;
  const double in_jaws_x = overlap(x1, x2, o.jaws_mm[0], o.jaws_mm[1]);
  if (o.leaf_boundaries_mm.empty()) return in_jaws_x * (jy2 - jy1) / area;
  const auto& bounds = o.leaf_boundaries_mm;
  // Parts of the cell beyond the leaf bank's extent are limited by the jaws alone.
  double sum = in_jaws_x * (overlap(jy1, jy2, -1e9, bounds.front()) + overlap(jy1, jy2, bounds.back(), 1e9));
  const auto first = std::upper_bound(bounds.begin(), bounds.end(), jy1);
  std::size_t pair = first == bounds.begin() ? 0 : static_cast<std::size_t>(first - bounds.begin() - 1);
  for (; pair + 1 < bounds.size() && bounds[pair] < jy2; ++pair) {
    const double h = overlap(jy1, jy2, bounds[pair], bounds[pair + 1]);
    if (h <= 0.0) continue;
    const RowShares s = pair_shares(o, pair, x1, x2);
    sum += h * (s.open + o.leaf_transmission * s.under_leaves);
  }
  return sum / area;
}

double mean_block_factor(const std::vector<Block>& blocks, double x1, double y1, double cell_mm) {
  constexpr int samples = 4;
  double sum = 0.0;
  for (int a = 0; a < samples; ++a) {
    for (int b = 0; b < samples; ++b) {
      sum += block_factor(blocks, x1 + (a + 0.5) * cell_mm / samples, y1 + (b + 0.5) * cell_mm / samples);
    }
  }
  return sum / (samples * samples);
}

}  // namespace

FluenceGrid rasterise(const Opening& opening, double cell_mm) {
  const auto& jaws = opening.jaws_mm;
  if (!(jaws[1] > jaws[0] && jaws[3] > jaws[2])) throw std::invalid_argument("closed jaws");
  if (!opening.leaf_boundaries_mm.empty() &&
      opening.leaf_positions_mm.size() != 2 * (opening.leaf_boundaries_mm.size() - 1))
    throw std::invalid_argument("leaf positions do not match the leaf boundaries");
  FluenceGrid grid;
  grid.cell_mm = cell_mm;
  grid.x0_mm = jaws[0];
  grid.y0_mm = jaws[2];
  grid.nx = static_cast<int>(std::ceil((jaws[1] - jaws[0]) / cell_mm - 1e-9));
  grid.ny = static_cast<int>(std::ceil((jaws[3] - jaws[2]) / cell_mm - 1e-9));
  grid.values.assign(grid.index(0, grid.ny), 0.0);
  for (int j = 0; j < grid.ny; ++j) {
    const double y1 = grid.y0_mm + j * cell_mm;
    for (int i = 0; i < grid.nx; ++i) {
      const double x1 = grid.x0_mm + i * cell_mm;
      double value = cell_value(opening, x1, x1 + cell_mm, y1, y1 + cell_mm);
      if (value > 0.0 && !opening.blocks.empty()) value *= mean_block_factor(opening.blocks, x1, y1, cell_mm);
      grid.values[grid.index(i, j)] = value;
    }
  }
  return grid;
}

}  // namespace pencil_beam
