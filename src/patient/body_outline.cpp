// Segment against the body: per slice slab, the 2D segment against that slice's outline edges
// (each crossing parameter exact; inside or outside decided at the midpoint of each piece by the
// even-odd rule, so vertices and edges along the segment need no special case); or, for the
// threshold body, runs of body voxels.

#include <countersign/patient/body_outline.hpp>

#include <algorithm>
#include <cmath>

namespace countersign::patient {

namespace {

using Edge = BodyOutline::Edge;
using SliceEdges = BodyOutline::SliceEdges;

std::size_t band_of(double value, double low, double band_mm, std::size_t bands) {
  const double b = std::floor((value - low) / band_mm);
  return static_cast<std::size_t>(std::clamp(b, 0.0, static_cast<double>(bands - 1)));
}

SliceEdges index_slice(std::span<const study::Polygon> polygons) {
  SliceEdges s;
  for (const auto& polygon : polygons) {
    for (std::size_t a = 0, b = polygon.size() - 1; a < polygon.size(); b = a++)
      s.all.push_back({polygon[b][0], polygon[b][1], polygon[a][0], polygon[a][1]});
  }
  if (s.all.empty()) return s;
  double x_high = s.all.front().x0, y_high = s.all.front().y0;
  s.x_low = x_high, s.y_low = y_high;
  for (const Edge& e : s.all) {
    s.x_low = std::min(s.x_low, e.x0), x_high = std::max(x_high, e.x0);
    s.y_low = std::min(s.y_low, e.y0), y_high = std::max(y_high, e.y0);
  }
  // About 8 edges per band, at most 64 bands.
  const std::size_t bands = std::clamp<std::size_t>(s.all.size() / 8, 1, 64);
  s.y_band_mm = std::max(1e-9, (y_high - s.y_low) / static_cast<double>(bands));
  s.x_band_mm = std::max(1e-9, (x_high - s.x_low) / static_cast<double>(bands));
  s.by_y.resize(bands);
  s.by_x.resize(bands);
  for (const Edge& e : s.all) {
    for (std::size_t n = band_of(std::min(e.y0, e.y1), s.y_low, s.y_band_mm, bands);
         n <= band_of(std::max(e.y0, e.y1), s.y_low, s.y_band_mm, bands); ++n)
      s.by_y[n].push_back(e);
    for (std::size_t n = band_of(std::min(e.x0, e.x1), s.x_low, s.x_band_mm, bands);
         n <= band_of(std::max(e.x0, e.x1), s.x_low, s.x_band_mm, bands); ++n)
      s.by_x[n].push_back(e);
  }
  return s;
}

// Even-odd test; every edge that spans y is in y's band.
bool inside(const SliceEdges& s, double x, double y) {
  if (s.all.empty()) return false;
  bool in = false;
  for (const Edge& e : s.by_y[band_of(y, s.y_low, s.y_band_mm, s.by_y.size())]) {
    if ((e.y0 > y) == (e.y1 > y)) continue;
    if (x < e.x0 + (y - e.y0) * (e.x1 - e.x0) / (e.y1 - e.y0)) in = !in;
  }
  return in;
}

double cross(double ax, double ay, double bx, double by) { return ax * by - ay * bx; }

void crossings_with(std::span<const Edge> edges, const Eigen::Vector2d& p0, const Eigen::Vector2d& d,
                    std::vector<double>& ts) {
  for (const Edge& e : edges) {
    const double ex = e.x1 - e.x0, ey = e.y1 - e.y0;
    const double denominator = cross(d.x(), d.y(), ex, ey);
    if (denominator == 0.0) continue;  // parallel: the midpoint tests decide
    const double wx = e.x0 - p0.x(), wy = e.y0 - p0.y();
    const double t = cross(wx, wy, ex, ey) / denominator;
    const double s = cross(wx, wy, d.x(), d.y()) / denominator;
    if (t > 0.0 && t < 1.0 && s >= 0.0 && s <= 1.0) ts.push_back(t);
  }
}

// Parameters in (0, 1) where p0 -> p1 crosses an edge (an edge may be reported twice: harmless).
void edge_crossings(const SliceEdges& s, const Eigen::Vector2d& p0, const Eigen::Vector2d& p1,
                    std::vector<double>& ts) {
  const std::size_t bands = s.by_y.size();
  const Eigen::Vector2d d = p1 - p0;
  const auto first_band = [&](int axis, double low, double band) {
    return band_of(std::min(p0[axis], p1[axis]), low, band, bands);
  };
  const auto last_band = [&](int axis, double low, double band) {
    return band_of(std::max(p0[axis], p1[axis]), low, band, bands);
  };
  const std::size_t in_x = last_band(0, s.x_low, s.x_band_mm) - first_band(0, s.x_low, s.x_band_mm) + 1;
  const std::size_t in_y = last_band(1, s.y_low, s.y_band_mm) - first_band(1, s.y_low, s.y_band_mm) + 1;
  if (std::min(in_x, in_y) * 2 > bands) {
    crossings_with(s.all, p0, d, ts);
    return;
  }
  // A crossing lies within the segment's extent, and its edge is in the band of the crossing.
  const int axis = in_y <= in_x ? 1 : 0;
  const auto& index = axis == 1 ? s.by_y : s.by_x;
  const double low = axis == 1 ? s.y_low : s.x_low;
  const double band = axis == 1 ? s.y_band_mm : s.x_band_mm;
  for (std::size_t n = first_band(axis, low, band); n <= last_band(axis, low, band); ++n)
    crossings_with(index[n], p0, d, ts);
}

// Appends [a, b], joining it to the previous range when they touch.
void append(std::vector<AlphaRange>& ranges, double a, double b) {
  if (!(b > a)) return;
  if (!ranges.empty() && a <= ranges.back().alpha_out + 1e-12) {
    ranges.back().alpha_out = std::max(ranges.back().alpha_out, b);
    return;
  }
  ranges.push_back({a, b});
}

// One slab [a0, a1] of the segment against one slice's outline.
void slab_intervals(const SliceEdges& s, const Eigen::Vector3d& from, const Eigen::Vector3d& d, double a0,
                    double a1, std::vector<double>& ts, std::vector<AlphaRange>& out) {
  const Eigen::Vector2d q0 = (from + a0 * d).head<2>();
  const Eigen::Vector2d q1 = (from + a1 * d).head<2>();
  ts.assign({0.0, 1.0});
  edge_crossings(s, q0, q1, ts);
  std::sort(ts.begin(), ts.end());
  for (std::size_t i = 1; i < ts.size(); ++i) {
    if (!(ts[i] > ts[i - 1])) continue;
    const Eigen::Vector2d m = q0 + 0.5 * (ts[i - 1] + ts[i]) * (q1 - q0);
    if (inside(s, m.x(), m.y())) append(out, a0 + ts[i - 1] * (a1 - a0), a0 + ts[i] * (a1 - a0));
  }
}

}  // namespace

BodyOutline::BodyOutline(const study::Study& study) : study_(&study) {
  for (const auto& polygons : study.body.slice_polygons) slices_.push_back(index_slice(polygons));
}

std::vector<AlphaRange> BodyOutline::contour_intervals(const Eigen::Vector3d& from, const Eigen::Vector3d& to,
                                                       const AlphaRange& inside_ct) const {
  const study::VoxelGrid& grid = study_->ct.grid;
  const Eigen::Vector3d d = to - from;
  std::vector<AlphaRange> out;
  std::vector<double> ts;
  const auto slice_of = [&](double alpha) {
    const double k = std::floor((from.z() + alpha * d.z() - grid.lower_edge_mm(2)) / grid.spacing_mm[2]);
    return static_cast<std::size_t>(std::clamp(k, 0.0, static_cast<double>(grid.size[2] - 1)));
  };
  std::size_t k = slice_of(inside_ct.alpha_in);
  const std::size_t k_last = slice_of(inside_ct.alpha_out);
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
    if (a1 > a0 && !slices_[k].all.empty()) slab_intervals(slices_[k], from, d, a0, a1, ts, out);
    if (k == k_last) break;
    k = k_last > k ? k + 1 : k - 1;
  }
  return out;
}

std::vector<AlphaRange> BodyOutline::intervals(const Eigen::Vector3d& from_mm, const Eigen::Vector3d& to_mm,
                                               const AlphaRange& inside_ct,
                                               std::span<const VoxelCrossing> crossings) const {
  if (!slices_.empty()) return contour_intervals(from_mm, to_mm, inside_ct);
  std::vector<AlphaRange> out;
  for (const VoxelCrossing& c : crossings) {
    if (study_->body.mask.contains(c.voxel)) append(out, c.alpha_in, c.alpha_out);
  }
  return out;
}

}  // namespace countersign::patient
