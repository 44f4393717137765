// Sector integration of phantom scatter (include/countersign/engine/sector_scatter.hpp).

#include <countersign/engine/sector_scatter.hpp>

#include <countersign/geometry/polygon.hpp>
#include <countersign/util/units.hpp>

#include <algorithm>
#include <cmath>
#include <numbers>
#include <utility>

namespace countersign::engine {

namespace {

// Linear interpolation in a sorted axis, extended linearly past either end.
double interpolate(const std::vector<double>& axis, const std::vector<double>& values, double x) {
  if (axis.size() == 1) return values.front();
  const auto upper = std::upper_bound(axis.begin() + 1, axis.end() - 1, x);
  const auto i = static_cast<std::size_t>(upper - axis.begin());
  const double t = (x - axis[i - 1]) / (axis[i] - axis[i - 1]);
  return values[i - 1] + t * (values[i] - values[i - 1]);
}

// The TMR table's row at one depth, interpolated linearly between rows (clamped to the table: a
// depth outside it is flagged by the equivalent-square lookup made for the same part).
std::vector<double> tmr_row_at(const beamdata::Table2D& tmr, double depth_cm) {
  const std::vector<double>& depths = tmr.rows();
  const std::size_t n = tmr.columns().size();
  std::vector<double> row(n);
  const double d = std::clamp(depth_cm, depths.front(), depths.back());
  std::size_t i = 0;
  while (i + 2 < depths.size() && depths[i + 1] < d) ++i;
  const std::size_t j = std::min(i + 1, depths.size() - 1);
  const double t = j == i ? 0.0 : (d - depths[i]) / (depths[j] - depths[i]);
  for (std::size_t c = 0; c < n; ++c) row[c] = tmr.cell(i, c) + t * (tmr.cell(j, c) - tmr.cell(i, c));
  return row;
}

// Entry and exit of a ray p + t·u (t >= 0) through an axis-aligned rectangle; false if it misses.
bool ray_through_box(double px, double py, double ux, double uy, double x0, double x1, double y0, double y1,
                     double& t_in, double& t_out) {
  t_in = 0.0;
  t_out = std::numeric_limits<double>::infinity();
  const auto slab = [&](double p, double u, double lo, double hi) {
    if (std::abs(u) < 1e-12) return p >= lo && p <= hi;
    double a = (lo - p) / u;
    double b = (hi - p) / u;
    if (a > b) std::swap(a, b);
    t_in = std::max(t_in, a);
    t_out = std::min(t_out, b);
    return t_in <= t_out;
  };
  return slab(px, ux, x0, x1) && slab(py, uy, y0, y1);
}

// Whether a point lies in an open leaf-pair row (rows are sorted by y, as the aperture builds them).
bool in_opening(const geometry::Aperture& aperture, double x, double y) {
  if (aperture.leaf_travel() == geometry::LeafTravel::y) std::swap(x, y);  // rows are in the leaves' frame
  const std::vector<geometry::ApertureRow>& rows = aperture.rows();
  auto it = std::upper_bound(rows.begin(), rows.end(), y,
                             [](double v, const geometry::ApertureRow& r) { return v < r.y_lower_mm; });
  // A point on a boundary between rows belongs to either; check the row below too.
  for (int k = 0; k < 2 && it != rows.begin(); ++k) {
    --it;
    if (it->open() && y >= it->y_lower_mm && y <= it->y_upper_mm && x >= it->lo_mm && x <= it->hi_mm)
      return true;
  }
  return false;
}

// Breakpoints of one ray: where it crosses an edge of the jaws, a row or a block.
void collect_breakpoints(const SectorField& field, double px, double py, double ux, double uy, double t_max,
                         std::vector<double>& ts) {
  ts.clear();
  ts.push_back(0.0);
  ts.push_back(t_max);
  const auto add = [&](double t) {
    if (t > 0.0 && t < t_max) ts.push_back(t);
  };
  const geometry::LeafTravel travel = field.aperture->leaf_travel();
  // Only rows whose span across the leaves (v: y for MLCX, x for MLCY) the ray reaches can be
  // crossed; rows are sorted by v, so the others are skipped without a box test.
  const bool along_x = travel == geometry::LeafTravel::x;
  const double v0 = along_x ? py : px;
  const double v1 = v0 + (along_x ? uy : ux) * t_max;
  const double v_min = std::min(v0, v1);
  const double v_max = std::max(v0, v1);
  const std::vector<geometry::ApertureRow>& rows = field.aperture->rows();
  auto first = std::lower_bound(rows.begin(), rows.end(), v_min,
                                [](const geometry::ApertureRow& r, double v) { return r.y_upper_mm < v; });
  for (auto it = first; it != rows.end() && it->y_lower_mm <= v_max; ++it) {
    const geometry::ApertureRow& r = *it;
    double a = 0.0;
    double b = 0.0;
    const geometry::RectMm box = r.rect(travel);
    if (r.open() && ray_through_box(px, py, ux, uy, box.x1_mm, box.x2_mm, box.y1_mm, box.y2_mm, a, b)) {
      add(a);
      add(b);
    }
  }
  if (field.blocks != nullptr) {
    for (const BlockShape& block : *field.blocks) {
      const auto& v = block.outline_mm;
      for (std::size_t i = 0; i < v.size(); ++i) {
        const auto& p = v[i];
        const auto& q = v[(i + 1) % v.size()];
        const double ex = q[0] - p[0];
        const double ey = q[1] - p[1];
        const double denom = ux * ey - uy * ex;
        if (std::abs(denom) < 1e-12) continue;
        const double t = ((p[0] - px) * ey - (p[1] - py) * ex) / denom;
        const double s = ((p[0] - px) * uy - (p[1] - py) * ux) / denom;
        if (s >= -1e-9 && s <= 1.0 + 1e-9) add(t);  // a ray through a vertex crosses both edges
      }
    }
  }
  std::sort(ts.begin(), ts.end());
}

}  // namespace

double circle_equivalent_square_cm(double radius_cm) { return radius_cm * std::sqrt(std::numbers::pi); }

double extrapolate_to_zero_field(double s1, double v1, double s2, double v2) {
  return v1 - s1 * (v2 - v1) / (s2 - s1);
}

ScatterMaximumRatios::ScatterMaximumRatios(const beamdata::BeamData& data, double depth_cm) {
  const std::vector<double>& sides = data.tmr.columns();
  const std::vector<double> tmr = tmr_row_at(data.tmr, depth_cm);
  std::vector<double> sp(sides.size());
  for (std::size_t k = 0; k < sides.size(); ++k)
    sp[k] = interpolate(data.sp.axis(), data.sp.values(), sides[k]);
  if (sides.size() >= 2) {
    tmr0_ = extrapolate_to_zero_field(sides[0], tmr[0], sides[1], tmr[1]);
    sp0_ = extrapolate_to_zero_field(sides[0], sp[0], sides[1], sp[1]);
  } else if (!sides.empty()) {
    tmr0_ = tmr[0];
    sp0_ = sp[0];
  }
  // SMR at the zero field and at each tabulated side; between them TMR and Sp are linear (as the
  // equivalent-square lookup interpolates them), so SMR is evaluated from both on a fine grid.
  std::vector<double> axis{0.0};
  std::vector<double> tmr_axis{tmr0_};
  std::vector<double> sp_axis{sp0_};
  for (std::size_t k = 0; k < sides.size(); ++k) {
    axis.push_back(sides[k]);
    tmr_axis.push_back(tmr[k]);
    sp_axis.push_back(sp[k]);
  }
  largest_radius_cm_ = axis.back() / std::sqrt(std::numbers::pi);
  const auto n = static_cast<std::size_t>(std::ceil(largest_radius_cm_ / step_cm_)) + 1;
  grid_.resize(n + 1);
  // The grid's sides grow with i, so the bracketing node is found by walking the axis once (the
  // same bracket interpolate() finds: the first node past s, from index 1, at most the last).
  std::size_t k = 1;
  for (std::size_t i = 0; i <= n && axis.size() >= 2; ++i) {
    const double s = std::min(circle_equivalent_square_cm(static_cast<double>(i) * step_cm_), axis.back());
    while (k + 1 < axis.size() && axis[k] <= s) ++k;
    const double t = (s - axis[k - 1]) / (axis[k] - axis[k - 1]);
    const double tmr_s = tmr_axis[k - 1] + t * (tmr_axis[k] - tmr_axis[k - 1]);
    const double sp_s = sp_axis[k - 1] + t * (sp_axis[k] - sp_axis[k - 1]);
    grid_[i] = tmr_s * sp_s / sp0_ - tmr0_;
  }
}

double ScatterMaximumRatios::at_radius_cm(double radius_cm) const {
  const double x = std::clamp(radius_cm / step_cm_, 0.0, static_cast<double>(grid_.size() - 1));
  const auto i = std::min(static_cast<std::size_t>(x), grid_.size() - 2);
  const double t = x - static_cast<double>(i);
  return grid_[i] + t * (grid_[i + 1] - grid_[i]);
}

bool BlockShape::contains(double x_mm, double y_mm) const {
  return geometry::polygon_contains(outline_mm, x_mm, y_mm);
}

double transmission_at(const SectorField& field, double x_mm, double y_mm) {
  const geometry::JawOpening& j = field.aperture->jaws();
  if (x_mm < j.x1_mm || x_mm > j.x2_mm || y_mm < j.y1_mm || y_mm > j.y2_mm) return 0.0;
  double t = in_opening(*field.aperture, x_mm, y_mm) ? 1.0 : field.leaf_transmission;
  if (field.blocks != nullptr) {
    for (const BlockShape& block : *field.blocks) {
      if (block.contains(x_mm, y_mm) != block.aperture) t *= block.transmission;
    }
  }
  return t;
}

SectorScatter integrate_sectors(const SectorField& field, double x_mm, double y_mm, double plane_scale,
                                const ScatterMaximumRatios& smr, double max_sector_deg) {
  SectorScatter out;
  out.sectors = std::max(4, static_cast<int>(std::ceil(360.0 / max_sector_deg - 1e-9)));
  out.tmr0 = smr.tmr0();
  out.sp0 = smr.sp0();
  out.primary_transmission = transmission_at(field, x_mm, y_mm);
  out.body_outline = static_cast<bool>(field.outline_radius_mm);
  const geometry::JawOpening& j = field.aperture->jaws();
  const double width_deg = 360.0 / out.sectors;
  std::vector<double> ts;
  ts.reserve(64);
  double sum = 0.0;
  // Central rays at (k + 0.5) widths: the first from one sincos, each next one turned by a width.
  const double width_rad = width_deg * std::numbers::pi / 180.0;
  const double turn_cos = std::cos(width_rad);
  const double turn_sin = std::sin(width_rad);
  double ux = std::cos(0.5 * width_rad);
  double uy = std::sin(0.5 * width_rad);
  for (int k = 0; k < out.sectors; ++k) {
    if (k > 0) {
      const double turned_x = turn_cos * ux - turn_sin * uy;
      uy = turn_sin * ux + turn_cos * uy;
      ux = turned_x;
    }
    const double direction_deg = (k + 0.5) * width_deg;
    double t_in = 0.0;
    double t_out = 0.0;
    if (!ray_through_box(x_mm, y_mm, ux, uy, j.x1_mm, j.x2_mm, j.y1_mm, j.y2_mm, t_in, t_out)) continue;
    if (field.outline_radius_mm) {
      const std::optional<double> body = field.outline_radius_mm(direction_deg, t_out);
      if (body && *body < t_out) {
        t_out = std::max(*body, 0.0);
        ++out.rays_ended_at_body;
      }
    }
    if (util::mm_to_cm(t_out) * plane_scale > smr.largest_radius_cm()) out.beyond_largest_field = true;
    collect_breakpoints(field, x_mm, y_mm, ux, uy, t_out, ts);
    double previous = smr.at_radius_cm(util::mm_to_cm(std::max(t_in, 0.0)) * plane_scale);
    for (std::size_t i = 0; i + 1 < ts.size(); ++i) {
      if (ts[i + 1] <= std::max(t_in, 0.0)) continue;
      const double a = std::max(ts[i], t_in);
      const double b = ts[i + 1];
      const double mid = 0.5 * (a + b);
      const double next = smr.at_radius_cm(util::mm_to_cm(b) * plane_scale);
      sum += transmission_at(field, x_mm + mid * ux, y_mm + mid * uy) * (next - previous);
      previous = next;
    }
  }
  out.smr = sum / out.sectors;
  return out;
}

}  // namespace countersign::engine
