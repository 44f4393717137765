#include <countersign/patient/missing_tissue.hpp>

#include <countersign/geometry/beam_frame.hpp>
#include <countersign/patient/ray_trace.hpp>

#include <algorithm>
#include <cmath>

namespace countersign::patient {

FieldPlane field_plane(const geometry::BeamFrame& frame, double spd_mm) {
  const Eigen::Matrix3d to_patient = frame.rotation().transpose();
  FieldPlane plane;
  plane.centre_mm = frame.source_in_patient_mm() + spd_mm * frame.beam_direction_in_patient();
  plane.u_axis = to_patient * Eigen::Vector3d::UnitX();
  plane.v_axis = to_patient * Eigen::Vector3d::UnitY();
  return plane;
}

std::vector<std::array<double, 2>> rectangle_mm(double x1, double x2, double y1, double y2) {
  return {{x1, y1}, {x2, y1}, {x2, y2}, {x1, y2}};
}

namespace {

// The spans [u_a, u_b] of the polygon on the line v (even-odd rule).
void polygon_spans(std::span<const std::array<double, 2>> polygon, double v, std::vector<double>& us) {
  us.clear();
  const std::size_t n = polygon.size();
  for (std::size_t a = 0, b = n - 1; a < n; b = a++) {
    const auto& p = polygon[a];
    const auto& q = polygon[b];
    if ((p[1] > v) == (q[1] > v)) continue;
    us.push_back(p[0] + (v - p[1]) * (q[0] - p[0]) / (q[1] - p[1]));
  }
  std::sort(us.begin(), us.end());
}

}  // namespace

MissingTissue missing_tissue(const BodyOutline& body, const FieldPlane& plane,
                             std::span<const std::array<double, 2>> field_uv_mm, double row_spacing_mm) {
  MissingTissue out;
  if (field_uv_mm.size() < 3 || !(row_spacing_mm > 0.0)) return out;
  double v_min = field_uv_mm.front()[1];
  double v_max = v_min;
  for (const auto& p : field_uv_mm) v_min = std::min(v_min, p[1]), v_max = std::max(v_max, p[1]);
  const auto rows = static_cast<std::size_t>(std::max(1.0, std::ceil((v_max - v_min) / row_spacing_mm)));
  const double h = (v_max - v_min) / static_cast<double>(rows);
  out.row_spacing_mm = h;
  double outside_ct_mm2 = 0.0;
  double outside_body_mm2 = 0.0;
  std::vector<double> us;
  std::vector<VoxelCrossing> crossings;
  for (std::size_t r = 0; r < rows; ++r) {
    const double v = v_min + (static_cast<double>(r) + 0.5) * h;
    polygon_spans(field_uv_mm, v, us);
    for (std::size_t m = 0; m + 1 < us.size(); m += 2) {
      const double length = us[m + 1] - us[m];
      if (!(length > 0.0)) continue;
      const Eigen::Vector3d from = plane.centre_mm + us[m] * plane.u_axis + v * plane.v_axis;
      const Eigen::Vector3d to = plane.centre_mm + us[m + 1] * plane.u_axis + v * plane.v_axis;
      out.field_area_mm2 += length * h;
      const auto inside_ct = trace_voxels(body.study().ct.grid, from, to, crossings);
      if (!inside_ct) {
        outside_ct_mm2 += length * h;
        continue;
      }
      double in_body = 0.0;
      for (const auto& range : body.intervals(from, to, *inside_ct, crossings))
        in_body += range.alpha_out - range.alpha_in;
      const double in_ct = inside_ct->alpha_out - inside_ct->alpha_in;
      outside_ct_mm2 += (1.0 - in_ct) * length * h;
      outside_body_mm2 += (in_ct - in_body) * length * h;
    }
  }
  if (out.field_area_mm2 > 0.0) {
    out.outside_body_fraction = outside_body_mm2 / out.field_area_mm2;
    out.outside_ct_fraction = outside_ct_mm2 / out.field_area_mm2;
  }
  return out;
}

}  // namespace countersign::patient
