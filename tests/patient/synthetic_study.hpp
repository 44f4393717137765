#pragma once

// Studies made in memory for the patient-geometry tests: a grid, CT numbers from a function of the
// voxel centre, and a body from one outline repeated on every slice (or from the threshold).

#include <countersign/patient/density.hpp>
#include <countersign/study/study.hpp>

#include <functional>
#include <stdexcept>

namespace countersign::test {

inline study::VoxelGrid grid_of(std::array<std::size_t, 3> size, std::array<double, 3> origin_mm,
                                std::array<double, 3> spacing_mm) {
  study::VoxelGrid grid;
  grid.size = size;
  grid.origin_mm = origin_mm;
  grid.spacing_mm = spacing_mm;
  return grid;
}

// outline empty: the body comes from the CT threshold.
inline study::Study synthetic_study(const study::VoxelGrid& grid,
                                    const std::function<int(double x, double y, double z)>& hu_at,
                                    const std::vector<study::Polygon>& outline) {
  study::Study s;
  s.ct.grid = grid;
  s.ct.hu.resize(grid.voxel_count());
  for (std::size_t k = 0; k < grid.size[2]; ++k)
    for (std::size_t j = 0; j < grid.size[1]; ++j)
      for (std::size_t i = 0; i < grid.size[0]; ++i)
        s.ct.hu[grid.index(i, j, k)] = static_cast<std::int16_t>(
            hu_at(grid.centre_mm(0, i), grid.centre_mm(1, j), grid.centre_mm(2, k)));
  if (outline.empty()) {
    auto body = study::body_from_threshold(s.ct);
    if (!body) throw std::runtime_error(body.problem().message());
    s.body = std::move(body.value());
    return s;
  }
  std::vector<study::PlanarContour> contours;
  for (std::size_t k = 0; k < grid.size[2]; ++k) {
    for (const auto& polygon : outline) contours.push_back({grid.centre_mm(2, k), polygon});
  }
  auto body = study::body_from_contours(grid, contours, 1, "BODY");
  if (!body) throw std::runtime_error(body.problem().message());
  s.body = std::move(body.value());
  return s;
}

inline study::Polygon rectangle_outline(double x1, double x2, double y1, double y2) {
  return {{x1, y1}, {x2, y1}, {x2, y2}, {x1, y2}};
}

// The invented demo table of tools/make_demo_studies: -1000 HU -> 0, 0 -> 1, 3000 -> 2.5, linear.
inline patient::DensityMap demo_densities() {
  return patient::DensityMap(patient::piecewise_linear_density({{-1000.0, 0.0}, {0.0, 1.0}, {3000.0, 2.5}}));
}

}  // namespace countersign::test
