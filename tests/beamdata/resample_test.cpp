// Resampling of measured curves for `beamdata import`: linear by hand, monotone cubic against SciPy's
// PchipInterpolator (Debian's python3-scipy, installed by tools/install-deps) as an independent
// implementation of the same published method, and the refusals (no extrapolation, no wide gaps).
#include <countersign/beamdata/resample.hpp>

#include "support/paths.hpp"

#include <gtest/gtest.h>

#include <sstream>
#include <string>
#include <vector>

namespace countersign::beamdata {
namespace {

TEST(Resample, LinearByHand) {
  const Curve c({{0.0, 10.0}, {2.0, 20.0}, {3.0, 18.0}});
  EXPECT_DOUBLE_EQ(resample(c, 0.5, ResamplingMethod::linear, 5.0).value, 12.5);  // hand calculation
  EXPECT_DOUBLE_EQ(resample(c, 2.5, ResamplingMethod::linear, 5.0).value, 19.0);
  EXPECT_DOUBLE_EQ(resample(c, 3.0, ResamplingMethod::linear, 5.0).value, 18.0);
}

TEST(Resample, RepeatedPositionsAreAveragedAndNodesKeepTheirValue) {
  const Curve c({{1.0, 5.0}, {0.0, 1.0}, {1.0, 7.0}, {2.0, 4.0}});
  EXPECT_EQ(c.x(), (std::vector<double>{0.0, 1.0, 2.0}));
  EXPECT_EQ(c.y(), (std::vector<double>{1.0, 6.0, 4.0}));
  EXPECT_EQ(c.repeated_positions(), 1u);
  EXPECT_DOUBLE_EQ(resample(c, 1.0, ResamplingMethod::monotone_cubic, 1.0).value, 6.0);
}

TEST(Resample, MonotoneCubicDoesNotOvershootAStep) {
  // A step: an unconstrained cubic spline would overshoot 1 and undershoot 0; Fritsch-Carlson may not.
  const Curve c({{0, 0}, {1, 0}, {2, 0}, {3, 1}, {4, 1}, {5, 1}});
  double previous = -1.0;
  for (double x = 0.0; x <= 5.0; x += 0.05) {
    const double v = resample(c, x, ResamplingMethod::monotone_cubic, 1.0).value;
    EXPECT_GE(v, 0.0) << x;
    EXPECT_LE(v, 1.0) << x;
    EXPECT_GE(v, previous) << x;
    previous = v;
  }
}

TEST(Resample, MonotoneCubicAgreesWithScipyPchip) {
  // Irregular positions and a non-monotone curve (a depth dose with its build-up and fall-off).
  const std::vector<std::pair<double, double>> points = {{0.0, 35.0},  {0.3, 58.0}, {0.65, 79.0}, {1.1, 94.0},
                                                         {1.5, 100.0}, {2.2, 97.5}, {3.0, 93.1},  {4.6, 85.0},
                                                         {5.1, 82.5},  {7.9, 70.2}, {10.0, 62.0}};
  const std::vector<double> queries = {0.1, 0.2, 0.5, 0.9, 1.3, 1.7, 2.0, 2.6, 3.8, 4.9, 6.0, 9.1};
  std::ostringstream script;
  script << "from scipy.interpolate import PchipInterpolator\nx=[";
  for (const auto& p : points) script << p.first << ",";
  script << "]\ny=[";
  for (const auto& p : points) script << p.second << ",";
  script << "]\np=PchipInterpolator(x,y)\nfor q in [";
  for (const double q : queries) script << q << ",";
  script << "]: print(repr(float(p(q))))\n";
  const auto result = test::run_command("/usr/bin/python3 -c " + test::quote(script.str()));
  ASSERT_EQ(result.exit_code, 0) << "python3-scipy is needed (tools/install-deps installs it): "
                                 << result.err;
  std::istringstream lines(result.out);
  const Curve curve(points);
  for (const double q : queries) {
    double expected = 0.0;
    ASSERT_TRUE(lines >> expected) << result.out;
    const ResampledValue v = resample(curve, q, ResamplingMethod::monotone_cubic, 5.0);
    ASSERT_TRUE(v.ok());
    EXPECT_NEAR(v.value, expected, 1e-9 * std::abs(expected)) << "at " << q;
  }
}

TEST(Resample, RefusesToExtrapolateOrToBridgeAWideGap) {
  const Curve c({{0.5, 1.0}, {1.0, 2.0}, {4.0, 3.0}, {4.5, 3.5}});
  for (const auto method : {ResamplingMethod::linear, ResamplingMethod::monotone_cubic}) {
    const ResampledValue below = resample(c, 0.4, method, 1.0);
    EXPECT_EQ(below.refusal, ResampleRefusal::below_measured_range);
    EXPECT_EQ(below.reason(1.0), "no measurement at or below it (measured from 0.5)");
    const ResampledValue above = resample(c, 4.6, method, 1.0);
    EXPECT_EQ(above.refusal, ResampleRefusal::above_measured_range);
    EXPECT_EQ(above.reason(1.0), "no measurement at or above it (measured up to 4.5)");
    const ResampledValue gap = resample(c, 2.0, method, 1.0);
    EXPECT_EQ(gap.refusal, ResampleRefusal::gap_too_wide);
    EXPECT_EQ(gap.reason(1.0), "the measured points 1 and 4 around it are 3 apart (limit 1)");
    EXPECT_TRUE(resample(c, 2.0, method, 3.0).ok());  // a wider limit bridges it
    EXPECT_TRUE(resample(c, 4.0, method, 0.1).ok());  // a measured point is never refused
  }
  EXPECT_EQ(to_string(ResamplingMethod::monotone_cubic), "monotone-cubic");
  EXPECT_NE(describe(ResamplingMethod::monotone_cubic).find("Fritsch & Carlson 1980"), std::string::npos);
}

}  // namespace
}  // namespace countersign::beamdata
