// Siddon tracing checked against geometry worked out independently in the test: the clipped length
// by the slab method, the voxel of each crossing by its midpoint, adjacency of consecutive voxels.

#include <countersign/patient/ray_trace.hpp>

#include "synthetic_study.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <random>

namespace countersign::test {
namespace {

using patient::trace_voxels;
using patient::VoxelCrossing;

const study::VoxelGrid grid = grid_of({20, 15, 10}, {-9.5, -14.0, -22.5}, {1.0, 2.0, 5.0});

// Length of the segment inside the box [lo, hi] (Kay and Kajiya slab method, written here).
double clipped_length(const Eigen::Vector3d& a, const Eigen::Vector3d& b) {
  double t0 = 0.0, t1 = 1.0;
  for (int axis = 0; axis < 3; ++axis) {
    const double lo = grid.lower_edge_mm(axis), hi = grid.upper_edge_mm(axis), d = b[axis] - a[axis];
    if (d == 0.0) {
      if (a[axis] < lo || a[axis] > hi) return 0.0;
      continue;
    }
    const double u = (lo - a[axis]) / d, v = (hi - a[axis]) / d;
    t0 = std::max(t0, std::min(u, v));
    t1 = std::min(t1, std::max(u, v));
  }
  return t1 > t0 ? (t1 - t0) * (b - a).norm() : 0.0;
}

std::array<std::size_t, 3> ijk(std::size_t index) {
  return {index % grid.size[0], (index / grid.size[0]) % grid.size[1], index / (grid.size[0] * grid.size[1])};
}

TEST(RayTrace, AlongAnAxisEveryVoxelIsItsSpacing) {
  std::vector<VoxelCrossing> crossings;
  const Eigen::Vector3d from(-100.0, -3.0, 1.0), to(100.0, -3.0, 1.0);
  const auto range = trace_voxels(grid, from, to, crossings);
  ASSERT_TRUE(range.has_value());
  ASSERT_EQ(crossings.size(), 20u);
  for (std::size_t n = 0; n < crossings.size(); ++n) {
    EXPECT_NEAR((crossings[n].alpha_out - crossings[n].alpha_in) * 200.0, 1.0, 1e-12);
    EXPECT_EQ(ijk(crossings[n].voxel)[0], n);
  }
}

TEST(RayTrace, MissesAreNullopt) {
  std::vector<VoxelCrossing> crossings;
  EXPECT_FALSE(trace_voxels(grid, {-100.0, 100.0, 0.0}, {100.0, 100.0, 0.0}, crossings));  // above the volume
  EXPECT_FALSE(trace_voxels(grid, {-100.0, 0.0, 0.0}, {-50.0, 0.0, 0.0}, crossings));      // stops before it
  EXPECT_FALSE(trace_voxels(grid, {0.0, 0.0, 0.0}, {0.0, 0.0, 0.0}, crossings));           // no length
  EXPECT_TRUE(crossings.empty());
}

TEST(RayTrace, ThroughVoxelCornersNoZeroLengthPieces) {
  // A diagonal through the corners of 1 x 2 mm voxels in the plane z = 0.
  std::vector<VoxelCrossing> crossings;
  const Eigen::Vector3d from(-10.0, -14.0, 0.0), to(5.0, 16.0, 0.0);
  ASSERT_TRUE(trace_voxels(grid, from, to, crossings));
  double total = 0.0;
  for (const auto& c : crossings) {
    EXPECT_GT(c.alpha_out, c.alpha_in);
    total += (c.alpha_out - c.alpha_in) * (to - from).norm();
  }
  EXPECT_NEAR(total, clipped_length(from, to), 1e-9);
}

// 2000 random segments, some starting inside: lengths sum to the clipped length, each piece lies in
// its voxel, consecutive voxels share a face, edge or corner.
TEST(RayTrace, RandomSegmentsAgreeWithIndependentGeometry) {
  std::mt19937 random(14);
  std::uniform_real_distribution<double> coordinate(-60.0, 60.0);
  std::vector<VoxelCrossing> crossings;
  int traced = 0;
  for (int n = 0; n < 2000; ++n) {
    const Eigen::Vector3d a(coordinate(random), coordinate(random), coordinate(random));
    const Eigen::Vector3d b =
        n % 4 == 0 ? Eigen::Vector3d(0.3, -1.7, 2.2)
                   : Eigen::Vector3d(coordinate(random), coordinate(random), coordinate(random));
    const double expected = clipped_length(a, b);
    const auto range = trace_voxels(grid, a, b, crossings);
    if (expected < 1e-9) continue;
    ASSERT_TRUE(range.has_value()) << n;
    ++traced;
    double total = 0.0;
    for (std::size_t c = 0; c < crossings.size(); ++c) {
      const auto& x = crossings[c];
      total += (x.alpha_out - x.alpha_in) * (b - a).norm();
      const Eigen::Vector3d mid = a + 0.5 * (x.alpha_in + x.alpha_out) * (b - a);
      const auto voxel = grid.voxel_at({mid.x(), mid.y(), mid.z()});
      ASSERT_TRUE(voxel.has_value());
      EXPECT_EQ(grid.index((*voxel)[0], (*voxel)[1], (*voxel)[2]), x.voxel)
          << "segment " << n << " piece " << c;
      if (c > 0) {
        const auto p = ijk(crossings[c - 1].voxel), q = ijk(x.voxel);
        for (int axis = 0; axis < 3; ++axis)
          EXPECT_LE(std::abs(static_cast<long>(p[axis]) - static_cast<long>(q[axis])), 1);
      }
    }
    EXPECT_NEAR(total, expected, 1e-9 * std::max(1.0, expected)) << "segment " << n;
  }
  EXPECT_GT(traced, 300);
}

}  // namespace
}  // namespace countersign::test
