#include <countersign/util/error.hpp>
#include <countersign/util/exit_code.hpp>

#include <gtest/gtest.h>

namespace countersign {
namespace {

TEST(Error, MessageNamesFileAttributeAndTag) {
  const Error error{ErrorKind::missing_attribute, "plan.dcm", "BeamSequence", "(300A,00B0)", "absent or empty"};
  EXPECT_EQ(error.message(), "plan.dcm: BeamSequence (300A,00B0): absent or empty");
}

TEST(Error, MessageWithoutAttribute) {
  const Error error{ErrorKind::io, "x.dcm", "", "", "cannot open"};
  EXPECT_EQ(error.message(), "x.dcm: cannot open");
}

TEST(Expected, HoldsValueOrError) {
  const Expected<int> good = 4;
  ASSERT_TRUE(good);
  EXPECT_EQ(*good, 4);
  const Expected<int> bad = Error{ErrorKind::bad_value, "f", "a", "", "d"};
  ASSERT_FALSE(bad);
  EXPECT_EQ(bad.error().kind, ErrorKind::bad_value);
}

TEST(ExitCode, WorstOrdersOutcomes) {
  EXPECT_EQ(worst(ExitCode::all_within_tolerance, ExitCode::outside_tolerance), ExitCode::outside_tolerance);
  EXPECT_EQ(worst(ExitCode::not_checked, ExitCode::outside_tolerance), ExitCode::not_checked);
  EXPECT_EQ(worst(ExitCode::bad_input, ExitCode::not_checked), ExitCode::bad_input);
  EXPECT_EQ(worst(ExitCode::all_within_tolerance, ExitCode::all_within_tolerance), ExitCode::all_within_tolerance);
}

}  // namespace
}  // namespace countersign
