#include <countersign/service/folder_watcher.hpp>
#include <countersign/service/private_files.hpp>
#include <countersign/service/stop_signals.hpp>

#include "service/fake_plans.hpp"
#include "service/result_files.hpp"
#include "support/paths.hpp"

#include <gtest/gtest.h>

#include <chrono>
#include <fstream>
#include <functional>
#include <sstream>
#include <thread>

namespace countersign::service {
namespace {

namespace fs = std::filesystem;
using namespace std::chrono_literals;

std::size_t count_files(const fs::path& dir, const std::string& suffix) {
  std::size_t n = 0;
  for (const auto& entry : fs::directory_iterator{dir}) {
    const std::string name = entry.path().filename().string();
    if (entry.is_regular_file() && name.size() >= suffix.size() &&
        name.compare(name.size() - suffix.size(), suffix.size(), suffix) == 0) {
      ++n;
    }
  }
  return n;
}

void make_old(const fs::path& file) {
  fs::last_write_time(file, fs::file_time_type::clock::now() - std::chrono::hours{1});
}

bool wait_until(const std::function<bool()>& condition, std::chrono::milliseconds timeout) {
  const auto deadline = std::chrono::steady_clock::now() + timeout;
  while (std::chrono::steady_clock::now() < deadline) {
    if (condition()) return true;
    std::this_thread::sleep_for(10ms);
  }
  return condition();
}

// A watcher on a fresh inbox, running on its own thread until stopped.
class FolderWatcherTest : public ::testing::Test {
 protected:
  void SetUp() override { dir_ = test::make_temp_dir("countersign-watch"); }
  void TearDown() override {
    stop();
    fs::remove_all(dir_);
  }

  fs::path inbox() const { return dir_ / "inbox"; }
  fs::path results() const { return dir_ / "results"; }

  void make_intake(std::chrono::milliseconds quiet, std::chrono::milliseconds delay = 0ms) {
    auto folders = ServiceFolders::prepare(inbox(), results(), std::nullopt);
    ASSERT_TRUE(folders) << folders.error().message();
    auto history = test::open_history(results() / "history.sqlite", store::Access::read_write);
    ASSERT_TRUE(history) << history.error().message();
    IntakeOptions options;
    options.quiet_period = quiet;
    options.busy_retry = 100ms;
    intake_.emplace(folders.value(), std::move(history.value()), test::fake_processor(calls_, delay), log_,
                    options);
  }

  void start(std::chrono::milliseconds quiet, std::chrono::milliseconds delay = 0ms,
             WatchOptions options = {}) {
    make_intake(quiet, delay);
    auto watcher = FolderWatcher::open(*intake_, options);
    ASSERT_TRUE(watcher) << watcher.error().message();
    watcher_.emplace(std::move(watcher.value()));
    thread_ = std::thread([this] {
      const int fds[] = {stop_signal_.fd()};
      auto summary = watcher_->run(RunUntil::stopped, fds);
      if (summary) summary_ = summary.value();
    });
  }

  void stop() {
    stop_signal_.request();
    if (thread_.joinable()) thread_.join();
  }

  std::size_t recorded() const {
    auto history = test::open_history(results() / "history.sqlite", store::Access::read_only);
    if (!history) return 0;
    auto all = history.value()->list_checks({});
    return all ? all->size() : 0;
  }

  std::string log_text() { return log_stream_.str(); }

