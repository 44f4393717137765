// `--on-flag`: the operator's program runs with the result file's path (argv, no shell); a failing
// program is logged with its own words and retried, and its marker goes once it succeeds.

#include <countersign/service/flag_alerts.hpp>
#include <countersign/service/program_runner.hpp>

#include "support/paths.hpp"

#include <gtest/gtest.h>

#include <fstream>
#include <sstream>

namespace countersign::service {
namespace {

namespace fs = std::filesystem;
using namespace std::chrono_literals;

TEST(FlagAlerts, AFailingProgramIsLoggedAndRetriedUntilItSucceeds) {
  const fs::path dir = test::make_temp_dir("countersign-alerts");
  // Fails twice (saying why), then succeeds; counts its runs in a file.
  std::ofstream(dir / "page.sh") << "#!/bin/sh\necho run >> \"" << (dir / "runs").string()
                                 << "\"\n[ \"$(wc -l < \"" << (dir / "runs").string()
                                 << "\")\" -ge 3 ] && exit 0\necho \"pager gateway down\"\nexit 2\n";
  fs::permissions(dir / "page.sh", fs::perms::owner_all);
  std::ofstream(dir / "marker") << "2.25.1\n";
  std::ostringstream log_text;
  ServiceLog log{log_text};
  {
    AlertSettings settings;
    settings.command = {(dir / "page.sh").string()};
    settings.first_retry = 50ms;
    FlagAlerts alerts{settings, dir / "failed", log};
    alerts.add(AlertJob{7, "2.25.1", "outside_tolerance", dir / "7.json", dir / "marker"});
    alerts.wait_idle(std::chrono::steady_clock::now() + 20s);
  }
  const std::string text = log_text.str();
  EXPECT_NE(text.find("alert for check #7 (2.25.1, outside_tolerance) failed (attempt 1 of 8, exit status 2: "
                      "\"pager gateway down\"); next attempt in"),
            std::string::npos)
      << text;
  EXPECT_NE(text.find("failed (attempt 2 of 8"), std::string::npos) << text;
  EXPECT_NE(text.find("alert for check #7 (2.25.1, outside_tolerance) raised"), std::string::npos) << text;
  EXPECT_FALSE(fs::exists(dir / "marker"));
  fs::remove_all(dir);
}

TEST(ProgramRunner, WordsAreSplitWithoutAShell) {
  auto words = split_command_words("notify --to 'physics desk' \"a \\\"b\\\"\" $HOME;rm", "--on-flag");
  ASSERT_TRUE(words) << words.error().message();
  EXPECT_EQ(words.value(),
            (std::vector<std::string>{"notify", "--to", "physics desk", "a \"b\"", "$HOME;rm"}));
  EXPECT_FALSE(split_command_words("notify 'open", "--on-flag"));
  EXPECT_FALSE(split_command_words("   ", "--on-flag"));
  EXPECT_FALSE(find_program("no-such-program-countersign", "--on-flag"));
  const auto outcome = run_program({"/bin/sh", "-c", "echo out; exit 4"}, {}, 10s);
  EXPECT_TRUE(outcome.started);
  EXPECT_FALSE(outcome.succeeded);
  EXPECT_EQ(outcome.how, "exit status 4");
  EXPECT_EQ(outcome.output, "out\n");
}

}  // namespace
}  // namespace countersign::service
