// The area a modulated beam opens over its delivery (drawn on the record): union of the segments,
// and the path of moving leaves. Hand-worked geometry.

#include <countersign/geometry/swept_opening.hpp>

#include <gtest/gtest.h>

namespace countersign::geometry {
namespace {

TEST(SweptOpening, SweptOpeningOfStepAndShootIsTheUnionOfItsSegments) {
  plan::Beam beam;
  beam.beam_limiting_devices = {{plan::term(plan::DeviceType::asymx), std::nullopt, 1, {}},
                                {plan::term(plan::DeviceType::asymy), std::nullopt, 1, {}},
                                {plan::term(plan::DeviceType::mlcx), std::nullopt, 2, {-20.0, 0.0, 20.0}}};
  const auto cp = [](int index, double weight, std::vector<double> leaves) {
    plan::ControlPoint p;
    p.index = index;
    p.cumulative_meterset_weight = weight;
    p.devices = {{plan::term(plan::DeviceType::asymx), {-50.0, 50.0}},
                 {plan::term(plan::DeviceType::asymy), {-20.0, 20.0}},
                 {plan::term(plan::DeviceType::mlcx), std::move(leaves)}};
    return p;
  };
  // Segment 1: pairs open -30..-10 and -30..-10; segment 2: 10..30 and 10..30 (disjoint).
  beam.control_points = {cp(0, 0.0, {-30, -30, -10, -10}), cp(1, 0.5, {-30, -30, -10, -10}),
                         cp(2, 0.5, {10, 10, 30, 30}), cp(3, 1.0, {10, 10, 30, 30})};
  const auto swept = swept_opening(beam);
  ASSERT_TRUE(swept);
  ASSERT_EQ(swept->open.size(), 4u);  // two disjoint intervals in each of the two leaf pairs
  EXPECT_DOUBLE_EQ(swept->open[0].lo_mm, -30.0);
  EXPECT_DOUBLE_EQ(swept->open[0].hi_mm, -10.0);
  EXPECT_DOUBLE_EQ(swept->open[1].lo_mm, 10.0);
  EXPECT_DOUBLE_EQ(swept->open[1].hi_mm, 30.0);
  EXPECT_DOUBLE_EQ(swept->envelope.x1_mm, -50.0);
  EXPECT_DOUBLE_EQ(swept->envelope.y2_mm, 20.0);
}

TEST(SweptOpening, SweptOpeningOfMovingLeavesCoversTheirPath) {
  plan::Beam beam;
  beam.beam_limiting_devices = {{plan::term(plan::DeviceType::mlcx), std::nullopt, 1, {-5.0, 5.0}}};
  plan::ControlPoint a;
  a.cumulative_meterset_weight = 0.0;
  a.devices = {{plan::term(plan::DeviceType::asymx), {-50.0, 50.0}},
               {plan::term(plan::DeviceType::asymy), {-5.0, 5.0}},
               {plan::term(plan::DeviceType::mlcx), {-40.0, -30.0}}};
  plan::ControlPoint b = a;
  b.index = 1;
  b.cumulative_meterset_weight = 1.0;
  b.devices[2].positions_mm = {20.0, 30.0};  // a 10 mm gap sliding from -40 to +30
  beam.control_points = {a, b};
  const auto swept = swept_opening(beam);
  ASSERT_TRUE(swept);
  ASSERT_EQ(swept->open.size(), 1u);
  EXPECT_DOUBLE_EQ(swept->open[0].lo_mm, -40.0);
  EXPECT_DOUBLE_EQ(swept->open[0].hi_mm, 30.0);
}

}  // namespace
}  // namespace countersign::geometry
