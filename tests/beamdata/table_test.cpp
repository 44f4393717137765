// Interpolation and provenance of the beam-data tables (beamdata/FORMAT.md: linear per axis, bilinear in
// two-axis tables, extrapolation never silent). Expected values are computed by hand.
#include <countersign/beamdata/table.hpp>

#include <gtest/gtest.h>

#include <cmath>
#include <limits>
#include <stdexcept>

namespace countersign::beamdata {
namespace {

Table1D sc_table() { return Table1D{"6X/sc.csv", "sc", "field_cm", {4.0, 10.0, 20.0}, {0.94, 1.00, 1.04}}; }

// Rows depth 1.5, 5, 10; columns field 5, 10, 20.
Table2D tmr_table() {
  return Table2D{"6X/tmr.csv",
                 "tmr",
                 "depth_cm",
                 {1.5, 5.0, 10.0},
                 "field_cm",
                 {5.0, 10.0, 20.0},
                 {1.00, 1.00, 1.00,  //
                  0.90, 0.92, 0.94,  //
                  0.70, 0.76, 0.80}};
}

TEST(Table1D, AtNodeReturnsNodeValueWithoutWeight) {
  const Lookup l = sc_table().at(10.0);
  EXPECT_DOUBLE_EQ(l.value, 1.00);
  ASSERT_EQ(l.axes.size(), 1u);
  EXPECT_EQ(l.axes[0].lower_index, 1u);
  EXPECT_EQ(l.axes[0].upper_index, 1u);
  EXPECT_DOUBLE_EQ(l.axes[0].upper_weight, 0.0);
  EXPECT_FALSE(l.extrapolated());
  EXPECT_EQ(l.table_file, "6X/sc.csv");
  EXPECT_EQ(l.quantity, "sc");
  EXPECT_EQ(l.axes[0].axis, "field_cm");
}

TEST(Table1D, FirstAndLastNodesAreNotExtrapolated) {
  EXPECT_DOUBLE_EQ(sc_table().at(4.0).value, 0.94);
  EXPECT_FALSE(sc_table().at(4.0).extrapolated());
  EXPECT_DOUBLE_EQ(sc_table().at(20.0).value, 1.04);
  EXPECT_FALSE(sc_table().at(20.0).extrapolated());
  EXPECT_EQ(sc_table().at(20.0).axes[0].lower_index, 2u);
}

TEST(Table1D, BetweenNodesIsLinear) {
  // 15 cm: halfway between 10 (1.00) and 20 (1.04) -> 1.02.
  const Lookup l = sc_table().at(15.0);
  EXPECT_NEAR(l.value, 1.02, 1e-12);
  EXPECT_EQ(l.axes[0].lower_index, 1u);
  EXPECT_EQ(l.axes[0].upper_index, 2u);
  EXPECT_DOUBLE_EQ(l.axes[0].lower_node, 10.0);
  EXPECT_DOUBLE_EQ(l.axes[0].upper_node, 20.0);
  EXPECT_NEAR(l.axes[0].upper_weight, 0.5, 1e-12);
  EXPECT_FALSE(l.extrapolated());
  // 5 cm: one sixth of the way from 4 (0.94) to 10 (1.00) -> 0.95.
  EXPECT_NEAR(sc_table().at(5.0).value, 0.95, 1e-12);
}

TEST(Table1D, BelowTheAxisExtendsFirstSegmentAndIsMarked) {
  // 2 cm: slope 0.01/cm on [4, 10] -> 0.94 - 0.02 = 0.92.
  const Lookup l = sc_table().at(2.0);
  EXPECT_NEAR(l.value, 0.92, 1e-12);
  EXPECT_TRUE(l.extrapolated());
  EXPECT_TRUE(l.axes[0].extrapolated);
  EXPECT_EQ(l.axes[0].lower_index, 0u);
  EXPECT_EQ(l.axes[0].upper_index, 1u);
  EXPECT_LT(l.axes[0].upper_weight, 0.0);
}

TEST(Table1D, AboveTheAxisExtendsLastSegmentAndIsMarked) {
  // 30 cm: slope 0.004/cm on [10, 20] -> 1.04 + 0.04 = 1.08.
  const Lookup l = sc_table().at(30.0);
  EXPECT_NEAR(l.value, 1.08, 1e-12);
  EXPECT_TRUE(l.extrapolated());
  EXPECT_GT(l.axes[0].upper_weight, 1.0);
}

TEST(Table1D, NonFiniteQueryIsNeverAValue) {
  const Lookup l = sc_table().at(std::numeric_limits<double>::quiet_NaN());
  EXPECT_TRUE(l.extrapolated());
  EXPECT_FALSE(std::isfinite(l.value));
}

TEST(Table1D, SingleNodeIsConstantAndMarkedOffTheNode) {
  const Table1D one{"f.csv", "sc", "field_cm", {10.0}, {1.0}};
  EXPECT_DOUBLE_EQ(one.at(10.0).value, 1.0);
  EXPECT_FALSE(one.at(10.0).extrapolated());
  EXPECT_DOUBLE_EQ(one.at(12.0).value, 1.0);
  EXPECT_TRUE(one.at(12.0).extrapolated());
}

TEST(Table1D, RejectsUnusableAxes) {
  EXPECT_THROW((Table1D{"f", "sc", "field_cm", {10.0, 5.0}, {1.0, 0.9}}), std::invalid_argument);
  EXPECT_THROW((Table1D{"f", "sc", "field_cm", {5.0, 5.0}, {1.0, 0.9}}), std::invalid_argument);
  EXPECT_THROW((Table1D{"f", "sc", "field_cm", {5.0, 10.0}, {1.0}}), std::invalid_argument);
  EXPECT_THROW((Table1D{"f", "sc", "field_cm", {}, {}}), std::invalid_argument);
  EXPECT_THROW(Table1D{}.at(1.0), std::logic_error);
}

TEST(Table2D, AtNodeReturnsCell) {
  const Lookup l = tmr_table().at(5.0, 10.0);
  EXPECT_DOUBLE_EQ(l.value, 0.92);
  ASSERT_EQ(l.axes.size(), 2u);
  EXPECT_EQ(l.axes[0].axis, "depth_cm");
  EXPECT_EQ(l.axes[1].axis, "field_cm");
  EXPECT_EQ(l.axes[0].lower_index, 1u);
  EXPECT_EQ(l.axes[1].lower_index, 1u);
  EXPECT_FALSE(l.extrapolated());
}

TEST(Table2D, CornersAreNotExtrapolated) {
  EXPECT_DOUBLE_EQ(tmr_table().at(1.5, 5.0).value, 1.00);
  EXPECT_DOUBLE_EQ(tmr_table().at(10.0, 20.0).value, 0.80);
  EXPECT_FALSE(tmr_table().at(10.0, 20.0).extrapolated());
}

TEST(Table2D, BetweenNodesIsBilinear) {
  // depth 7.5 (halfway 5..10), field 15 (halfway 10..20):
  // row 5: (0.92 + 0.94)/2 = 0.93; row 10: (0.76 + 0.80)/2 = 0.78; mean 0.855.
  const Lookup l = tmr_table().at(7.5, 15.0);
  EXPECT_NEAR(l.value, 0.855, 1e-12);
  EXPECT_NEAR(l.axes[0].upper_weight, 0.5, 1e-12);
  EXPECT_NEAR(l.axes[1].upper_weight, 0.5, 1e-12);
  EXPECT_FALSE(l.extrapolated());
}

TEST(Table2D, OnARowBetweenColumnsIsLinear) {
  // depth 10 (node), field 7.5: halfway 0.70..0.76 -> 0.73.
  EXPECT_NEAR(tmr_table().at(10.0, 7.5).value, 0.73, 1e-12);
}

TEST(Table2D, BeyondTheDeepestRowExtendsAndIsMarked) {
  // depth 15, field 10: slope (0.76 - 0.92)/5 per cm -> 0.76 - 0.16 = 0.60.
  const Lookup l = tmr_table().at(15.0, 10.0);
  EXPECT_NEAR(l.value, 0.60, 1e-12);
  EXPECT_TRUE(l.extrapolated());
  EXPECT_TRUE(l.axes[0].extrapolated);
  EXPECT_FALSE(l.axes[1].extrapolated);
}

TEST(Table2D, BelowTheSmallestColumnExtendsAndIsMarked) {
  // depth 10, field 2.5: slope 0.06/5 per cm on [5, 10] -> 0.70 - 0.03 = 0.67.
  const Lookup l = tmr_table().at(10.0, 2.5);
  EXPECT_NEAR(l.value, 0.67, 1e-12);
  EXPECT_TRUE(l.extrapolated());
  EXPECT_FALSE(l.axes[0].extrapolated);
  EXPECT_TRUE(l.axes[1].extrapolated);
}

TEST(Table2D, RejectsMismatchedCellCount) {
  EXPECT_THROW((Table2D{"f", "tmr", "depth_cm", {1.0, 2.0}, "field_cm", {5.0}, {1.0}}),
               std::invalid_argument);
}

}  // namespace
}  // namespace countersign::beamdata
