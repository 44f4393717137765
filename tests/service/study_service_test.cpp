// The study store end to end through the built `countersign watch`, the real checking pipeline and
// the bundled beam data, on the invented demo study testdata/studies/fern_lung_slab: a plan waiting
// for its study survives SIGKILL and is checked with its CT when the study arrives after the
// restart; a plan whose study never comes is checked without a CT after --study-wait and says so.

#include "service/program_process.hpp"
#include "service/result_files.hpp"
#include "support/paths.hpp"

#include <gtest/gtest.h>
#include <nlohmann/json.hpp>

#include <algorithm>
#include <chrono>
#include <fstream>
#include <functional>
#include <sstream>
#include <thread>

namespace countersign::service {
namespace {

namespace fs = std::filesystem;
using namespace std::chrono_literals;

const fs::path& lung_study() {
  static const fs::path folder = test::source_dir() / "testdata" / "studies" / "fern_lung_slab";
  return folder;
}
constexpr const char* plan_uid = "2.25.301642988147209845366118572013.201.1.0";  // dcmdump of the plan

// Copies a file into the inbox the way a receiver or careful exporter does: written aside, renamed in.
void arrive(const fs::path& source, const fs::path& inbox, const std::string& name) {
  const fs::path aside = inbox.parent_path() / ("staging-" + name);
  fs::copy_file(source, aside);
  fs::rename(aside, inbox / name);
}

nlohmann::json plan_result(const fs::path& results) {
  const fs::path file = test::result_file(results, plan_uid, ".json");
  if (!fs::exists(file)) return {};
  return nlohmann::json::parse(test::file_text(file)).at("plans").at(0);
}

class StudyServiceTest : public ::testing::Test {
 protected:
  void SetUp() override {
    dir_ = test::make_temp_dir("countersign-study-service");
    fs::create_directories(inbox());
  }
  void TearDown() override { fs::remove_all(dir_); }
  fs::path inbox() const { return dir_ / "inbox"; }
  fs::path results() const { return dir_ / "results"; }
  std::string watch_once(const std::string& extra) const {
    return test::quote(test::program().string()) + " watch " + test::quote(inbox().string()) + " --out " +
           test::quote(results().string()) + " --once --quiet-seconds 0.2 " + extra;
  }
  fs::path dir_;
};

TEST_F(StudyServiceTest, APlanWaitingForItsStudySurvivesSigkillAndIsCheckedWithTheCtAfterTheRestart) {
  arrive(lung_study() / "RP.fern_lung_4field.dcm", inbox(), "RP.dcm");
  {
    Program watcher({"watch", inbox().string(), "--out", results().string(), "--study-wait", "600"},
                    dir_ / "first.log");
    ASSERT_TRUE(watcher.running());
    ASSERT_TRUE(test::wait_until(
        [&] {
          return test::file_text(dir_ / "first.log").find("waiting for the study of RP.dcm") !=
                 std::string::npos;
        },
        30s))
        << test::file_text(dir_ / "first.log");
    watcher.signal(SIGKILL);
    watcher.wait();
  }
  EXPECT_TRUE(fs::exists(inbox() / "RP.dcm"));  // still waiting, nothing recorded
  EXPECT_EQ(test::count_results(results(), ".json"), 0U);
  // The study arrives while the service is down; the restart finds plan and study in the inbox.
  arrive(lung_study() / "RS.dcm", inbox(), "RS.dcm");
  for (const auto& entry : fs::directory_iterator{lung_study()}) {
    const std::string name = entry.path().filename().string();
    if (name.rfind("CT", 0) == 0) arrive(entry.path(), inbox(), name);
  }
  const auto run = test::run_command(watch_once("--study-wait 600"));
  ASSERT_EQ(run.exit_code, 0) << run.out << run.err;
  const auto plan = plan_result(results());
  ASSERT_FALSE(plan.is_null()) << run.out;
  EXPECT_TRUE(plan.at("patient_study").at("used").get<bool>()) << plan.at("patient_study");
  for (const auto& beam : plan.at("beams")) EXPECT_EQ(beam.at("patient").at("source"), "ct") << beam;
  EXPECT_NE(run.out.find("with its CT study"), std::string::npos) << run.out;
  EXPECT_EQ(test::recorded_checks(results()).size(), 1U);
  EXPECT_TRUE(fs::is_empty(inbox()));
  EXPECT_TRUE(fs::is_empty(results() / "quarantine"));
}

TEST_F(StudyServiceTest, APlanWhoseStudyNeverComesIsCheckedWithoutACtAfterTheWaitAndSaysSo) {
  arrive(lung_study() / "RP.fern_lung_4field.dcm", inbox(), "RP.dcm");
  const auto run = test::run_command(watch_once("--study-wait 1"));
  ASSERT_EQ(run.exit_code, 0) << run.out << run.err;
  EXPECT_NE(run.out.find("no study for RP.dcm after 1 s"), std::string::npos) << run.out;
  const auto plan = plan_result(results());
  ASSERT_FALSE(plan.is_null()) << run.out;
  EXPECT_FALSE(plan.at("patient_study").at("used").get<bool>());
  EXPECT_NE(plan.at("patient_study").at("explanation").get<std::string>().find("--study-wait"),
            std::string::npos)
      << plan.at("patient_study");
  for (const auto& beam : plan.at("beams")) EXPECT_NE(beam.at("patient").at("source"), "ct") << beam;
}

// Issue 14, services: the plan is checked without a CT after --study-wait 1; its study arrives in a
// later run of the watcher and the plan is checked again, now with the CT's radiological depth; the
// history holds both checks, the second superseding the first.
TEST_F(StudyServiceTest, APlanCheckedWithoutItsStudyIsCheckedAgainWithTheCtWhenTheStudyArrivesLater) {
  arrive(lung_study() / "RP.fern_lung_4field.dcm", inbox(), "RP.dcm");
  auto run = test::run_command(watch_once("--study-wait 1"));
  ASSERT_EQ(run.exit_code, 0) << run.out << run.err;
  const auto first = plan_result(results());
  ASSERT_FALSE(first.is_null()) << run.out;
  EXPECT_FALSE(first.at("patient_study").at("used").get<bool>());
  ASSERT_EQ(test::recorded_checks(results()).size(), 1U);

  arrive(lung_study() / "RS.dcm", inbox(), "RS.dcm");
  for (const auto& entry : fs::directory_iterator{lung_study()}) {
    const std::string name = entry.path().filename().string();
    if (name.rfind("CT", 0) == 0) arrive(entry.path(), inbox(), name);
  }
  run = test::run_command(watch_once("--study-wait 1"));
  ASSERT_EQ(run.exit_code, 0) << run.out << run.err;
  EXPECT_NE(run.out.find("with its CT study, which arrived after check #"), std::string::npos) << run.out;
  auto checks = test::recorded_checks(results());
  ASSERT_EQ(checks.size(), 2U) << run.out;
  std::sort(checks.begin(), checks.end(), [](const auto& a, const auto& b) { return a.id < b.id; });
  EXPECT_EQ(checks[1].replaces_check_id, checks[0].id);
  EXPECT_EQ(checks[1].sop_instance_uid, plan_uid);
  const auto second = plan_result(results());  // the newest result file: the second check's
  EXPECT_TRUE(second.at("patient_study").at("used").get<bool>()) << second.at("patient_study");
  for (const auto& beam : second.at("beams")) {
    EXPECT_EQ(beam.at("patient").at("source"), "ct") << beam;
    EXPECT_EQ(beam.at("depth_source"), "ct_radiological") << beam;
  }
  EXPECT_TRUE(fs::is_empty(inbox()));
  EXPECT_TRUE(fs::is_empty(results() / "awaiting-study"));
  // A third run finds nothing to do.
  run = test::run_command(watch_once("--study-wait 1"));
  ASSERT_EQ(run.exit_code, 0) << run.out << run.err;
  EXPECT_EQ(test::recorded_checks(results()).size(), 2U) << run.out;
}

TEST_F(StudyServiceTest, ReceiveTakesThePlanBeforeItsStudyFromStorescuAndChecksItWithTheCt) {
  ASSERT_EQ(test::run_command("command -v storescu").exit_code, 0)
      << "DCMTK's storescu is not installed (Debian package dcmtk; bash tools/install-deps)";
  const std::uint16_t port = free_port();
  Program receiver{{"receive", "--port", std::to_string(port), "--ae-title", "FERN-CHECK", "--allow-ae",
                    "FERN-TPS", "--out", results().string(), "--study-wait", "600"},
                   dir_ / "receive.log"};
  ASSERT_TRUE(receiver.running());
  ASSERT_TRUE(test::wait_until(
      [&] { return test::file_text(dir_ / "receive.log").find("receiving as AE") != std::string::npos; },
      20s))
      << test::file_text(dir_ / "receive.log");
  const std::string send = "storescu -aet FERN-TPS -aec FERN-CHECK 127.0.0.1 " + std::to_string(port) + " ";
  // The plan first, as a planning system may send it, then the study, and an RT Dose along with it.
  auto sent = test::run_command(send + test::quote((lung_study() / "RP.fern_lung_4field.dcm").string()));
  ASSERT_EQ(sent.exit_code, 0) << sent.out << sent.err;
  ASSERT_TRUE(test::wait_until(
      [&] {
        return test::file_text(dir_ / "receive.log").find("waiting for the study") != std::string::npos;
      },
      20s))
      << test::file_text(dir_ / "receive.log");
  std::string study_files;
  for (const auto& entry : fs::directory_iterator{lung_study()}) {
    if (entry.path().filename().string().rfind("RP", 0) != 0)
      study_files += test::quote(entry.path().string()) + " ";
  }
  sent = test::run_command(
      send + study_files +
      test::quote((test::source_dir() / "testdata" / "malformed" / "rt_dose_sop_class.dcm").string()));
  ASSERT_EQ(sent.exit_code, 0) << sent.out << sent.err;
  ASSERT_TRUE(test::wait_until([&] { return !plan_result(results()).is_null(); }, 60s))
      << test::file_text(dir_ / "receive.log");
  const auto plan = plan_result(results());
  EXPECT_TRUE(plan.at("patient_study").at("used").get<bool>()) << plan.at("patient_study");
  for (const auto& beam : plan.at("beams")) EXPECT_EQ(beam.at("patient").at("source"), "ct") << beam;
  const std::string log = test::file_text(dir_ / "receive.log");
  EXPECT_NE(log.find("received CT Image "), std::string::npos) << log;
  EXPECT_NE(log.find(": RT Dose "), std::string::npos) << log;  // discarded, and said so
  EXPECT_TRUE(fs::is_empty(results() / "quarantine")) << log;
  receiver.signal(SIGTERM);
  receiver.wait();
}

}  // namespace
}  // namespace countersign::service
