#pragma once

namespace countersign {

// Process exit codes (DESIGN.md §6). Scripts depend on these numbers: never renumber.
enum class ExitCode : int {
  all_within_tolerance = 0,  // every checked beam within tolerance (or nothing needed checking)
  outside_tolerance = 1,     // at least one beam outside tolerance
  not_checked = 2,           // at least one beam, or the whole plan, could not be checked
  bad_input = 3,             // unreadable/invalid input, or a usage error
};

// The worse of two outcomes, for combining beams and plans: bad input > not checked > outside > within.
[[nodiscard]] constexpr ExitCode worst(ExitCode a, ExitCode b) {
  auto rank = [](ExitCode c) {
    switch (c) {
      case ExitCode::all_within_tolerance: return 0;
      case ExitCode::outside_tolerance: return 1;
      case ExitCode::not_checked: return 2;
      case ExitCode::bad_input: return 3;
    }
    return 3;
  };
  return rank(a) >= rank(b) ? a : b;
}

}  // namespace countersign