  fs::path dir_;
  std::ostringstream log_stream_;
  ServiceLog log_{log_stream_};
  std::shared_ptr<test::ProcessorCalls> calls_ = std::make_shared<test::ProcessorCalls>();
  std::optional<PlanIntake> intake_;
  std::optional<FolderWatcher> watcher_;
  StopSignal stop_signal_;
  std::thread thread_;
  WatchSummary summary_;
};

TEST_F(FolderWatcherTest, FilesThatArrivedWhileDownAreCheckedAtStart) {
  ASSERT_TRUE(ensure_private_directory(inbox()));
  for (int i = 0; i < 5; ++i) {
    test::write_text(inbox() / ("backlog-" + std::to_string(i) + ".dcm"),
                     test::fake_plan_text(test::demo_uid(i), "FERN-DEMO-010"));
  }
  make_intake(1s);
  auto watcher = FolderWatcher::open(*intake_);
  ASSERT_TRUE(watcher);
  const auto summary = watcher->run(RunUntil::one_pass, {});
  ASSERT_TRUE(summary) << summary.error().message();
  EXPECT_EQ(summary->checked, 5U);
  EXPECT_EQ(test::count_results(results(), ".json"), 5U);
  EXPECT_EQ(count_files(inbox(), ".dcm"), 0U);
}

TEST_F(FolderWatcherTest, TwoHundredPlansDroppedAtOnceAreEachCheckedOnce) {
  start(2s);
  constexpr int plans = 200;
  const auto started = std::chrono::steady_clock::now();
  for (int i = 0; i < plans; ++i) {
    test::write_text(inbox() / ("RP" + std::to_string(i) + ".dcm"),
                     test::fake_plan_text(test::demo_uid(i), "FERN-DEMO-" + std::to_string(i % 7)));
  }
  ASSERT_TRUE(
      wait_until([&] { return calls_->total.load() >= plans && count_files(inbox(), ".dcm") == 0; }, 60s))
      << calls_->total.load() << " of " << plans << " processed";
  const auto elapsed = std::chrono::steady_clock::now() - started;
  stop();
  std::cout << "[ measured ] " << plans << " plans dropped at once, all checked in "
            << std::chrono::duration_cast<std::chrono::milliseconds>(elapsed).count()
            << " ms (fake processor: service overhead only)\n";
  EXPECT_EQ(calls_->total.load(), plans);
  for (int i = 0; i < plans; ++i) EXPECT_EQ(calls_->count(test::demo_uid(i)), 1) << i;
  EXPECT_EQ(test::count_results(results(), ".json"), static_cast<std::size_t>(plans));
  EXPECT_EQ(recorded(), static_cast<std::size_t>(plans));
  EXPECT_EQ(summary_.checked, static_cast<std::size_t>(plans));
  EXPECT_EQ(count_files(results() / "quarantine", ""), 0U);
}

TEST_F(FolderWatcherTest, ASlowWriterClosingBetweenHalvesIsRetriedNotRejected) {
  start(3s);
  const std::string uid = test::demo_uid(300);
  const std::string text = test::fake_plan_text(uid, "FERN-DEMO-011");
  {
    std::ofstream out(inbox() / "slow.dcm", std::ios::binary);
    out << text.substr(0, text.size() / 2);
  }  // closed: the watcher sees a complete-looking write of an incomplete plan
  std::this_thread::sleep_for(1s);
  {
    std::ofstream out(inbox() / "slow.dcm", std::ios::binary | std::ios::app);
    out << text.substr(text.size() / 2);
  }
  ASSERT_TRUE(wait_until([&] { return fs::exists(test::result_file(results(), uid, ".json")); }, 10s))
      << log_text();
  stop();
  EXPECT_EQ(calls_->count(uid), 1);
  EXPECT_EQ(summary_.quarantined, 0U);
  EXPECT_FALSE(fs::exists(results() / "quarantine" / "slow.dcm"));
}

TEST_F(FolderWatcherTest, ASlowWriterHoldingTheFileOpenIsWaitedFor) {
  start(3s);
  const std::string uid = test::demo_uid(301);
  const std::string text = test::fake_plan_text(uid, "FERN-DEMO-012");
  {
    std::ofstream out(inbox() / "held.dcm", std::ios::binary);
    out << text.substr(0, text.size() / 2);
    out.flush();
    std::this_thread::sleep_for(1s);
    out << text.substr(text.size() / 2);
  }
  ASSERT_TRUE(wait_until([&] { return fs::exists(test::result_file(results(), uid, ".json")); }, 10s))
      << log_text();
  stop();
  EXPECT_EQ(calls_->count(uid), 1);
  EXPECT_EQ(summary_.quarantined, 0U);
}

TEST_F(FolderWatcherTest, BadFilesAreQuarantinedAndTheServiceKeepsGoing) {
  start(500ms);
  test::write_text(inbox() / "garbage.dcm", "\x01\x02 not a plan at all");
  test::write_text(inbox() / "good-1.dcm", test::fake_plan_text(test::demo_uid(400), "FERN-DEMO-013"));
  test::write_text(inbox() / "empty.dcm", "");
  test::write_text(inbox() / "cut.dcm",
                   test::fake_plan_text(test::demo_uid(401), "FERN-DEMO-013").substr(0, 30));
  test::write_text(inbox() / "good-2.dcm", test::fake_plan_text(test::demo_uid(402), "FERN-DEMO-013"));
  ASSERT_TRUE(wait_until([&] { return count_files(results() / "quarantine", ".reason.txt") == 3; }, 10s))
      << log_text();
  test::write_text(inbox() / "good-3.dcm", test::fake_plan_text(test::demo_uid(403), "FERN-DEMO-013"));
  ASSERT_TRUE(wait_until([&] { return test::count_results(results(), ".json") == 3; }, 10s)) << log_text();
  stop();
  for (const std::string bad : {"garbage.dcm", "empty.dcm", "cut.dcm"}) {
    EXPECT_TRUE(fs::exists(results() / "quarantine" / bad)) << bad;
    EXPECT_TRUE(fs::exists(results() / "quarantine" / (bad + ".reason.txt"))) << bad;
    EXPECT_NE(log_text().find("quarantined " + bad), std::string::npos) << bad;
  }
  EXPECT_EQ(count_files(inbox(), ""), 0U);
  EXPECT_EQ(summary_.quarantined, 3U);
  EXPECT_EQ(summary_.checked, 3U);
}

TEST_F(FolderWatcherTest, TheSamePlanCopiedInTwiceIsCheckedOnce) {
  start(2s);
  const std::string uid = test::demo_uid(500);
  const std::string text = test::fake_plan_text(uid, "FERN-DEMO-014");
  test::write_text(dir_ / "export.dcm", text);
  fs::copy_file(dir_ / "export.dcm", inbox() / "export.dcm");
  fs::copy_file(dir_ / "export.dcm", inbox() / "export (copy).dcm");
  ASSERT_TRUE(wait_until([&] { return count_files(inbox(), ".dcm") == 0; }, 10s)) << log_text();
  stop();
  EXPECT_EQ(calls_->count(uid), 1);
  EXPECT_EQ(recorded(), 1U);
  EXPECT_EQ(summary_.checked, 1U);
  EXPECT_EQ(summary_.duplicates, 1U);
  EXPECT_NE(log_text().find("already checked"), std::string::npos);
}

TEST_F(FolderWatcherTest, AStopFinishesThePlanInHandAndLosesNothing) {
  start(2s, 200ms);
  for (int i = 0; i < 6; ++i) {
    test::write_text(inbox() / ("p" + std::to_string(i) + ".dcm"),
                     test::fake_plan_text(test::demo_uid(600 + i), "FERN-DEMO-015"));
  }
  ASSERT_TRUE(wait_until([&] { return calls_->total.load() >= 1; }, 10s));
  stop();
  const std::size_t done = summary_.checked;
  EXPECT_GE(done, 1U);
  EXPECT_LT(done, 6U);                                 // it stopped early ...
  EXPECT_EQ(recorded(), done);                         // ... with every plan it started recorded ...
  EXPECT_EQ(count_files(inbox(), ".dcm"), 6U - done);  // ... and the rest still waiting.

  // A restart takes the rest.
  watcher_.reset();
  intake_.reset();
  make_intake(2s);
  auto watcher = FolderWatcher::open(*intake_);
  ASSERT_TRUE(watcher);
  const auto summary = watcher->run(RunUntil::one_pass, {});
  ASSERT_TRUE(summary);
  EXPECT_EQ(summary->checked, 6U - done);
  EXPECT_EQ(recorded(), 6U);
  for (int i = 0; i < 6; ++i) EXPECT_EQ(calls_->count(test::demo_uid(600 + i)), 1);
}

TEST_F(FolderWatcherTest, AFileMovedInIsTakenAtOnceAndOneWrittenInPlaceOnlyWhenQuiet) {
  // Issue 10, item 2. A quiet period far longer than the test waits: only the rename can explain a
  // check of the moved file.
  start(30s);
  const std::string moved_uid = test::demo_uid(700);
  test::write_text(dir_ / "staging.dcm", test::fake_plan_text(moved_uid, "FERN-DEMO-016"));
  test::write_text(inbox() / "in-place.dcm", test::fake_plan_text(test::demo_uid(701), "FERN-DEMO-016"));
  fs::rename(dir_ / "staging.dcm", inbox() / "moved.dcm");
  ASSERT_TRUE(wait_until([&] { return fs::exists(test::result_file(results(), moved_uid, ".json")); }, 10s))
      << log_text();
  std::this_thread::sleep_for(500ms);
  stop();
  EXPECT_EQ(calls_->count(moved_uid), 1);
  EXPECT_EQ(calls_->count(test::demo_uid(701)), 0);  // still within its quiet period
  EXPECT_TRUE(fs::exists(inbox() / "in-place.dcm"));
}

TEST_F(FolderWatcherTest, SubfoldersAreNamedInTheLogAndLeftAloneWithoutRecursive) {
  // Issue 10, item 3: before, a plan exported into a subfolder was ignored without a word.
  fs::create_directories(inbox() / "at-start");
  test::write_text(inbox() / "at-start" / "RP1.dcm",
                   test::fake_plan_text(test::demo_uid(710), "FERN-DEMO-017"));
  start(200ms);
  fs::create_directories(inbox() / "later");
  test::write_text(inbox() / "later" / "RP2.dcm", test::fake_plan_text(test::demo_uid(711), "FERN-DEMO-017"));
  ASSERT_TRUE(
      wait_until([&] { return log_text().find("subfolder later is not watched") != std::string::npos; }, 10s))
      << log_text();
  std::this_thread::sleep_for(700ms);
  stop();
  EXPECT_NE(log_text().find("subfolder at-start is not watched"), std::string::npos) << log_text();
  EXPECT_EQ(calls_->total.load(), 0);
  EXPECT_TRUE(fs::exists(inbox() / "at-start" / "RP1.dcm"));
  EXPECT_TRUE(fs::exists(inbox() / "later" / "RP2.dcm"));
}

TEST_F(FolderWatcherTest, WithRecursiveSubfoldersAreWatchedToo) {
  fs::create_directories(inbox() / "at-start" / "deeper");
  test::write_text(inbox() / "at-start" / "deeper" / "RP1.dcm",
                   test::fake_plan_text(test::demo_uid(720), "FERN-DEMO-018"));
  WatchOptions options;
  options.subfolders = dicom::Subfolders::include;
  start(200ms, 0ms, options);
  // A folder moved in whole, and a folder created and then written into.
  fs::create_directories(dir_ / "export" / "2026-12-02");
  test::write_text(dir_ / "export" / "2026-12-02" / "RP2",
                   test::fake_plan_text(test::demo_uid(721), "FERN-DEMO-018"));
  fs::rename(dir_ / "export", inbox() / "export");
  fs::create_directories(inbox() / "later");
  std::this_thread::sleep_for(100ms);
  test::write_text(inbox() / "later" / "RP3.DCM", test::fake_plan_text(test::demo_uid(722), "FERN-DEMO-018"));
  ASSERT_TRUE(wait_until([&] { return calls_->total.load() >= 3; }, 15s)) << log_text();
  stop();
  for (int i = 720; i <= 722; ++i) EXPECT_EQ(calls_->count(test::demo_uid(i)), 1) << i;
  EXPECT_FALSE(fs::exists(inbox() / "later" / "RP3.DCM"));
  EXPECT_EQ(log_text().find("not watched"), std::string::npos) << log_text();
}

TEST_F(FolderWatcherTest, OnePassEndsAndNamesTheFilesItCouldNotTake) {
  // Issue 10, item 3: `--once` never ended while a file kept failing. The results folder is made
  // unusable (a file stands where the plan's folder of results must go), a failure of our own.
  make_intake(100ms);
  test::write_text(inbox() / "good.dcm", test::fake_plan_text(test::demo_uid(730), "FERN-DEMO-019"));
  test::write_text(results() / test::demo_uid(730), "in the way");  // a file where its folder must go
  make_old(inbox() / "good.dcm");
  auto watcher = FolderWatcher::open(*intake_);
  ASSERT_TRUE(watcher);
  const auto summary = watcher->run(RunUntil::one_pass, {});
  ASSERT_TRUE(summary) << summary.error().message();
  EXPECT_EQ(summary->checked, 0U);
  ASSERT_EQ(summary->not_taken.size(), 1U);
  EXPECT_EQ(summary->not_taken.front().rfind("good.dcm: error good.dcm:", 0), 0U)
      << summary->not_taken.front();
  EXPECT_TRUE(fs::exists(inbox() / "good.dcm"));  // nothing lost: it waits for the next run
  EXPECT_EQ(recorded(), 0U);
}

TEST_F(FolderWatcherTest, NamesAndValuesCannotForgeLogLines) {
  // Issue 10, item 4: a newline in a file name or a Patient ID made a complete, false log line. (The
  // fake plan format is line-based, so its Patient ID carries a carriage return instead.)
  start(100ms);
  const std::string forged =
      "\n2026-12-02T08:15:00Z checked FAKE.dcm: 1.2.3 patient X verdict within_tolerance";
  test::write_text(dir_ / "staging", test::fake_plan_text(test::demo_uid(740), "PAT\rforged line"));
  fs::rename(dir_ / "staging", inbox() / ("RP" + std::string{"\n"} + "x.dcm"));
  test::write_text(dir_ / "staging", "not a plan");
  fs::rename(dir_ / "staging", inbox() / ("bad" + forged + ".dcm"));
  ASSERT_TRUE(wait_until(
      [&] { return calls_->total.load() == 1 && count_files(results() / "quarantine", ".reason.txt") == 1; },
      10s))
      << log_text();
  stop();
  std::istringstream lines{log_text()};
  std::size_t count = 0;
  for (std::string line; std::getline(lines, line); ++count) {
    EXPECT_EQ(line.size() > 20 && line[4] == '-' && line[10] == 'T' && line[19] == 'Z', true) << line;
    EXPECT_EQ(line.rfind("2026-12-02T08:15:00Z checked FAKE.dcm", 0), std::string::npos) << line;
  }
  EXPECT_EQ(count, 2U) << log_text();  // one per event: the check, the quarantine
  EXPECT_NE(log_text().find("patient PAT\\rforged line"), std::string::npos) << log_text();
}

}  // namespace
}  // namespace countersign::service
