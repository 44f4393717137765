// The individuals control chart against a hand calculation (SAS/QC User's Guide, SHEWHART procedure,
// IRCHART statement: moving ranges of two consecutive values, sigma = mean moving range / d2, limits
// mean +/- 3 sigma; d2(2) = 1.128 from the standard table of control-chart constants, from memory).

#include <countersign/store/control_chart.hpp>

#include <gtest/gtest.h>

#include <vector>

namespace countersign::store {
namespace {

TEST(ControlChart, LimitsOfAShortSeriesMatchTheHandCalculation) {
  // By hand: mean (1 + 3 + 2 + 5) / 4 = 2.75; moving ranges 2, 1, 3, mean 2.0;
  // sigma = 2.0 / 1.128 = 1.773050; 3 sigma = 5.319149; limits 8.069149 and -2.569149.
  const std::vector<double> series{1.0, 3.0, 2.0, 5.0};
  const auto chart = individuals_chart(series);
  ASSERT_TRUE(chart);
  EXPECT_EQ(chart->values, 4U);
  EXPECT_DOUBLE_EQ(chart->centre, 2.75);
  EXPECT_DOUBLE_EQ(chart->mean_moving_range, 2.0);
  EXPECT_NEAR(chart->sigma_estimate, 1.773050, 1e-6);
  EXPECT_NEAR(chart->upper_limit, 8.069149, 1e-6);
  EXPECT_NEAR(chart->lower_limit, -2.569149, 1e-6);
  // The usual shorthand: mean +/- 2.66 x mean moving range (3 / 1.128 = 2.6596).
  EXPECT_NEAR(chart->upper_limit - chart->centre, 2.66 * chart->mean_moving_range, 0.01);
  EXPECT_FALSE(chart->beyond_limits(5.0));
  EXPECT_TRUE(chart->beyond_limits(8.1));
  EXPECT_TRUE(chart->beyond_limits(-2.6));
}

TEST(ControlChart, ASteadySeriesHasLimitsOnItsMean) {
  const std::vector<double> steady{0.4, 0.4, 0.4};
  const auto chart = individuals_chart(steady);
  ASSERT_TRUE(chart);
  EXPECT_DOUBLE_EQ(chart->upper_limit, 0.4);
  EXPECT_DOUBLE_EQ(chart->lower_limit, 0.4);
}

TEST(ControlChart, NoLimitsBelowTwoValues) {
  EXPECT_FALSE(individuals_chart(std::vector<double>{}));
  EXPECT_FALSE(individuals_chart(std::vector<double>{1.5}));
}

}  // namespace
}  // namespace countersign::store
