// The services' results to a real PACS (Debian's Orthanc, started by the test on loopback): `watch
// --send-to` sends each check's structured result (SR) and its record (Encapsulated PDF, made by
// headless Chromium) through the durable outbox, and `countersign send CHECK_ID` sends the same
// instances again. The plan is the INVENTED demo plan fern_half_beam.dcm. Fails when Orthanc,
// Chromium or curl is missing.

#include "support/orthanc.hpp"
#include "support/paths.hpp"

#include <gtest/gtest.h>
#include <nlohmann/json.hpp>

#include <fstream>

namespace countersign::test {
namespace {

namespace fs = std::filesystem;
using nlohmann::json;

TEST(RecordsToTheArchive, WatchSendsTheResultsAndSendSendsTheSameInstancesAgain) {
  ASSERT_EQ(run_command("command -v curl").exit_code, 0) << "curl is needed (bash tools/install-deps)";
  ASSERT_EQ(run_command("command -v chromium || command -v chromium-browser").exit_code, 0)
      << "no Chromium (Debian package chromium; bash tools/install-deps)";
  const fs::path dir = make_temp_dir("countersign-archive");
  std::string error;
  auto orthanc = OrthancUnderTest::start(dir / "orthanc", {{"countersign", "COUNTERSIGN", 104}}, error);
  ASSERT_NE(orthanc, nullptr) << error;
  const std::string archive = "FERN-PACS@127.0.0.1:" + std::to_string(orthanc->dicom_port());
  fs::create_directories(dir / "inbox");
  fs::copy_file(source_dir() / "testdata" / "plans" / "fern_half_beam.dcm", dir / "inbox" / "RP1.dcm");

  const auto watched = run_command(quote(program().string()) + " watch " + quote((dir / "inbox").string()) +
                                   " --study-wait 0 --out " + quote((dir / "results").string()) +
                                   " --once --send-to " + archive);
  ASSERT_EQ(watched.exit_code, 0) << watched.out << watched.err;
  EXPECT_NE(watched.out.find("sent structured result (SR) of check #"), std::string::npos) << watched.out;
  EXPECT_NE(watched.out.find("sent record (PDF) of check #"), std::string::npos) << watched.out;
  const json instances = json::parse(orthanc->get("/instances"), nullptr, false);
  ASSERT_EQ(instances.size(), 2U) << watched.out << orthanc->log();

  // Sent again: the same two instances (Orthanc still holds two), nothing made anew.
  const auto sent =
      run_command(quote(program().string()) + " send 1 --to " + archive + " --results " +
                  quote((dir / "results").string()) + " --outbox " + quote((dir / "outbox").string()));
  EXPECT_EQ(sent.exit_code, 0) << sent.out << sent.err;
  EXPECT_NE(sent.out.find("sent structured result (SR) of check #1"), std::string::npos) << sent.out;
  EXPECT_NE(sent.out.find("sent record (PDF) of check #1"), std::string::npos) << sent.out;
  EXPECT_EQ(json::parse(orthanc->get("/instances"), nullptr, false).size(), 2U);

  // An unknown check is a usage error; a changed SR is never sent.
  EXPECT_EQ(run_command(quote(program().string()) + " send 99 --to " + archive + " --results " +
                        quote((dir / "results").string()))
                .exit_code,
            3);
  for (const auto& entry : fs::recursive_directory_iterator{dir / "results"}) {
    if (entry.path().string().ends_with(".sr.dcm")) std::ofstream(entry.path(), std::ios::app) << "x";
  }
  const auto refused =
      run_command(quote(program().string()) + " send 1 --to " + archive + " --results " +
                  quote((dir / "results").string()) + " --outbox " + quote((dir / "outbox").string()));
  EXPECT_EQ(refused.exit_code, 4) << refused.out;
  EXPECT_NE(refused.err.find("differs from the one recorded: not sent"), std::string::npos) << refused.err;
  orthanc.reset();
  fs::remove_all(dir);
}

}  // namespace
}  // namespace countersign::test
