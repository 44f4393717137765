// Field openings: areas, perimeters and equivalent squares are hand calculations from the stated
// positions; 4A/P of a rectangle is Sterling's rule (equivalent square = 2ab/(a+b)).

#include <countersign/geometry/aperture.hpp>

#include <gtest/gtest.h>

namespace countersign::geometry {
namespace {

plan::Beam beam_with_mlc(int pairs, double leaf_width_mm, plan::DeviceType type = plan::DeviceType::mlcx) {
  plan::Beam beam;
  plan::BeamLimitingDevice mlc;
  mlc.type = plan::term(type);
  mlc.pair_count = pairs;
  for (int i = 0; i <= pairs; ++i)
    mlc.leaf_boundaries_mm.push_back(-0.5 * pairs * leaf_width_mm + i * leaf_width_mm);
  beam.beam_limiting_devices.push_back(mlc);
  return beam;
}

plan::ControlPoint jaws(double x1, double x2, double y1, double y2) {
  plan::ControlPoint cp;
  cp.devices.push_back({plan::term(plan::DeviceType::asymx), {x1, x2}});
  cp.devices.push_back({plan::term(plan::DeviceType::asymy), {y1, y2}});
  return cp;
}

TEST(Aperture, SquareJawField) {
  const auto a = build_aperture(plan::Beam{}, jaws(-50, 50, -50, 50));
  ASSERT_TRUE(a) << a.error().message();
  EXPECT_DOUBLE_EQ(a->area_mm2(), 10000.0);
  EXPECT_DOUBLE_EQ(a->perimeter_mm(), 400.0);
  EXPECT_DOUBLE_EQ(a->equivalent_square_mm(), 100.0);
  EXPECT_FALSE(a->shaped_by_mlc());
}

TEST(Aperture, RectangleFollowsSterling) {
  const auto a = build_aperture(plan::Beam{}, jaws(-100, 100, -25, 25));  // 20 x 5 cm
  ASSERT_TRUE(a);
  EXPECT_NEAR(a->equivalent_square_mm(), 2.0 * 200.0 * 50.0 / 250.0, 1e-9);  // 80 mm
}

TEST(Aperture, AsymmetricJawsAndEdgeDistance) {
  const auto a = build_aperture(plan::Beam{}, jaws(0, 100, -50, 50));  // half-beam block
  ASSERT_TRUE(a);
  EXPECT_DOUBLE_EQ(a->jaws().centre_offset_mm(), 50.0);
  EXPECT_TRUE(a->contains(0.0, 0.0));  // the axis lies on the X1 edge
  EXPECT_DOUBLE_EQ(a->distance_to_edge_mm(0.0, 0.0), 0.0);
  EXPECT_DOUBLE_EQ(a->distance_to_edge_mm(50.0, 0.0), 50.0);
  EXPECT_DOUBLE_EQ(a->distance_to_edge_mm(30.0, 40.0), 10.0);
  EXPECT_FALSE(a->contains(-1.0, 0.0));
}

// Four 10 mm leaf pairs inside 40 x 40 mm jaws. Openings (x): [-20,20], [-20,20], [-20,0], closed.
// Area = 40*10 + 40*10 + 20*10 = 1000 mm2. Outline: verticals 3 rows * 2 * 10 = 60; horizontals:
// bottom 40, between rows 2 and 3 the 20 mm uncovered, top of row 3 20 mm: 80. Perimeter 140 mm.
TEST(Aperture, MlcShapeAreaPerimeterAndEdges) {
  const plan::Beam beam = beam_with_mlc(4, 10.0);
  plan::ControlPoint cp = jaws(-20, 20, -20, 20);
  cp.devices.push_back({plan::term(plan::DeviceType::mlcx), {-30, -25, -20, 5, /*B*/ 30, 25, 0, 5}});
  const auto a = build_aperture(beam, cp);
  ASSERT_TRUE(a) << a.error().message();
  EXPECT_TRUE(a->shaped_by_mlc());
  EXPECT_NEAR(a->area_mm2(), 1000.0, 1e-9);
  EXPECT_NEAR(a->perimeter_mm(), 140.0, 1e-9);
  EXPECT_NEAR(a->equivalent_square_mm(), 4000.0 / 140.0, 1e-9);
  EXPECT_TRUE(a->contains(-10.0, 5.0));
  EXPECT_FALSE(a->contains(10.0, 5.0));                        // under the bank-B leaf of pair 3
  EXPECT_FALSE(a->contains(0.0, 15.0));                        // closed pair 4
  EXPECT_NEAR(a->distance_to_edge_mm(-10.0, 5.0), 5.0, 1e-9);  // to the top edge of row 3 at y = 10
  EXPECT_NEAR(a->distance_to_edge_mm(10.0, -5.0), 5.0, 1e-9);  // to the step at y = 0
}

// The same four leaf pairs as an MLCY (leaves travelling along y, boundaries along x): the opening
// is the MLCX one mirrored in the line x = y, so area and perimeter are the same and every point
// query answers for the mirrored point.
TEST(Aperture, MlcyIsTheMirroredMlcxShape) {
  plan::ControlPoint cp = jaws(-20, 20, -20, 20);
  cp.devices.push_back({plan::term(plan::DeviceType::mlcy), {-30, -25, -20, 5, /*B*/ 30, 25, 0, 5}});
  const auto a = build_aperture(beam_with_mlc(4, 10.0, plan::DeviceType::mlcy), cp);
  ASSERT_TRUE(a) << a.error().message();
  EXPECT_EQ(a->leaf_travel(), LeafTravel::y);
  EXPECT_NEAR(a->area_mm2(), 1000.0, 1e-9);
  EXPECT_NEAR(a->perimeter_mm(), 140.0, 1e-9);
  EXPECT_TRUE(a->contains(5.0, -10.0));
  EXPECT_FALSE(a->contains(5.0, 10.0));  // under the bank-B leaf of pair 3
  EXPECT_FALSE(a->contains(15.0, 0.0));  // closed pair 4
  EXPECT_NEAR(a->distance_to_edge_mm(5.0, -10.0), 5.0, 1e-9);
  EXPECT_NEAR(a->distance_to_edge_mm(-5.0, 10.0), 5.0, 1e-9);
  const RectMm third = a->rows()[2].rect(a->leaf_travel());  // pair 3 spans x 0..10, open y -20..0
  EXPECT_DOUBLE_EQ(third.x1_mm, 0.0);
  EXPECT_DOUBLE_EQ(third.x2_mm, 10.0);
  EXPECT_DOUBLE_EQ(third.y1_mm, -20.0);
  EXPECT_DOUBLE_EQ(third.y2_mm, 0.0);
}

TEST(Aperture, MlcyEnvelopeReplacesMissingYJaws) {
  plan::ControlPoint cp;
  cp.devices.push_back({plan::term(plan::DeviceType::asymx), {-10, 10}});
  cp.devices.push_back({plan::term(plan::DeviceType::mlcy), {-30, -10, 20, 40}});
  const auto a = build_aperture(beam_with_mlc(2, 10.0, plan::DeviceType::mlcy), cp);
  ASSERT_TRUE(a) << a.error().message();
  EXPECT_EQ(a->jaws().y_source, JawSource::mlc_envelope);
  EXPECT_EQ(a->jaws().x_source, JawSource::jaws);
  EXPECT_DOUBLE_EQ(a->jaws().y1_mm, -30.0);
  EXPECT_DOUBLE_EQ(a->jaws().y2_mm, 40.0);
  EXPECT_NEAR(a->area_mm2(), 500.0 + 500.0, 1e-9);
}

TEST(Aperture, MlcEnvelopeReplacesMissingJaws) {
  const plan::Beam beam = beam_with_mlc(2, 10.0);
  plan::ControlPoint cp;
  cp.devices.push_back({plan::term(plan::DeviceType::mlcx), {-30, -10, 20, 40}});
  const auto a = build_aperture(beam, cp);
  ASSERT_TRUE(a) << a.error().message();
  EXPECT_EQ(a->jaws().x_source, JawSource::mlc_envelope);
  EXPECT_DOUBLE_EQ(a->jaws().x1_mm, -30.0);
  EXPECT_DOUBLE_EQ(a->jaws().x2_mm, 40.0);
  EXPECT_DOUBLE_EQ(a->jaws().length_mm(), 20.0);
  EXPECT_NEAR(a->area_mm2(), 500.0 + 500.0, 1e-9);
}

TEST(Aperture, RejectsMissingOrUnsupportedDevices) {
  plan::ControlPoint only_x;
  only_x.devices.push_back({plan::term(plan::DeviceType::x), {-50, 50}});
  const auto missing = build_aperture(plan::Beam{}, only_x);
  ASSERT_FALSE(missing);
  EXPECT_EQ(missing.error().kind, ErrorKind::missing_attribute);
  EXPECT_EQ(missing.error().tag, "(300A,011C)");

  plan::ControlPoint mlcy = jaws(-50, 50, -50, 50);
  mlcy.devices.push_back({plan::term(plan::DeviceType::mlcy), {0, 0}});
  EXPECT_EQ(build_aperture(plan::Beam{}, mlcy).error().kind, ErrorKind::missing_attribute);  // no boundaries
  plan::ControlPoint both = jaws(-50, 50, -50, 50);
  both.devices.push_back({plan::term(plan::DeviceType::mlcx), {-5, 5}});
  both.devices.push_back({plan::term(plan::DeviceType::mlcy), {-5, 5}});
  EXPECT_EQ(build_aperture(beam_with_mlc(1, 10.0), both).error().kind, ErrorKind::bad_value);

  plan::ControlPoint bad_count = jaws(-50, 50, -50, 50);
  bad_count.devices.push_back({plan::term(plan::DeviceType::mlcx), {1, 2, 3}});
  EXPECT_FALSE(build_aperture(beam_with_mlc(2, 10.0), bad_count));
}

}  // namespace
}  // namespace countersign::geometry
