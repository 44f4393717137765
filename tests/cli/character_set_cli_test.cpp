// Issue 10, item 1, end to end: a valid plan whose Patient's Name is in ISO_IR 100 (Latin-1) made
// `check --json` and `show --json` abort (SIGABRT, exit 134) on text that was not UTF-8. Now every
// command prints it converted, and no input (not even a file name that is not UTF-8) stops the JSON.
// Fixtures: copies of an INVENTED demo plan, changed with DCMTK's dcmodify (a real DICOM tool).

#include "support/paths.hpp"

#include <nlohmann/json.hpp>

#include <gtest/gtest.h>

#include <fstream>
#include <sstream>

namespace countersign {
namespace {

namespace fs = std::filesystem;

std::string program() { return test::quote(test::program().string()); }

std::string slurp(const fs::path& file) {
  std::ifstream in(file, std::ios::binary);
  std::ostringstream text;
  text << in.rdbuf();
  return text.str();
}

// A copy of the demo box plan with the given Specific Character Set and raw Patient's Name bytes.
fs::path plan_with_name(const fs::path& dir, const std::string& name, const std::string& character_set,
                        const std::string& raw_name) {
  const fs::path file = dir / name;
  fs::copy_file(test::source_dir() / "testdata/plans/fern_box_4field.dcm", file);
  const auto modified =
      test::run_command("dcmodify -nb -i " + test::quote("(0008,0005)=" + character_set) + " -i " +
                        test::quote("(0010,0010)=" + raw_name) + " " + test::quote(file.string()));
  EXPECT_EQ(modified.exit_code, 0) << "dcmodify (DCMTK) is needed: " << modified.err;
  return file;
}

class CharacterSetCli : public ::testing::Test {
 protected:
  void SetUp() override { dir_ = test::make_temp_dir("countersign-charset-cli"); }
  void TearDown() override { fs::remove_all(dir_); }
  fs::path dir_;
};

TEST_F(CharacterSetCli, ALatin1NameIsPrintedAsUtf8ByShowAndCheck) {
  const fs::path file = plan_with_name(dir_, "latin1.dcm", "ISO_IR 100", "M\xFCller^J\xF6rg");
  const std::string utf8_name = "M\xC3\xBCller^J\xC3\xB6rg";

  const auto shown = test::run_command(program() + " show --json " + test::quote(file.string()));
  ASSERT_EQ(shown.exit_code, 0) << shown.err;  // was 134 (abort)
  const auto plan = nlohmann::json::parse(shown.out);
  EXPECT_EQ(plan.at("plan").at("patient_name"), utf8_name);
  EXPECT_EQ(plan.at("plan").at("specific_character_set"), "ISO_IR 100");
  EXPECT_TRUE(plan.at("warnings").empty());

  const auto checked = test::run_command(program() + " check --json " + test::quote(file.string()));
  ASSERT_EQ(checked.exit_code, 1) << checked.err;  // the demo box's deliberate MU error, as without the name
  const auto result = nlohmann::json::parse(checked.out);
  EXPECT_EQ(result.at("plans").at(0).at("patient_name"), utf8_name);
  EXPECT_TRUE(result.at("plans").at(0).at("warnings").empty());

  const auto text = test::run_command(program() + " show " + test::quote(file.string()));
  EXPECT_EQ(text.exit_code, 0) << text.err;
  EXPECT_NE(text.out.find(utf8_name), std::string::npos) << text.out;
}

TEST_F(CharacterSetCli, AFolderRunPrintsEveryPlanAlongsideALatin1One) {
  // Before, the one Latin-1 plan made the whole folder's JSON abort: nothing was printed for any plan.
  const fs::path folder = dir_ / "export";
  fs::create_directories(folder);
  plan_with_name(folder, "RP.latin1", "ISO_IR 100", "M\xFCller^J\xF6rg");
  fs::copy_file(test::source_dir() / "testdata/plans/fern_setup_beam.dcm", folder / "RP.setup");
  const auto checked = test::run_command(program() + " check --json " + test::quote(folder.string()));
  ASSERT_EQ(checked.exit_code, 1) << checked.err;
  const auto result = nlohmann::json::parse(checked.out);
  ASSERT_EQ(result.at("plans").size(), 2U);
  EXPECT_EQ(result.at("plans").at(0).at("patient_name"), "M\xC3\xBCller^J\xC3\xB6rg");
}

TEST_F(CharacterSetCli, UndecodableBytesAreReplacedAndEveryOutputSaysSo) {
  const fs::path file = plan_with_name(dir_, "bad.dcm", "ISO_IR 192", "M\xFFller^Test");
  const auto checked = test::run_command(program() + " check --json " + test::quote(file.string()));
  ASSERT_EQ(checked.exit_code, 1) << checked.err;
  const auto result = nlohmann::json::parse(checked.out);
  const auto& plan = result.at("plans").at(0);
  EXPECT_EQ(plan.at("patient_name"), "M\xEF\xBF\xBDller^Test");
  ASSERT_EQ(plan.at("warnings").size(), 1U);
  EXPECT_NE(plan.at("warnings").at(0).get<std::string>().find("PatientName (0010,0010)"), std::string::npos);

  const fs::path record = dir_ / "record.html";
  const auto text = test::run_command(program() + " check --html " + test::quote(record.string()) + " " +
                                      test::quote(file.string()));
  EXPECT_EQ(text.exit_code, 1) << text.err;
  EXPECT_NE(text.out.find("Warning: PatientName (0010,0010)"), std::string::npos) << text.out;
  EXPECT_NE(slurp(record).find("Reading warning"), std::string::npos);

  const auto shown = test::run_command(program() + " show " + test::quote(file.string()));
  EXPECT_NE(shown.out.find("Warning: PatientName (0010,0010)"), std::string::npos) << shown.out;
}

TEST_F(CharacterSetCli, AFileNameThatIsNotUtf8CannotStopTheJson) {
  // File names are bytes on Linux; the JSON carries them with U+FFFD in place of what is not UTF-8.
  const fs::path file = dir_ / "RP\xE9t\xE9.dcm";
  fs::copy_file(test::source_dir() / "testdata/plans/fern_setup_beam.dcm", file);
  const auto checked = test::run_command(program() + " check --json " + test::quote(file.string()));
  ASSERT_EQ(checked.exit_code, 0) << checked.err;
  const auto result = nlohmann::json::parse(checked.out);
  EXPECT_NE(result.at("plans").at(0).at("source_file").get<std::string>().find("RP\xEF\xBF\xBDt"),
            std::string::npos);

  const fs::path bad = dir_ /
                       "n\xE9"
                       "ant.dcm";
  std::ofstream{bad} << "not a plan";
  const auto errors = test::run_command(program() + " check --json " + test::quote(bad.string()));
  EXPECT_EQ(errors.exit_code, 3) << errors.err;
  EXPECT_EQ(nlohmann::json::parse(errors.out).at("errors").size(), 1U);
}

}  // namespace
}  // namespace countersign
