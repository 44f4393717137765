// What the program loads before it does anything: the services' and the PostgreSQL client's
// libraries cost `check` of one plan more start-up time than the check itself (README,
// "Performance"), so the program must not name them as needed libraries.

#include "support/paths.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <string>

namespace countersign::test {
namespace {

// The program's DT_NEEDED entries, one per line, from binutils' readelf.
std::string needed_libraries() {
  const CommandOutput dynamic = run_command("readelf -d " + quote(program().string()));
  EXPECT_EQ(dynamic.exit_code, 0) << dynamic.err;
  std::string needed;
  std::size_t start = 0;
  while (start < dynamic.out.size()) {
    const std::size_t end = std::min(dynamic.out.find('\n', start), dynamic.out.size());
    const std::string line = dynamic.out.substr(start, end - start);
    if (line.find("(NEEDED)") != std::string::npos) needed += line + "\n";
    start = end + 1;
  }
  return needed;
}

TEST(StartupLibraries, TheProgramLoadsLibpqOnlyForAPostgresqlHistory) {
  const std::string needed = needed_libraries();
  ASSERT_NE(needed.find("libdcmdata"), std::string::npos) << "readelf gave no NEEDED list:\n" << needed;
  EXPECT_EQ(needed.find("libpq"), std::string::npos) << needed;
}

}  // namespace
}  // namespace countersign::test
