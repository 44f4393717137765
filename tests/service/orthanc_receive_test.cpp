// The receiver with a real PACS as the sender: Debian's Orthanc, started by the test on loopback
// with a temporary configuration, holds an invented demo plan and sends it to the receiver by
// C-STORE through its REST API (/modalities/.../store), as a department's archive forwards plans.
// Orthanc also tries an object of a SOP class the receiver does not take (pydicom's bundled MR
// image), which must be refused and logged. A second test has Orthanc hold a whole invented demo
// study (20 CT slices, the structure set, the plan of testdata/studies/fern_lung_slab) and forward
// the study through its REST API to the built `countersign receive`, which must check the plan with
// the CT and keep the study's files in its study store. Fails when Orthanc or curl is missing.

#include "service/program_process.hpp"
#include "service/receiver_support.hpp"
#include "service/result_files.hpp"
#include "support/orthanc.hpp"

#include <gtest/gtest.h>
#include <nlohmann/json.hpp>

namespace countersign::service {
namespace {

namespace fs = std::filesystem;
using nlohmann::json;
using namespace std::chrono_literals;

TEST(OrthancSendsToTheReceiver, APlanForwardedByThePacsIsReceivedAndChecked) {
  ASSERT_EQ(test::run_command("command -v curl").exit_code, 0) << "curl is needed (bash tools/install-deps)";
  test::ReceiverUnderTest receiver{"countersign-orthanc-rx"};
  auto settings = receiver.settings();
  settings.allowed_senders = {"FERN-PACS@127.0.0.1"};
  ASSERT_EQ(receiver.start(settings), "");
  std::string error;
  const auto orthanc = test::OrthancUnderTest::start(receiver.dir() / "orthanc",
                                                     {{"checker", "FERN-CHECK", receiver.port()}}, error);
  ASSERT_NE(orthanc, nullptr) << error;

  bool ok = false;
  const fs::path plan = test::source_dir() / "testdata" / "plans" / "fern_step_shoot.dcm";
  const json stored = json::parse(orthanc->post_file("/instances", plan, &ok), nullptr, false);
  ASSERT_TRUE(ok) << stored.dump();
  const std::string instance = stored["ID"];
  const std::string uid = json::parse(orthanc->get("/instances/" + instance + "/simplified-tags"), nullptr,
                                      false)["SOPInstanceUID"];

  orthanc->post("/modalities/checker/echo", "{}", &ok);
  EXPECT_TRUE(ok) << receiver.log() << orthanc->log();
  const std::string answer = orthanc->post("/modalities/checker/store", instance, &ok);
  EXPECT_TRUE(ok) << answer << receiver.log() << orthanc->log();
  EXPECT_TRUE(
      test::wait_for([&] { return fs::exists(test::result_file(receiver.results(), uid, ".json")); }, 20s))
      << receiver.log();
  EXPECT_TRUE(receiver.log_has("received RT Plan " + uid + " from AE \"FERN-PACS\" at 127.0.0.1:"))
      << receiver.log();
  EXPECT_EQ(receiver.checks(), 1);

  // An MR image: the receiver takes plans, their CT studies and RT objects, not MR; and says so.
  const fs::path mr = "/usr/lib/python3/dist-packages/pydicom/data/test_files/MR_small.dcm";
  ASSERT_TRUE(fs::exists(mr)) << "python3-pydicom's test files are needed (bash tools/install-deps)";
  const json mr_stored = json::parse(orthanc->post_file("/instances", mr, &ok), nullptr, false);
  ASSERT_TRUE(ok);
  orthanc->post("/modalities/checker/store", mr_stored["ID"].get<std::string>(), &ok);
  EXPECT_FALSE(ok);
  EXPECT_TRUE(test::wait_for(
      [&] { return receiver.log_has("these SOP classes are not accepted here: MRImageStorage"); }, 10s))
      << receiver.log();
  EXPECT_EQ(receiver.checks(), 1);
}

// UIDs of the demo study, as dcmdump shows them in its files.
constexpr const char* lung_plan_uid = "2.25.301642988147209845366118572013.201.1.0";
constexpr const char* lung_study_uid = "2.25.301642988147209845366118572013.201.2.0";
constexpr const char* lung_ct_series_uid = "2.25.301642988147209845366118572013.201.7.0";

TEST(OrthancSendsToTheReceiver, AWholeStudyForwardedByThePacsIsCheckedWithItsCt) {
  ASSERT_EQ(test::run_command("command -v curl").exit_code, 0) << "curl is needed (bash tools/install-deps)";
  const fs::path dir = test::make_temp_dir("countersign-orthanc-study");
  const fs::path results = dir / "results";
  const std::uint16_t port = free_port();
  Program receiver{{"receive", "--port", std::to_string(port), "--ae-title", "FERN-CHECK", "--allow-ae",
                    "FERN-PACS@127.0.0.1", "--out", results.string(), "--study-wait", "600"},
                   dir / "receive.log"};
  ASSERT_TRUE(receiver.running());
  ASSERT_TRUE(test::wait_for(
      [&] { return test::file_text(dir / "receive.log").find("receiving as AE") != std::string::npos; }, 20s))
      << test::file_text(dir / "receive.log");
  std::string error;
  const auto orthanc =
      test::OrthancUnderTest::start(dir / "orthanc", {{"checker", "FERN-CHECK", port}}, error);
  ASSERT_NE(orthanc, nullptr) << error;

  // The archive holds the study: every file of the demo study folder, the plan among them.
  const fs::path study = test::source_dir() / "testdata" / "studies" / "fern_lung_slab";
  std::string study_id;
  std::size_t files = 0;
  for (const auto& entry : fs::directory_iterator{study}) {
    if (entry.path().extension() != ".dcm") continue;
    bool ok = false;
    const json stored = json::parse(orthanc->post_file("/instances", entry.path(), &ok), nullptr, false);
    ASSERT_TRUE(ok) << entry.path() << " " << stored.dump() << orthanc->log();
    study_id = stored.at("ParentStudy").get<std::string>();
    ++files;
  }
  ASSERT_EQ(files, 22U);  // 20 CT slices, RS.dcm, the plan
  const json instances = json::parse(orthanc->get("/studies/" + study_id + "/instances"), nullptr, false);
  ASSERT_EQ(instances.size(), 22U) << instances.dump();

  // The archive forwards the study (one resource: Orthanc sends every instance in it).
  bool ok = false;
  const std::string answer = orthanc->post("/modalities/checker/store", study_id, &ok);
  EXPECT_TRUE(ok) << answer << test::file_text(dir / "receive.log") << orthanc->log();
  EXPECT_TRUE(
      test::wait_for([&] { return fs::exists(test::result_file(results, lung_plan_uid, ".json")); }, 90s))
      << test::file_text(dir / "receive.log");
  const json result =
      json::parse(test::file_text(test::result_file(results, lung_plan_uid, ".json")), nullptr, false);
  ASSERT_FALSE(result.is_discarded());
  const json& plan = result.at("plans").at(0);
  EXPECT_TRUE(plan.at("patient_study").at("used").get<bool>()) << plan.at("patient_study");
  EXPECT_EQ(plan.at("patient_study").at("ct_series_uid"), lung_ct_series_uid) << plan.at("patient_study");
  ASSERT_FALSE(plan.at("beams").empty());
  for (const auto& beam : plan.at("beams")) {
    EXPECT_EQ(beam.at("patient").at("source"), "ct") << beam;
    EXPECT_EQ(beam.at("depth_source"), "ct_radiological") << beam;  // the default, --heterogeneity epl
  }
  // The study's files are in the study store: 20 slices in the CT series' folder, and the structure set.
  const fs::path kept = results / "studies" / lung_study_uid;
  std::size_t slices = 0;
  std::error_code ec;
  for (const auto& entry : fs::directory_iterator{kept / lung_ct_series_uid, ec})
    slices += entry.path().extension() == ".dcm";
  EXPECT_EQ(slices, 20U) << test::file_text(dir / "receive.log");
  std::size_t series = 0;
  for (const auto& entry : fs::directory_iterator{kept, ec}) series += entry.is_directory() ? 1 : 0;
  EXPECT_EQ(series, 2U);  // the CT series and the structure set's series
  EXPECT_TRUE(fs::is_empty(results / "quarantine")) << test::file_text(dir / "receive.log");
  receiver.signal(SIGTERM);
  receiver.wait();
  EXPECT_EQ(test::recorded_checks(results).size(), 1U);  // read once the receiver has closed its history
  fs::remove_all(dir);
}

}  // namespace
}  // namespace countersign::service
