// Where the body ends along a sector ray, against analytic line-cylinder intersections (the chord
// formula t = -p·d + sqrt((p·d)² - |p|² + R²) for a unit direction d from p inside a circle of radius R,
// hand geometry) on a water cylinder whose outline is a 720-gon (the polygon lies within
// R (1 - cos(0.25°)) < 0.001 mm of the circle for R = 100 mm).

#include <countersign/patient/body_extent.hpp>

#include "synthetic_study.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <numbers>

namespace countersign::test {
namespace {

constexpr double radius_mm = 100.0;

study::Polygon circle(double r, int vertices) {
  study::Polygon p;
  for (int k = 0; k < vertices; ++k) {
    const double a = 2.0 * std::numbers::pi * k / vertices;
    p.push_back({r * std::cos(a), r * std::sin(a)});
  }
  return p;
}

// A water cylinder of radius 100 mm along z in a CT 300 x 300 x 100 mm (z from -50 to 50).
const study::Study& cylinder() {
  static const study::Study s =
      synthetic_study(grid_of({60, 60, 20}, {-147.5, -147.5, -47.5}, {5.0, 5.0, 5.0}),
                      [](double x, double y, double) { return std::hypot(x, y) <= radius_mm ? 0 : -1000; },
                      {circle(radius_mm, 720)});
  return s;
}

double chord_mm(const Eigen::Vector3d& p, const Eigen::Vector3d& d) {
  const double pd = p.x() * d.x() + p.y() * d.y();
  const double dd = d.x() * d.x() + d.y() * d.y();  // the ray's part across the axis
  const double pp = p.x() * p.x() + p.y() * p.y();
  return (-pd + std::sqrt(pd * pd - dd * (pp - radius_mm * radius_mm))) / dd;
}

TEST(BodyExtent, TransverseRaysEndOnTheCircle) {
  const patient::BodyOutline body(cylinder());
  const Eigen::Vector3d p(60.0, -20.0, 2.5);
  for (int k = 0; k < 12; ++k) {
    const double a = 2.0 * std::numbers::pi * (k + 0.5) / 12.0;
    const Eigen::Vector3d d(std::cos(a), std::sin(a), 0.0);
    const auto extent = patient::body_extent_mm(body, p, d, 400.0);
    ASSERT_TRUE(extent) << "direction " << k;
    EXPECT_NEAR(*extent, chord_mm(p, d), 0.01) << "direction " << k;
  }
}

TEST(BodyExtent, ObliqueRayEndsOnTheCylinderWall) {
  // 30° out of the transverse plane: the wall is reached at 3D length chord/cos(30°) from the
  // point, at z = 2.5 + 0.5 x that length, still inside the CT (hand: 46.2 mm, z 25.6 mm).
  const patient::BodyOutline body(cylinder());
  const Eigen::Vector3d p(60.0, 0.0, 2.5);
  const double c = std::cos(std::numbers::pi / 6.0);
  const Eigen::Vector3d d(c, 0.0, 0.5);
  const auto extent = patient::body_extent_mm(body, p, d, 400.0);
  ASSERT_TRUE(extent);
  EXPECT_NEAR(*extent, 40.0 / c, 0.01);  // (100 - 60) / cos 30°
}

TEST(BodyExtent, NoEndWithinTheReach) {
  const patient::BodyOutline body(cylinder());
  // 40 mm to the wall along +x; a reach of 30 mm stops inside the body.
  EXPECT_FALSE(patient::body_extent_mm(body, {60.0, 0.0, 2.5}, {1.0, 0.0, 0.0}, 30.0));
  EXPECT_TRUE(patient::body_extent_mm(body, {60.0, 0.0, 2.5}, {1.0, 0.0, 0.0}, 50.0));
}

TEST(BodyExtent, TheCtEndingFirstIsNotAnEnd) {
  // Along the cylinder's axis the body runs on to the last slice (z = 50): tissue beyond is unknown,
  // so no end is given (full tissue assumed there; the fraction outside the CT keeps its own limit).
  const patient::BodyOutline body(cylinder());
  EXPECT_FALSE(patient::body_extent_mm(body, {0.0, 0.0, 2.5}, {0.0, 0.0, 1.0}, 400.0));
}

TEST(BodyExtent, PointOutsideTheBodyHasNoExtent) {
  const patient::BodyOutline body(cylinder());
  EXPECT_FALSE(patient::body_extent_mm(body, {120.0, 0.0, 2.5}, {-1.0, 0.0, 0.0}, 400.0));
}

}  // namespace
}  // namespace countersign::test
