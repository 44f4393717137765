#include <countersign/util/assert.hpp>
#include <countersign/util/error.hpp>
#include <countersign/util/exit_code.hpp>

#include <gtest/gtest.h>

#include <optional>
#include <string>

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

Expected<int> parse_digit(char c) {
  if (c < '0' || c > '9')
    return Error{ErrorKind::bad_value, "", "digit", "", std::string{"not a digit: "} + c};
  return c - '0';
}

Expected<void> all_digits(const std::string& text) {
  for (const char c : text) TRY(parse_digit(c));
  return {};
}

Expected<int> sum_of_two(const std::string& text) {
  int a = 0;
  int b = 0;
  TRY_ASSIGN(a, parse_digit(text.at(0)));
  TRY_ASSIGN(b, parse_digit(text.at(1)));
  return a + b;
}

TEST(Expected, VoidHoldsSuccessOrError) {
  EXPECT_TRUE(all_digits("123"));
  const Expected<void> bad = all_digits("1x3");
  ASSERT_FALSE(bad);
  EXPECT_EQ(bad.error().detail, "not a digit: x");
}

TEST(Expected, TryAssignStopsAtTheFirstError) {
  EXPECT_EQ(*sum_of_two("34"), 7);
  EXPECT_EQ(sum_of_two("a4").error().detail, "not a digit: a");
  EXPECT_EQ(sum_of_two("3b").error().detail, "not a digit: b");
}

// Another error type (the engine's facts use one).
struct Fact {
  int code = 0;
};
Expected<double, Fact> half(int n) {
  if (n % 2 != 0) return Fact{n};
  return n / 2.0;
}
Expected<void, Fact> halves(int a, int b) {
  TRY(half(a));
  TRY(half(b));
  return {};
}

TEST(Expected, OtherErrorTypes) {
  EXPECT_TRUE(halves(2, 4));
  EXPECT_EQ(halves(2, 5).error().code, 5);
}

TEST(Assert, BrokenInvariantIsAnInternalError) {
  EXPECT_NO_THROW(COUNTERSIGN_ASSERT(1 + 1 == 2));
  try {
    COUNTERSIGN_ASSERT(1 + 1 == 3);
    FAIL() << "no exception";
  } catch (const util::InternalError& e) {
    EXPECT_EQ(e.error().kind, ErrorKind::internal);
    EXPECT_NE(e.error().detail.find("1 + 1 == 3"), std::string::npos);
    EXPECT_NE(e.error().detail.find("error_test.cpp"), std::string::npos);
    EXPECT_EQ(e.error().detail.find('/'), std::string::npos) << "no build path in messages";
    EXPECT_EQ(exit_code_for(e.error()), ExitCode::internal_error);
  }
  const std::optional<int> empty;
  EXPECT_THROW((void)util::checked(empty), util::InternalError);
  EXPECT_EQ(util::checked(std::optional<int>{3}), 3);
  const int* null = nullptr;
  EXPECT_THROW((void)util::checked(null), util::InternalError);
}

TEST(ExitCode, InternalErrorHasItsOwnCodeAndIsWorst) {
  EXPECT_EQ(static_cast<int>(ExitCode::internal_error), 5);
  EXPECT_EQ(worst(ExitCode::internal_error, ExitCode::bad_input), ExitCode::internal_error);
  EXPECT_EQ(exit_code_for(Error{ErrorKind::missing_attribute, "f", "", "", "d"}), ExitCode::bad_input);
}

TEST(ExitCode, WorstOrdersOutcomes) {
  EXPECT_EQ(worst(ExitCode::all_within_tolerance, ExitCode::outside_tolerance), ExitCode::outside_tolerance);
  EXPECT_EQ(worst(ExitCode::not_checked, ExitCode::outside_tolerance), ExitCode::not_checked);
  EXPECT_EQ(worst(ExitCode::bad_input, ExitCode::not_checked), ExitCode::bad_input);
  EXPECT_EQ(worst(ExitCode::all_within_tolerance, ExitCode::all_within_tolerance), ExitCode::all_within_tolerance);
}

}  // namespace
}  // namespace countersign
