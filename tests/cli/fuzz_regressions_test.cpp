// Inputs that once crashed, hung or leaked under fuzz/ (tools/fuzz), kept so they never do again:
// each plan must read to a clean error (or a plan that checks with a verdict for every beam), each
// beam-data folder must load to a clean error naming a file in it (or a usable library).

#include <countersign/beamdata/library.hpp>
#include <countersign/check/check_plan.hpp>
#include <countersign/dicom/read_plan.hpp>

#include "support/paths.hpp"

#include <gtest/gtest.h>
#include <nlohmann/json.hpp>

#include <algorithm>
#include <filesystem>
#include <string>
#include <vector>

namespace countersign {
namespace {

namespace fs = std::filesystem;

fs::path regressions() { return test::source_dir() / "testdata" / "fuzz-regressions"; }

std::vector<fs::path> entries(const fs::path& folder, bool directories) {
  std::vector<fs::path> out;
  for (const auto& entry : fs::directory_iterator(folder)) {
    if (entry.is_directory() == directories && entry.path().filename() != ".gitkeep")
      out.push_back(entry.path());
  }
  std::sort(out.begin(), out.end());
  return out;
}

TEST(FuzzRegressions, EachPlanInputGivesACleanErrorOrAJudgedPlan) {
  auto library = beamdata::load_library(test::source_dir() / "beamdata");
  ASSERT_TRUE(library) << library.error().message();
  const auto files = entries(regressions() / "plans", false);
  ASSERT_FALSE(files.empty()) << "the regression corpus is missing";
  for (const fs::path& file : files) {
    SCOPED_TRACE(file.string());
    const auto plan = dicom::read_plan_file(file);
    if (!plan) {
      EXPECT_EQ(plan.error().file, file.string());
      EXPECT_FALSE(plan.error().detail.empty());
      continue;
    }
    const check::PlanCheck result = check::check_plan(*plan, *library, check::CheckOptions{});
    for (const auto& beam : result.beams) EXPECT_FALSE(beam.reason.sentence.empty()) << beam.beam_number;
  }
}

TEST(FuzzRegressions, EachPlanInputGoesThroughEveryOutputOfTheProgram) {
  // The whole path, as fuzz_whole_path runs it, through the built program: check (JSON, text and
  // the record) and show (JSON and text). No input may end in anything but a documented exit code,
  // JSON that parses, and no control character from the input on the terminal.
  const fs::path out = test::make_temp_dir("countersign-fuzz-outputs");
  const std::string program = test::quote(test::program().string());
  for (const fs::path& file : entries(regressions() / "plans", false)) {
    SCOPED_TRACE(file.string());
    const std::string input = test::quote(file.string());
    const auto json = test::run_command(program + " check --json --html " +
                                        test::quote((out / "record.html").string()) + " " + input);
    EXPECT_LE(json.exit_code, 3) << json.err;
    EXPECT_FALSE(nlohmann::json::parse(json.out, nullptr, false).is_discarded()) << json.out.substr(0, 500);
    const auto text = test::run_command(program + " check " + input);
    EXPECT_LE(text.exit_code, 3) << text.err;
    EXPECT_EQ(text.out.find('\x1b'), std::string::npos);
    const auto shown = test::run_command(program + " show --json " + input);
    EXPECT_LE(shown.exit_code, 3) << shown.err;
    if (shown.exit_code == 0) {
      EXPECT_FALSE(nlohmann::json::parse(shown.out, nullptr, false).is_discarded());
    }
  }
  fs::remove_all(out);
}

TEST(FuzzRegressions, EachBeamDataFolderGivesACleanErrorNamingTheFile) {
  const fs::path root = regressions() / "beamdata";
  const auto folders = fs::is_directory(root) ? entries(root, true) : std::vector<fs::path>{};
  ASSERT_FALSE(folders.empty()) << "the beam-data regression corpus is missing: " << root;
  for (const fs::path& folder : folders) {
    SCOPED_TRACE(folder.string());
    const auto library = beamdata::load_library(folder);
    if (library) continue;  // a fixed parser may accept what once crashed it
    EXPECT_NE(library.error().message().find(folder.string()), std::string::npos)
        << library.error().message();
  }
}

}  // namespace
}  // namespace countersign
