#include <countersign/geometry/polygon.hpp>

#include <algorithm>
#include <cmath>
#include <cstddef>
#include <limits>

namespace countersign::geometry {

double polygon_area_mm2(const std::vector<std::array<double, 2>>& v) {
  if (v.size() < 3) return 0.0;
  double twice = 0.0;
  for (std::size_t i = 0, j = v.size() - 1; i < v.size(); j = i++)
    twice += v[j][0] * v[i][1] - v[i][0] * v[j][1];
  return std::abs(twice) / 2.0;
}

double polygon_perimeter_mm(const std::vector<std::array<double, 2>>& v) {
  if (v.size() < 2) return 0.0;
  double length = 0.0;
  for (std::size_t i = 0, j = v.size() - 1; i < v.size(); j = i++)
    length += std::hypot(v[i][0] - v[j][0], v[i][1] - v[j][1]);
  return length;
}

PrincipalMoments polygon_principal_moments(const std::vector<std::array<double, 2>>& v) {
  if (v.size() < 3) return {};
  double twice_area = 0.0, cx = 0.0, cy = 0.0, ixx = 0.0, iyy = 0.0, ixy = 0.0;
  for (std::size_t i = 0, j = v.size() - 1; i < v.size(); j = i++) {
    const double x0 = v[j][0], y0 = v[j][1], x1 = v[i][0], y1 = v[i][1];
    const double cross = x0 * y1 - x1 * y0;
    twice_area += cross;
    cx += (x0 + x1) * cross;
    cy += (y0 + y1) * cross;
    ixx += (y0 * y0 + y0 * y1 + y1 * y1) * cross;  // integral of y^2 about the origin, x 12
    iyy += (x0 * x0 + x0 * x1 + x1 * x1) * cross;  // integral of x^2, x 12
    ixy += (x0 * y1 + 2.0 * x0 * y0 + 2.0 * x1 * y1 + x1 * y0) * cross;  // integral of x y, x 24
  }
  if (twice_area == 0.0) return {};
  const double area = twice_area / 2.0;
  cx /= 3.0 * twice_area;
  cy /= 3.0 * twice_area;
  // About the centroid (the signed sums carry the orientation; dividing by the signed area's sign
  // makes them positive for either orientation).
  const double sign = area > 0.0 ? 1.0 : -1.0;
  const double a = std::abs(area);
  const double cxx = sign * ixx / 12.0 - a * cy * cy;
  const double cyy = sign * iyy / 12.0 - a * cx * cx;
  const double cxy = sign * ixy / 24.0 - a * cx * cy;
  const double mean = (cxx + cyy) / 2.0;
  const double radius = std::hypot((cxx - cyy) / 2.0, cxy);
  return {mean + radius, mean - radius};
}

bool polygon_contains(const std::vector<std::array<double, 2>>& v, double x_mm, double y_mm) {
  bool inside = false;
  for (std::size_t i = 0, j = v.size() - 1; i < v.size(); j = i++) {
    if ((v[i][1] > y_mm) != (v[j][1] > y_mm) &&
        x_mm < (v[j][0] - v[i][0]) * (y_mm - v[i][1]) / (v[j][1] - v[i][1]) + v[i][0]) {
      inside = !inside;
    }
  }
  return inside;
}

double polygon_edge_distance_mm(const std::vector<std::array<double, 2>>& v, double x_mm, double y_mm) {
  double nearest = std::numeric_limits<double>::infinity();
  for (std::size_t i = 0, j = v.size() - 1; i < v.size(); j = i++) {
    const double dx = v[i][0] - v[j][0];
    const double dy = v[i][1] - v[j][1];
    const double length2 = dx * dx + dy * dy;
    const double t =
        length2 > 0.0 ? std::clamp(((x_mm - v[j][0]) * dx + (y_mm - v[j][1]) * dy) / length2, 0.0, 1.0) : 0.0;
    nearest = std::min(nearest, std::hypot(x_mm - (v[j][0] + t * dx), y_mm - (v[j][1] + t * dy)));
  }
  return nearest;
}

}  // namespace countersign::geometry
