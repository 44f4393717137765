// `countersign check --send-to` against a real PACS: Debian's Orthanc, started by the test on
// loopback with a temporary configuration. The invented demo plan is first stored in Orthanc (as a
// planning system would); the check then sends its structured result (SR) and its record
// (Encapsulated PDF, made by headless Chromium) and Orthanc's REST API must show both in the plan's
// study, in series of their own, referencing the plan. Also: an archive that is down loses nothing,
// and without Chromium the SR alone is sent and the reason is given. The tests fail when Orthanc,
// Chromium or curl is missing.

#include "support/orthanc.hpp"
#include "support/paths.hpp"

#include <gtest/gtest.h>
#include <nlohmann/json.hpp>

#include <set>

namespace countersign::test {
namespace {

namespace fs = std::filesystem;
using nlohmann::json;

fs::path demo_plan(const std::string& name) { return source_dir() / "testdata" / "plans" / name; }

class OrthancExchange : public ::testing::Test {
 protected:
  void SetUp() override {
    ASSERT_EQ(run_command("command -v curl").exit_code, 0) << "curl is needed (bash tools/install-deps)";
    ASSERT_EQ(run_command("command -v chromium || command -v chromium-browser").exit_code, 0)
        << "no Chromium (Debian package chromium; bash tools/install-deps)";
    dir_ = make_temp_dir("countersign-orthanc");
  }
  void TearDown() override {
    orthanc_.reset();
    fs::remove_all(dir_);
  }

  void start_orthanc(std::uint16_t dicom_port = 0) {
    std::string error;
    orthanc_ =
        OrthancUnderTest::start(dir_ / "orthanc", {{"countersign", "COUNTERSIGN", 104}}, error, dicom_port);
    ASSERT_NE(orthanc_, nullptr) << error;
  }

  // Stores a plan in Orthanc; returns Orthanc's id of its study.
  std::string upload(const fs::path& plan) {
    bool ok = false;
    const auto answer = orthanc_->post_file("/instances", plan, &ok);
    EXPECT_TRUE(ok) << answer;
    return json::parse(answer, nullptr, false).value("ParentStudy", "");
  }

  // Orthanc's simplified tags of the instance with this SOP Instance UID (null when absent).
  json instance_tags(const std::string& sop_instance_uid, std::string* orthanc_id = nullptr) {
    const json query = {{"Level", "Instance"}, {"Query", {{"SOPInstanceUID", sop_instance_uid}}}};
    const json found = json::parse(orthanc_->post("/tools/find", query.dump()), nullptr, false);
    if (!found.is_array() || found.size() != 1) return nullptr;
    if (orthanc_id != nullptr) *orthanc_id = found[0];
    return json::parse(orthanc_->get("/instances/" + found[0].get<std::string>() + "/tags?simplify"), nullptr,
                       false);
  }

  CommandOutput check(const fs::path& plan, const std::string& extra) {
    return run_command(quote(program().string()) + " check " + quote(plan.string()) + " --json --outbox " +
                       quote((dir_ / "outbox").string()) +
                       " --send-to FERN-PACS@127.0.0.1:" + std::to_string(orthanc_port_or(0)) + " " + extra);
  }
  std::uint16_t orthanc_port_or(std::uint16_t fallback) const {
    return orthanc_ ? orthanc_->dicom_port() : fallback;
  }

