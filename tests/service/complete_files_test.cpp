// Complete files only (issue 10, item 2), with the real checking pipeline: a plan written in place
// by a writer that closes the file between chunks, the cut on an element boundary so that the first
// chunk alone reads as a valid (truncated) plan, must be checked once, whole, and its tail never
// quarantined as a file of its own.

#include <countersign/beamdata/library.hpp>
#include <countersign/util/sha256.hpp>
#include <countersign/dicom/canonical_dataset.hpp>
#include <countersign/dicom/read_plan.hpp>
#include <countersign/service/check_processor.hpp>
#include <countersign/service/folder_watcher.hpp>
#include <countersign/service/stop_signals.hpp>

#include "service/result_files.hpp"
#include "support/paths.hpp"

#include <gtest/gtest.h>

#include <chrono>
#include <fstream>
#include <sstream>
#include <thread>

namespace countersign::service {
namespace {

namespace fs = std::filesystem;
using namespace std::chrono_literals;

std::string slurp(const fs::path& file) {
  std::ifstream in(file, std::ios::binary);
  std::ostringstream text;
  text << in.rdbuf();
  return text.str();
}

TEST(CompleteFiles, APlanWrittenInChunksIsNeverCheckedTruncated) {
  const fs::path dir = test::make_temp_dir("countersign-chunks");
  const std::string plan = slurp(test::source_dir() / "testdata/plans/fern_box_4field.dcm");
  // The cut: just before Approval Status (300E,0002), explicit VR little endian, a top-level element.
  const std::size_t cut =
      plan.rfind(std::string{"\x0E\x30\x02\x00"
                             "CS",
                             6});
  ASSERT_NE(cut, std::string::npos);
  const std::string head = plan.substr(0, cut);
  // Precondition: the first chunk alone is a plan the reader accepts, so taking the file early
  // would check a truncated plan without any error.
  ASSERT_TRUE(dicom::read_plan_bytes(std::as_bytes(std::span{head.data(), head.size()}), "head").has_value());

  auto library = beamdata::load_library(test::source_dir() / "beamdata");
  ASSERT_TRUE(library) << library.error().message();
  auto folders = ServiceFolders::prepare(dir / "inbox", dir / "results", std::nullopt);
  auto history = test::open_history(dir / "results" / "history.sqlite", store::Access::read_write);
  ASSERT_TRUE(folders && history);
  std::ostringstream log_text;
  ServiceLog log{log_text};
  IntakeOptions options;  // the default quiet period, 2 s
  PlanIntake intake{
      folders.value(), std::move(history.value()),
      make_check_processor(std::make_shared<const beamdata::Library>(std::move(library.value())),
                           check::CheckOptions{}),
      log, options};
  auto watcher = FolderWatcher::open(intake);
  ASSERT_TRUE(watcher);
  const StopSignal stop;
  WatchSummary summary;
  std::thread running([&] {
    const int fds[] = {stop.fd()};
    if (auto ran = watcher->run(RunUntil::stopped, fds)) summary = ran.value();
  });

  const fs::path file = dir / "inbox" / "RP.chunked.dcm";
  std::ofstream{file, std::ios::binary} << head;  // closed: IN_CLOSE_WRITE for a complete-looking plan
  std::this_thread::sleep_for(1200ms);            // a pause shorter than the quiet period
  std::ofstream{file, std::ios::binary | std::ios::app} << plan.substr(cut);
  for (int i = 0; i < 300 && fs::is_empty(dir / "results" / "plans"); ++i) std::this_thread::sleep_for(50ms);
  stop.request();
  running.join();

  EXPECT_EQ(summary.checked, 1U) << log_text.str();
  EXPECT_EQ(summary.quarantined, 0U) << log_text.str();
  EXPECT_TRUE(fs::is_empty(dir / "results" / "quarantine"));
  EXPECT_FALSE(fs::exists(file));
  auto stored = test::open_history(dir / "results" / "history.sqlite", store::Access::read_only);
  ASSERT_TRUE(stored);
  auto records = stored.value()->list_checks({});
  ASSERT_TRUE(records);
  ASSERT_EQ(records->size(), 1U);
  // The key is the hash of the whole plan's canonical dataset: a truncated plan would hash otherwise.
  const auto whole = dicom::canonical_dataset_bytes(
      std::span{reinterpret_cast<const std::byte*>(plan.data()), plan.size()}, file.string());
  ASSERT_TRUE(whole);
  EXPECT_EQ(records->front().content_sha256, util::sha256_hex(whole.value()))
      << "a truncated plan was checked";
  fs::remove_all(dir);
}

}  // namespace
}  // namespace countersign::service
