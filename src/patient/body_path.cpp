// Segment against the body: per slice slab, the 2D segment against that slice's outline polygons
// (each crossing parameter exact, inside or outside decided at the midpoint of each piece by the
// even-odd rule, so vertices and edges along the segment need no special case); or, for the
// threshold body, runs of body voxels.

#include <countersign/patient/body_path.hpp>

#include <algorithm>
#include <cmath>

namespace countersign::patient {

namespace {

// Appends [a, b], joining it to the previous range when they touch.
void append(std::vector<AlphaRange>& ranges, double a, double b) {
  if (!(b > a)) return;
  if (!ranges.empty() && a <= ranges.back().alpha_out + 1e-12) {
    ranges.back().alpha_out = std::max(ranges.back().alpha_out, b);
    return;
  }
  ranges.push_back({a, b});
}

double cross(double ax, double ay, double bx, double by) { return ax * by - ay * bx; }

// Parameters in (0, 1) where the 2D segment p0 -> p1 crosses an edge of the polygons.
void edge_crossings(std::span<const study::Polygon> polygons, const Eigen::Vector2d& p0,
                    const Eigen::Vector2d& p1, std::vector<double>& ts) {
  const Eigen::Vector2d d = p1 - p0;
  for (const auto& polygon : polygons) {
    const std::size_t n = polygon.size();
    for (std::size_t a = 0, b = n - 1; a < n; b = a++) {
      const double ex = polygon[a][0] - polygon[b][0];
      const double ey = polygon[a][1] - polygon[b][1];
      const double denominator = cross(d.x(), d.y(), ex, ey);
      if (denominator == 0.0) continue;  // parallel: the midpoint tests decide
      const double wx = polygon[b][0] - p0.x();
      const double wy = polygon[b][1] - p0.y();
      const double t = cross(wx, wy, ex, ey) / denominator;
      const double s = cross(wx, wy, d.x(), d.y()) / denominator;
      if (t > 0.0 && t < 1.0 && s >= 0.0 && s <= 1.0) ts.push_back(t);
    }
  }
}

// One slab [a0, a1] of the segment against one slice's outline.
void slab_intervals(std::span<const study::Polygon> polygons, const Eigen::Vector3d& from,
                    const Eigen::Vector3d& d, double a0, double a1, std::vector<double>& ts,
                    std::vector<AlphaRange>& out) {
  const Eigen::Vector3d q0 = from + a0 * d;
  const Eigen::Vector3d q1 = from + a1 * d;
  ts.assign({0.0, 1.0});
  edge_crossings(polygons, q0.head<2>(), q1.head<2>(), ts);
  std::sort(ts.begin(), ts.end());
  for (std::size_t i = 1; i < ts.size(); ++i) {
    if (!(ts[i] > ts[i - 1])) continue;
    const double mid = 0.5 * (ts[i - 1] + ts[i]);
    const Eigen::Vector3d m = q0 + mid * (q1 - q0);
    if (study::inside_even_odd(polygons, m.x(), m.y()))
      append(out, a0 + ts[i - 1] * (a1 - a0), a0 + ts[i] * (a1 - a0));
  }
}

std::vector<AlphaRange> contour_intervals(const study::Study& study, const Eigen::Vector3d& from,
                                          const Eigen::Vector3d& to, const AlphaRange& inside_ct) {
  const study::VoxelGrid& grid = study.ct.grid;
  const Eigen::Vector3d d = to - from;
  std::vector<AlphaRange> out;
  std::vector<double> ts;
  const auto slice_of = [&](double alpha) {
    const double z = from.z() + alpha * d.z();
    const double k = std::floor((z - grid.lower_edge_mm(2)) / grid.spacing_mm[2]);
    return static_cast<std::size_t>(std::clamp(k, 0.0, static_cast<double>(grid.size[2] - 1)));
  };
  std::size_t k = slice_of(inside_ct.alpha_in);
  const std::size_t k_last = slice_of(inside_ct.alpha_out);
  const int step = k_last >= k ? 1 : -1;
  while (true) {
    double a0 = inside_ct.alpha_in;
    double a1 = inside_ct.alpha_out;
    if (d.z() != 0.0) {
      const double lo =
          (grid.lower_edge_mm(2) + static_cast<double>(k) * grid.spacing_mm[2] - from.z()) / d.z();
      const double hi =
          (grid.lower_edge_mm(2) + static_cast<double>(k + 1) * grid.spacing_mm[2] - from.z()) / d.z();
      a0 = std::max(a0, std::min(lo, hi));
      a1 = std::min(a1, std::max(lo, hi));
    }
    const auto& polygons = study.body.slice_polygons[k];
    if (a1 > a0 && !polygons.empty()) slab_intervals(polygons, from, d, a0, a1, ts, out);
    if (k == k_last) break;
    k = static_cast<std::size_t>(static_cast<long long>(k) + step);
  }
  return out;
}

}  // namespace

std::vector<AlphaRange> body_intervals(const study::Study& study, const Eigen::Vector3d& from_mm,
                                       const Eigen::Vector3d& to_mm, const AlphaRange& inside_ct,
                                       std::span<const VoxelCrossing> crossings) {
  if (!study.body.slice_polygons.empty()) return contour_intervals(study, from_mm, to_mm, inside_ct);
  std::vector<AlphaRange> out;
  for (const VoxelCrossing& c : crossings) {
    if (study.body.mask[c.voxel] != 0) append(out, c.alpha_in, c.alpha_out);
  }
  return out;
}

}  // namespace countersign::patient
