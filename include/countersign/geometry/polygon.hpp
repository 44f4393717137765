#pragma once

// Area and perimeter of a closed polygon given by its vertices (either orientation, not repeated at
// the end), e.g. a block's or an electron cutout's Block Data at the isocentre plane (mm).

#include <array>
#include <vector>

namespace countersign::geometry {

// The enclosed area by the shoelace formula (absolute value; a self-intersecting outline is not
// meaningful here). 0 with fewer than three vertices.
[[nodiscard]] double polygon_area_mm2(const std::vector<std::array<double, 2>>& vertices_mm);

// The length of the closed outline, last vertex back to the first included.
[[nodiscard]] double polygon_perimeter_mm(const std::vector<std::array<double, 2>>& vertices_mm);

// The second moments of area of the enclosed region about its centroid along its principal axes
// (mm^4), larger first: the standard polygon formulas (from the shoelace terms), rotated to the
// principal axes. A rectangle X x Y gives X Y^3 / 12 and Y X^3 / 12.
struct PrincipalMoments {
  double larger_mm4 = 0.0;
  double smaller_mm4 = 0.0;
};
[[nodiscard]] PrincipalMoments polygon_principal_moments(
    const std::vector<std::array<double, 2>>& vertices_mm);

// Whether (x, y) lies inside the outline (even-odd rule).
[[nodiscard]] bool polygon_contains(const std::vector<std::array<double, 2>>& vertices_mm, double x_mm,
                                    double y_mm);

// The distance from (x, y) to the nearest edge of the closed outline.
[[nodiscard]] double polygon_edge_distance_mm(const std::vector<std::array<double, 2>>& vertices_mm,
                                              double x_mm, double y_mm);

}  // namespace countersign::geometry
