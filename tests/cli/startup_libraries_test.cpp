// What the program loads before it does anything: the services' and the PostgreSQL client's
// libraries cost `check` of one plan more start-up time than the check itself (README,
// "Performance"), so the program must not name them as needed libraries.

#include "support/paths.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <filesystem>
#include <string>
#include <utility>
#include <vector>

namespace countersign::test {
namespace {

namespace fs = std::filesystem;

// The program's DT_NEEDED entries, one per line, from binutils' readelf.
std::string needed_libraries(const fs::path& binary) {
  const CommandOutput dynamic = run_command("readelf -d " + quote(binary.string()));
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

TEST(StartupLibraries, TheCheckingProgramLoadsNeitherLibpqNorTheDicomNetworkLibraries) {
  const std::string needed = needed_libraries(program());
  ASSERT_NE(needed.find("libdcmdata"), std::string::npos) << "readelf gave no NEEDED list:\n" << needed;
  EXPECT_EQ(needed.find("libpq"), std::string::npos) << needed;
  EXPECT_EQ(needed.find("libdcmnet"), std::string::npos) << needed;
  EXPECT_EQ(needed.find("libdcmtls"), std::string::npos) << needed;
  EXPECT_EQ(needed.find("libssl"), std::string::npos) << needed;
}

TEST(StartupLibraries, TheNetworkProgramIsBesideItAndLoadsLibpqOnlyForAPostgresqlHistory) {
  const fs::path network = program().parent_path() / "countersign-network";
  ASSERT_TRUE(fs::exists(network)) << network;
  const std::string needed = needed_libraries(network);
  EXPECT_NE(needed.find("libdcmnet"), std::string::npos) << needed;
  EXPECT_EQ(needed.find("libpq"), std::string::npos) << needed;
}

TEST(StartupLibraries, NetworkCommandsAreHandedOverWithTheirOwnHelp) {
  // Each stand-in reaches the real command: its own options are in its help.
  const std::vector<std::pair<std::string, std::string>> commands{{"watch", "--calling-ae"},
                                                                  {"receive", "--calling-ae"},
                                                                  {"send", "--calling-ae"},
                                                                  {"serve", "--listen"},
                                                                  {"user", "add"}};
  for (const auto& [command, option] : commands) {
    const CommandOutput help = run_command(quote(program().string()) + " " + command + " --help");
    EXPECT_EQ(help.exit_code, 0) << command << ": " << help.err;
    EXPECT_NE(help.out.find(option), std::string::npos) << command << ": " << help.out;
  }
  const CommandOutput listed = run_command(quote(program().string()) + " --help");
  EXPECT_EQ(listed.exit_code, 0);
  for (const char* command : {"watch", "receive", "send", "serve", "user", "check", "explain"})
    EXPECT_NE(listed.out.find(command), std::string::npos) << command;
  // A check that sends its results is the network program's too: a bad destination is its error.
  const CommandOutput bad =
      run_command(quote(program().string()) + " check --send-to NOT-A-DESTINATION " +
                  quote((source_dir() / "testdata/plans/fern_box_4field.dcm").string()));
  EXPECT_EQ(bad.exit_code, 3) << bad.out << bad.err;
  EXPECT_NE(bad.err.find("NOT-A-DESTINATION"), std::string::npos) << bad.err;
}

}  // namespace
}  // namespace countersign::test