  fs::path dir_;
  std::unique_ptr<OrthancUnderTest> orthanc_;
};

TEST_F(OrthancExchange, TheResultAndTheRecordArriveInThePlansStudyAndReferenceThePlan) {
  start_orthanc();
  const fs::path plan = demo_plan("fern_box_4field.dcm");
  const std::string study = upload(plan);
  ASSERT_FALSE(study.empty());
  const json plan_tags = json::parse(orthanc_->get("/studies/" + study + "/instances"), nullptr, false);
  ASSERT_EQ(plan_tags.size(), 1U);
  const std::string plan_uid = plan_tags[0]["MainDicomTags"]["SOPInstanceUID"];

  const auto run = check(plan, "");
  EXPECT_EQ(run.exit_code, 1) << run.err;  // beam 2 carries the invented +7 % MU error
  const json out = json::parse(run.out, nullptr, false);
  ASSERT_TRUE(out.contains("dicom_results")) << run.out << run.err;
  const json& results = out["dicom_results"];
  ASSERT_EQ(results["objects"].size(), 2U) << results.dump(2);
  ASSERT_EQ(results["deliveries"].size(), 2U) << results.dump(2);
  for (const auto& delivery : results["deliveries"])
    EXPECT_EQ(delivery["status"], "delivered") << delivery.dump();

  std::set<std::string> series;
  for (const auto& object : results["objects"]) {
    std::string id;
    const json tags = instance_tags(object["sop_instance_uid"], &id);
    ASSERT_TRUE(tags.is_object()) << "not in Orthanc: " << object.dump() << "\n" << orthanc_->log();
    const json plan_in_study = instance_tags(plan_uid);
    EXPECT_EQ(tags["StudyInstanceUID"], plan_in_study["StudyInstanceUID"]);
    EXPECT_EQ(tags["PatientID"], plan_in_study["PatientID"]);
    EXPECT_NE(tags["SeriesInstanceUID"], plan_in_study["SeriesInstanceUID"]);
    series.insert(tags["SeriesInstanceUID"]);
    if (object["kind"] == "sr") {
      EXPECT_EQ(tags["Modality"], "SR");
      const json& evidence = tags["CurrentRequestedProcedureEvidenceSequence"][0];
      EXPECT_EQ(
          evidence["ReferencedSeriesSequence"][0]["ReferencedSOPSequence"][0]["ReferencedSOPInstanceUID"],
          plan_uid);
      EXPECT_EQ(tags["VerificationFlag"], "UNVERIFIED");
    } else {
      EXPECT_EQ(tags["Modality"], "DOC");
      EXPECT_EQ(tags["SourceInstanceSequence"][0]["ReferencedSOPInstanceUID"], plan_uid);
      EXPECT_EQ(tags["MIMETypeOfEncapsulatedDocument"], "application/pdf");
      EXPECT_EQ(orthanc_->get("/instances/" + id + "/content/0042-0011").substr(0, 5), "%PDF-");
    }
  }
  EXPECT_EQ(series.size(), 2U);
  // The plan's study now holds the plan, the SR and the PDF, each in its own series.
  EXPECT_EQ(json::parse(orthanc_->get("/studies/" + study + "/instances"), nullptr, false).size(), 3U);
  EXPECT_EQ(json::parse(orthanc_->get("/studies/" + study + "/series"), nullptr, false).size(), 3U);
}

TEST_F(OrthancExchange, AnArchiveThatIsDownLosesNothing) {
  // The archive's port is known, but nothing listens there yet.
  const std::uint16_t port = free_tcp_port();

  const auto down =
      run_command(quote(program().string()) + " check " + quote(demo_plan("fern_wedged_pair.dcm").string()) +
                  " --json --send-wait 0 --outbox " + quote((dir_ / "outbox").string()) +
                  " --send-to FERN-PACS@127.0.0.1:" + std::to_string(port));
  EXPECT_EQ(down.exit_code, 0) << down.err;  // the verdict stands; the results wait in the outbox
  const json first = json::parse(down.out, nullptr, false);
  ASSERT_TRUE(first.contains("dicom_results")) << down.out;
  for (const auto& delivery : first["dicom_results"]["deliveries"]) EXPECT_EQ(delivery["status"], "queued");
  EXPECT_NE(down.err.find("not yet sent"), std::string::npos) << down.err;
  std::size_t queued = 0;
  for (const auto& entry : fs::directory_iterator{dir_ / "outbox" / "queue"}) queued += entry.is_directory();
  EXPECT_EQ(queued, 2U);

  // The archive is back; the next run delivers what waited, and its own results.
  start_orthanc(port);
  const auto up = check(demo_plan("fern_static_mlc.dcm"), "");
  const json second = json::parse(up.out, nullptr, false);
  ASSERT_TRUE(second.contains("dicom_results")) << up.out << up.err;
  std::size_t delivered = 0;
  for (const auto& delivery : second["dicom_results"]["deliveries"])
    delivered += delivery["status"] == "delivered";
  EXPECT_EQ(delivered, 4U) << second["dicom_results"].dump(2);
  for (const auto& object : first["dicom_results"]["objects"]) {
    EXPECT_TRUE(instance_tags(object["sop_instance_uid"]).is_object()) << object.dump();
  }
  EXPECT_TRUE(fs::is_empty(dir_ / "outbox" / "queue"));
}

TEST_F(OrthancExchange, WithoutChromiumTheStructuredResultAloneIsSentAndTheLogSaysWhy) {
  start_orthanc();
  const auto run = run_command("COUNTERSIGN_CHROMIUM=/nonexistent/chromium " + quote(program().string()) +
                               " check " + quote(demo_plan("fern_half_beam.dcm").string()) +
                               " --json --outbox " + quote((dir_ / "outbox").string()) +
                               " --send-to FERN-PACS@127.0.0.1:" + std::to_string(orthanc_->dicom_port()));
  EXPECT_NE(run.err.find("no Chromium found: sending the structured report (SR) only"), std::string::npos)
      << run.err;
  const json out = json::parse(run.out, nullptr, false);
  ASSERT_TRUE(out.contains("dicom_results")) << run.out;
  ASSERT_EQ(out["dicom_results"]["objects"].size(), 1U);
  EXPECT_EQ(out["dicom_results"]["objects"][0]["kind"], "sr");
  EXPECT_TRUE(instance_tags(out["dicom_results"]["objects"][0]["sop_instance_uid"]).is_object());
}

}  // namespace
}  // namespace countersign::test

namespace countersign::test {
namespace {

TEST(CheckSendToOptions, ABadDestinationOrCallingAeTitleIsAUsageErrorBeforeAnyCheck) {
  const auto plan = source_dir() / "testdata" / "plans" / "fern_box_4field.dcm";
  const auto dir = make_temp_dir("countersign-send-options");
  for (const std::string bad : {"--send-to FERN-PACS@127.0.0.1", "--send-to FERN-PACS@127.0.0.1:0",
                                "--send-to FERN-PACS@127.0.0.1:104 --calling-ae A-TITLE-THAT-IS-TOO-LONG"}) {
    const auto run = run_command(quote(program().string()) + " check " + quote(plan.string()) + " --outbox " +
                                 quote((dir / "outbox").string()) + " " + bad);
    EXPECT_EQ(run.exit_code, 3) << bad << "\n" << run.err;
    EXPECT_NE(run.err.find(bad.find("calling") != std::string::npos ? "--calling-ae" : "--send-to"),
              std::string::npos)
        << run.err;
    EXPECT_EQ(run.out.find("Plan"), std::string::npos) << "checked although the options are wrong:\n"
                                                       << run.out;
  }
  std::filesystem::remove_all(dir);
}

}  // namespace
}  // namespace countersign::test
