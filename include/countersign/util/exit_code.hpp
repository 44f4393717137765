#pragma once

#include <countersign/util/error.hpp>

namespace countersign {

// Process exit codes (README, "Exit codes"). Scripts depend on these numbers: never renumber.
enum class ExitCode : int {
  all_within_tolerance = 0,  // every checked beam within tolerance (or nothing needed checking)
  outside_tolerance = 1,     // at least one beam outside tolerance
  not_checked = 2,           // at least one beam, or the whole plan, could not be checked
  bad_input = 3,             // unreadable/invalid input, or a usage error
  record_not_written =
      4,  // a record asked for (--html, --pdf) could not be written, e.g. no Chromium for the PDF
  internal_error = 5,  // a defect of this program (a broken invariant); nothing was judged by it
};

// The worse of two outcomes, for combining beams and plans:
// internal error > bad input > record not written > not checked > outside > within.
[[nodiscard]] constexpr ExitCode worst(ExitCode a, ExitCode b) {
  auto rank = [](ExitCode c) {
    switch (c) {
      case ExitCode::all_within_tolerance: return 0;
      case ExitCode::outside_tolerance: return 1;
      case ExitCode::not_checked: return 2;
      case ExitCode::record_not_written: return 3;
      case ExitCode::bad_input: return 4;
      case ExitCode::internal_error:
        return 5;
    }
    return 5;
  };
  return rank(a) >= rank(b) ? a : b;
}

// The exit code for an error that stops a command: internal errors have their own, everything
// else is bad input (files, beam data, configuration, usage).
[[nodiscard]] constexpr ExitCode exit_code_for(const Error& error) {
  return error.kind == ErrorKind::internal ? ExitCode::internal_error : ExitCode::bad_input;
}

}  // namespace countersign
