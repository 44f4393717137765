// Depths along rays in slab phantoms made in memory: radiological depth must equal the analytic
// sum of thickness x density (exact: every slab face lies on a voxel face), geometric depth the
// analytic distance to the surface; and the structured problems of rays that cannot be used.

#include <countersign/patient/patient_model.hpp>

#include "synthetic_study.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <numbers>

namespace countersign::test {
namespace {

// The depth of source -> point with the demo table.
study::Result<patient::RayDepth> depth_of(const study::Study& s, const Eigen::Vector3d& source,
                                          const Eigen::Vector3d& point) {
  return patient::trace_depth(patient::BodyOutline(s), demo_densities(), source, point);
}
using study::ProblemKind;

// 200 x 200 x 40 mm of 5 mm voxels. Body x in [-80, 80], y in [-60, 90] (anterior surface y = -60).
// Along y: water to -40, lung (-700 HU) to -10 within |x| <= 50, bone (+1200 HU) to 5, water.
const study::VoxelGrid slab_grid = grid_of({40, 40, 8}, {-97.5, -97.5, -17.5}, {5.0, 5.0, 5.0});

int slab_hu(double x, double y, double) {
  if (std::abs(x) > 80.0 || y < -60.0 || y > 90.0) return -1000;
  if (y >= -40.0 && y < -10.0 && std::abs(x) <= 50.0) return -700;
  if (y >= -10.0 && y < 5.0) return 1200;
  return 0;
}

const study::Study& contour_slabs() {
  static const study::Study s = synthetic_study(slab_grid, slab_hu, {rectangle_outline(-80, 80, -60, 90)});
  return s;
}
const study::Study& threshold_slabs() {
  static const study::Study s = synthetic_study(slab_grid, slab_hu, {});
  return s;
}

// Demo table: lung -700 HU -> 0.3, bone 1200 HU -> 1.6, water 1 (hand calculation).
constexpr double water_mm = 20.0 + 45.0, lung_mm = 30.0, bone_mm = 15.0;
constexpr double slab_radiological_mm = water_mm * 1.0 + lung_mm * 0.3 + bone_mm * 1.6;  // 98 mm

class SlabPhantom : public ::testing::TestWithParam<bool> {
 protected:
  const study::Study& study() const { return GetParam() ? threshold_slabs() : contour_slabs(); }
};

TEST_P(SlabPhantom, AnteriorRayRadiologicalDepthIsTheSumOfThicknessTimesDensity) {
  const Eigen::Vector3d point(2.5, 50.0, 2.5);
  const auto depth = depth_of(study(), {2.5, -1000.0, 2.5}, point);
  ASSERT_TRUE(depth.has_value()) << depth.problem().message();
  EXPECT_NEAR(depth->depth_mm, 110.0, 1e-9);
  EXPECT_NEAR(depth->source_to_entry_mm, 940.0, 1e-9);
  EXPECT_NEAR(depth->radiological_depth_mm, slab_radiological_mm, 1e-9);
  EXPECT_NEAR(depth->tissue_path_mm, 110.0, 1e-9);
  EXPECT_EQ(depth->body_entries, 1);
  EXPECT_NEAR(depth->entry_mm.y(), -60.0, 1e-9);
  EXPECT_DOUBLE_EQ(depth->lowest_density, 0.3);
  EXPECT_DOUBLE_EQ(depth->highest_density, 1.6);
  EXPECT_EQ(depth->lowest_hu, -700);
  EXPECT_EQ(depth->highest_hu, 1200);
  EXPECT_EQ(depth->voxels_beyond_table, 0u);
  // Layers: water 20, lung 30, bone 15, water 45.
  ASSERT_EQ(depth->layers.size(), 4u);
  EXPECT_NEAR(depth->layers[1].thickness_mm, 30.0, 1e-9);
  EXPECT_DOUBLE_EQ(depth->layers[1].relative_density, 0.3);
  EXPECT_NEAR(depth->layers[2].thickness_mm, 15.0, 1e-9);
}

TEST_P(SlabPhantom, ObliqueRayScalesEverySlabBySecantOfTheAngle) {
  const double angle = 25.0 * std::numbers::pi / 180.0;
  const Eigen::Vector3d point(10.0, 50.0, 2.5);
  const Eigen::Vector3d source = point - 1000.0 * Eigen::Vector3d(std::sin(angle), std::cos(angle), 0.0);
  const auto depth = depth_of(study(), source, point);
  ASSERT_TRUE(depth.has_value()) << depth.problem().message();
  EXPECT_NEAR(depth->depth_mm, 110.0 / std::cos(angle), 1e-9);
  EXPECT_NEAR(depth->radiological_depth_mm, slab_radiological_mm / std::cos(angle), 1e-9);
}

TEST_P(SlabPhantom, NonCoplanarRayCrossesSlicesExactly) {
  const Eigen::Vector3d d(0.3, 1.0, 0.1);  // rises 11 mm in z while crossing the 110 mm of slabs
  const Eigen::Vector3d point(0.0, 50.0, 0.0);
  const auto depth = depth_of(study(), point - 900.0 * d, point);
  ASSERT_TRUE(depth.has_value()) << depth.problem().message();
  EXPECT_NEAR(depth->depth_mm, 110.0 * d.norm(), 1e-9);
  EXPECT_NEAR(depth->radiological_depth_mm, slab_radiological_mm * d.norm(), 1e-9);
}

INSTANTIATE_TEST_SUITE_P(Body, SlabPhantom, ::testing::Values(false, true),
                         [](const auto& body_case) { return body_case.param ? "FromThreshold" : "FromContours"; });

TEST(RayDepthProblems, PointOutsideTheCt) {
  const auto result = depth_of(contour_slabs(), {0, -1000, 0}, {0, 150, 0});
  ASSERT_FALSE(result.has_value());
  EXPECT_EQ(result.problem().kind, ProblemKind::point_outside_ct);
}

TEST(RayDepthProblems, PointInAirInFrontOfTheBody) {
  const auto result = depth_of(contour_slabs(), {0, -1000, 0}, {0, -70, 0});
  ASSERT_FALSE(result.has_value());
  EXPECT_EQ(result.problem().kind, ProblemKind::point_outside_body);
}

TEST(RayDepthProblems, RayEnteringThroughTheEndOfTheScan) {
  // The body fills every slice, so a ray from above the scanned length meets it at the CT's end face.
  const auto result = depth_of(contour_slabs(), {0, 0, 1000}, {0, 0, 0});
  ASSERT_FALSE(result.has_value());
  EXPECT_EQ(result.problem().kind, ProblemKind::ray_leaves_ct_inside_body) << result.problem().message();
}

TEST(RayDepth, VoxelsBeyondTheTableAreCounted) {
  // A table that ends at 1000 HU: the three 1200 HU voxels on the ray take its last row.
  const patient::DensityMap densities(patient::piecewise_linear_density({{-1000.0, 0.0}, {1000.0, 1.5}}));
  const auto depth = patient::trace_depth(patient::BodyOutline(contour_slabs()), densities,
                                          {2.5, -1000.0, 2.5}, {2.5, 50.0, 2.5});
  ASSERT_TRUE(depth.has_value());
  EXPECT_EQ(depth->voxels_beyond_table, 3u);
  EXPECT_DOUBLE_EQ(depth->highest_density, 1.5);
}

TEST(RayDepth, AirGapBetweenTwoPartsOfTheBody) {
  // Two blocks along y: [-60, 0] and [20, 90]; air (-1000 HU) between them.
  const auto hu = [](double x, double y, double) {
    return std::abs(x) <= 80.0 && ((y >= -60.0 && y < 0.0) || (y >= 20.0 && y < 90.0)) ? 0 : -1000;
  };
  const auto s = synthetic_study(slab_grid, hu,
                                 {rectangle_outline(-80, 80, -60, 0), rectangle_outline(-80, 80, 20, 90)});
  const auto depth = depth_of(s, {2.5, -1000.0, 2.5}, {2.5, 50.0, 2.5});
  ASSERT_TRUE(depth.has_value()) << depth.problem().message();
  EXPECT_EQ(depth->body_entries, 2);
  EXPECT_NEAR(depth->depth_mm, 110.0, 1e-9);
  EXPECT_NEAR(depth->tissue_path_mm, 90.0, 1e-9);
  EXPECT_NEAR(depth->radiological_depth_mm, 90.0, 1e-9);
  ASSERT_EQ(depth->layers.size(), 3u);
  EXPECT_DOUBLE_EQ(depth->layers[1].relative_density, 0.0);
  EXPECT_NEAR(depth->layers[1].thickness_mm, 20.0, 1e-9);
}

TEST(SurfaceAlong, CentralAxisSsdAndItsProblems) {
  const patient::BodyOutline s(contour_slabs());
  const auto ssd = patient::surface_along(s, {2.5, -1000.0, 2.5}, {0.0, 1.0, 0.0});
  ASSERT_TRUE(ssd.has_value()) << ssd.problem().message();
  EXPECT_NEAR(ssd->distance_mm, 940.0, 1e-9);
  const auto missing = patient::surface_along(s, {95.0, -1000.0, 2.5}, {0.0, 1.0, 0.0});  // beside the body
  ASSERT_FALSE(missing.has_value());
  EXPECT_EQ(missing.problem().kind, ProblemKind::central_axis_misses_body);
  const auto cut = patient::surface_along(s, {0.0, 0.0, 1000.0}, {0.0, 0.0, -1.0});
  ASSERT_FALSE(cut.has_value());
  EXPECT_EQ(cut.problem().kind, ProblemKind::ray_leaves_ct_inside_body);
}

}  // namespace
}  // namespace countersign::test
