// The receiver with a real PACS as the sender: Debian's Orthanc, started by the test on loopback
// with a temporary configuration, holds an invented demo plan and sends it to the receiver by
// C-STORE through its REST API (/modalities/.../store), as a department's archive forwards plans.
// Orthanc also tries an object of a SOP class the receiver does not take (pydicom's bundled MR
// image), which must be refused and logged. Fails when Orthanc or curl is missing.

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

}  // namespace
}  // namespace countersign::service
