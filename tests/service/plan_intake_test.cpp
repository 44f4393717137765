#include <countersign/dicom/plan_files.hpp>
#include <countersign/service/plan_intake.hpp>

#include "service/fake_plans.hpp"
#include "service/result_files.hpp"
#include "support/paths.hpp"

#include <countersign/service/folder_watcher.hpp>
#include <countersign/service/stop_signals.hpp>

#include <grp.h>
#include <gtest/gtest.h>
#include <sys/stat.h>
#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <fstream>
#include <functional>
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

void make_old(const fs::path& file) {
  fs::last_write_time(file, fs::file_time_type::clock::now() - std::chrono::hours{1});
}

class PlanIntakeTest : public ::testing::Test {
 protected:
  void SetUp() override {
    dir_ = test::make_temp_dir("countersign-intake");
    auto folders = ServiceFolders::prepare(dir_ / "inbox", dir_ / "results", std::nullopt);
    ASSERT_TRUE(folders) << folders.error().message();
    auto history = test::open_history(dir_ / "results" / "history.sqlite", store::Access::read_write);
    ASSERT_TRUE(history) << history.error().message();
    IntakeOptions options;
    options.quiet_period = 2s;
    intake_.emplace(folders.value(), std::move(history.value()), test::fake_processor(calls_), log_, options);
  }
  void TearDown() override { fs::remove_all(dir_); }

  fs::path inbox() const { return dir_ / "inbox"; }
  fs::path results() const { return dir_ / "results"; }

  fs::path dir_;
  std::ostringstream log_text_;
  ServiceLog log_{log_text_};
  std::shared_ptr<test::ProcessorCalls> calls_ = std::make_shared<test::ProcessorCalls>();
  std::optional<PlanIntake> intake_;
};

TEST_F(PlanIntakeTest, ChecksWritesRecordsAndMovesThePlanOut) {
  const std::string uid = test::demo_uid(1);
  test::write_text(inbox() / "plan.dcm", test::fake_plan_text(uid, "FERN-DEMO-001"));
  const IntakeResult result = intake_->take(inbox() / "plan.dcm");
  ASSERT_EQ(result.status, IntakeStatus::checked) << result.message;
  EXPECT_NE(slurp(test::result_file(results(), uid, ".json")).find(uid), std::string::npos);
  EXPECT_TRUE(fs::exists(test::result_file(results(), uid, ".html")));
  EXPECT_FALSE(fs::exists(inbox() / "plan.dcm"));
  ASSERT_TRUE(result.record);
  EXPECT_EQ(result.record->content_sha256.size(), 64U);
  EXPECT_TRUE(
      fs::exists(results() / "plans" / (uid + "." + result.record->content_sha256.substr(0, 16) + ".dcm")));
  // One log line naming the file, the plan and the verdict.
  EXPECT_NE(log_text_.str().find("checked plan.dcm: " + uid), std::string::npos);
  EXPECT_NE(log_text_.str().find("within_tolerance"), std::string::npos);
  const std::string logged = log_text_.str();
  EXPECT_EQ(std::count(logged.begin(), logged.end(), '\n'), 1);
}

TEST_F(PlanIntakeTest, TheSameBytesUnderAnotherNameAreNotCheckedAgain) {
  const std::string text = test::fake_plan_text(test::demo_uid(2), "FERN-DEMO-002");
  test::write_text(inbox() / "a.dcm", text);
  test::write_text(inbox() / "copy of a.dcm", text);
  EXPECT_EQ(intake_->take(inbox() / "a.dcm").status, IntakeStatus::checked);
  const IntakeResult second = intake_->take(inbox() / "copy of a.dcm");
  EXPECT_EQ(second.status, IntakeStatus::duplicate) << second.message;
  EXPECT_FALSE(fs::exists(inbox() / "copy of a.dcm"));
  EXPECT_EQ(calls_->total.load(), 1);
  auto all = intake_->store().list_checks({});
  ASSERT_TRUE(all);
  EXPECT_EQ(all->size(), 1U);
}

TEST_F(PlanIntakeTest, AReExportWithTheSameUidIsANewCheckThatReplacesTheFirst) {
  const std::string uid = test::demo_uid(3);
  test::FakeBeam beam;
  test::write_text(inbox() / "v1.dcm", test::fake_plan_text(uid, "FERN-DEMO-003", {beam}));
  beam.deviation_percent = 1.5;  // the planner changed something
  test::write_text(inbox() / "v2.dcm", test::fake_plan_text(uid, "FERN-DEMO-003", {beam}));
  const IntakeResult first = intake_->take(inbox() / "v1.dcm");
  const IntakeResult second = intake_->take(inbox() / "v2.dcm");
  ASSERT_EQ(first.status, IntakeStatus::checked);
  ASSERT_EQ(second.status, IntakeStatus::checked);
  ASSERT_TRUE(second.record->replaces_check_id);
  EXPECT_EQ(*second.record->replaces_check_id, first.record->id);
  EXPECT_NE(second.message.find("replaces #" + std::to_string(first.record->id)), std::string::npos);
  EXPECT_EQ(calls_->count(uid), 2);
}

TEST_F(PlanIntakeTest, ABadOldFileIsQuarantinedWithItsReason) {
  test::write_text(inbox() / "notes.txt", "this is not a plan\n");
  make_old(inbox() / "notes.txt");
  const IntakeResult result = intake_->take(inbox() / "notes.txt");
  ASSERT_EQ(result.status, IntakeStatus::quarantined) << result.message;
  EXPECT_FALSE(fs::exists(inbox() / "notes.txt"));
  EXPECT_TRUE(fs::exists(results() / "quarantine" / "notes.txt"));
  const std::string reason = slurp(results() / "quarantine" / "notes.txt.reason.txt");
  EXPECT_NE(reason.find("not a DICOM file"), std::string::npos) << reason;
  EXPECT_NE(reason.find("notes.txt"), std::string::npos);
  struct stat info {};
  ASSERT_EQ(::stat((results() / "quarantine" / "notes.txt.reason.txt").c_str(), &info), 0);
  EXPECT_EQ(info.st_mode & 0777, 0640U);
}

TEST_F(PlanIntakeTest, AFileWrittenInPlaceWaitsForItsQuietPeriodAndAnIncompleteOldOneIsQuarantined) {
  const std::string text = test::fake_plan_text(test::demo_uid(4), "FERN-DEMO-004");
  test::write_text(inbox() / "half.dcm", text.substr(0, text.size() / 2));
  const IntakeResult waiting = intake_->take(inbox() / "half.dcm", Arrival::in_place);
  EXPECT_EQ(waiting.status, IntakeStatus::not_ready);
  EXPECT_GT(waiting.retry_at, std::chrono::system_clock::now());
  EXPECT_TRUE(fs::exists(inbox() / "half.dcm"));

  make_old(inbox() / "half.dcm");  // nobody finished writing it
  const IntakeResult stale = intake_->take(inbox() / "half.dcm", Arrival::in_place);
  EXPECT_EQ(stale.status, IntakeStatus::quarantined);
  EXPECT_NE(slurp(results() / "quarantine" / "half.dcm.reason.txt").find("ends inside an element"),
            std::string::npos);
}

TEST_F(PlanIntakeTest, AFileStillOpenForWritingIsNotRead) {
  const std::string text = test::fake_plan_text(test::demo_uid(5), "FERN-DEMO-005");
  std::ofstream writer(inbox() / "open.dcm", std::ios::binary);
  writer << text;
  writer.flush();
  const IntakeResult busy = intake_->take(inbox() / "open.dcm");
  EXPECT_EQ(busy.status, IntakeStatus::not_ready);
  EXPECT_EQ(calls_->total.load(), 0);
  writer.close();
  EXPECT_EQ(intake_->take(inbox() / "open.dcm").status, IntakeStatus::checked);
}

TEST_F(PlanIntakeTest, AfterACrashBetweenRecordAndMoveTheFileIsOnlyMoved) {
  const std::string uid = test::demo_uid(6);
  const std::string text = test::fake_plan_text(uid, "FERN-DEMO-006");
  test::write_text(inbox() / "p.dcm", text);
  ASSERT_EQ(intake_->take(inbox() / "p.dcm").status, IntakeStatus::checked);
  // Simulate the crash window: the record exists but the file is back in the inbox.
  test::write_text(inbox() / "p.dcm", text);
  for (const auto& entry : fs::directory_iterator{results() / "plans"}) fs::remove(entry.path());
  const IntakeResult again = intake_->take(inbox() / "p.dcm");
  EXPECT_EQ(again.status, IntakeStatus::duplicate);
  EXPECT_EQ(calls_->count(uid), 1);
  EXPECT_FALSE(fs::exists(inbox() / "p.dcm"));
  std::size_t kept = 0;
  for ([[maybe_unused]] const auto& entry : fs::directory_iterator{results() / "plans"}) ++kept;
  EXPECT_EQ(kept, 1U);  // the plan file is kept once after all
}

TEST_F(PlanIntakeTest, AnUnsafeUidNeverBecomesAFileName) {
  test::write_text(inbox() / "evil.dcm", test::fake_plan_text("../../etc/passwd", "FERN-DEMO-007"));
  make_old(inbox() / "evil.dcm");
  const IntakeResult result = intake_->take(inbox() / "evil.dcm");
  EXPECT_EQ(result.status, IntakeStatus::quarantined);
  EXPECT_NE(result.message.find("SOPInstanceUID (0008,0018)"), std::string::npos);
}

TEST_F(PlanIntakeTest, HiddenAndTemporaryNamesAreIgnored) {
  test::write_text(inbox() / ".rx-123.part", "x");
  EXPECT_EQ(intake_->take(inbox() / ".rx-123.part").status, IntakeStatus::ignored);
  EXPECT_TRUE(fs::exists(inbox() / ".rx-123.part"));
  EXPECT_FALSE(dicom::is_candidate_name("plan.dcm.tmp"));
  EXPECT_TRUE(dicom::is_candidate_name("RP.1.2.3.dcm"));
  EXPECT_TRUE(is_safe_uid("1.2.826.0.1.3680043.2.1125.1"));
  EXPECT_FALSE(is_safe_uid("1.2/3"));
  EXPECT_FALSE(is_safe_uid(""));
  EXPECT_FALSE(is_safe_uid(std::string(65, '1')));
}

TEST_F(PlanIntakeTest, ABatchChecksACopyOnceAndRecordsEveryPlanInOneCommit) {
  const std::string text = test::fake_plan_text(test::demo_uid(10), "FERN-DEMO-010");
  test::write_text(inbox() / "a.dcm", text);
  test::write_text(inbox() / "b.dcm", test::fake_plan_text(test::demo_uid(11), "FERN-DEMO-010"));
  test::write_text(inbox() / "a copy.dcm", text);
  const std::vector<IntakeCandidate> batch{
      {inbox() / "a.dcm"}, {inbox() / "b.dcm"}, {inbox() / "a copy.dcm"}};
  const auto results = intake_->take_batch(batch);
  ASSERT_EQ(results.size(), 3U);
  EXPECT_EQ(results[0].status, IntakeStatus::checked) << results[0].message;
  EXPECT_EQ(results[1].status, IntakeStatus::checked) << results[1].message;
  EXPECT_EQ(results[2].status, IntakeStatus::duplicate) << results[2].message;
  EXPECT_EQ(calls_->count(test::demo_uid(10)), 1);
  EXPECT_EQ(results[0].record->checked_at_utc, results[1].record->checked_at_utc);  // one transaction
  for (const char* name : {"a.dcm", "b.dcm", "a copy.dcm"}) EXPECT_FALSE(fs::exists(inbox() / name)) << name;
}

TEST_F(PlanIntakeTest, AStopRequestDefersTheRestOfTheBatchAndCommitsWhatWasDone) {
  std::vector<IntakeCandidate> batch;
  for (int i = 0; i < 4; ++i) {
    const std::string name = "p" + std::to_string(i) + ".dcm";
    test::write_text(inbox() / name, test::fake_plan_text(test::demo_uid(20 + i), "FERN-DEMO-011"));
    batch.push_back(IntakeCandidate{inbox() / name});
  }
  int asked = 0;
  const auto results = intake_->take_batch(batch, [&] { return ++asked > 2; });
  EXPECT_EQ(results[0].status, IntakeStatus::checked);
  EXPECT_EQ(results[1].status, IntakeStatus::checked);
  EXPECT_EQ(results[2].status, IntakeStatus::deferred);
  EXPECT_EQ(results[3].status, IntakeStatus::deferred);
  EXPECT_TRUE(fs::exists(inbox() / "p2.dcm"));
  auto all = intake_->store().list_checks({});
  ASSERT_TRUE(all);
  EXPECT_EQ(all->size(), 2U);
}

TEST_F(PlanIntakeTest, AFileChangedAgainWithinItsQuietPeriodIsNotRead) {
  const std::string text = test::fake_plan_text(test::demo_uid(30), "FERN-DEMO-012");
  test::write_text(inbox() / "w.dcm", text);
  make_old(inbox() / "w.dcm");
  std::ofstream{inbox() / "w.dcm", std::ios::app} << "";  // opened and closed for writing: no change
  test::write_text(inbox() / "w.dcm", text);              // rewritten: changed now
  EXPECT_EQ(intake_->take(inbox() / "w.dcm", Arrival::in_place).status, IntakeStatus::not_ready);
  EXPECT_EQ(calls_->total.load(), 0);
  make_old(inbox() / "w.dcm");
  EXPECT_EQ(intake_->take(inbox() / "w.dcm", Arrival::in_place).status, IntakeStatus::checked);
}

// A file the service cannot read: as root (who reads everything), the folders are handed to the
// unprivileged user 65534 and the file stays root's with mode 0600, and the service runs as 65534 in
// a child process; as any other user, mode 000 is enough. Returns the child's exit status.
int run_unprivileged_with_unreadable_file(const fs::path& dir, const fs::path& file, const std::string& text,
                                          const std::function<int()>& service) {
  const bool root = ::geteuid() == 0;
  if (root) {
    for (const auto& entry : fs::recursive_directory_iterator{dir}) {
      if (::lchown(entry.path().c_str(), 65534, 65534) != 0) return 90;
    }
    if (::chown(dir.c_str(), 65534, 65534) != 0) return 91;
  }
  test::write_text(file, text);
  if (::chmod(file.c_str(), root ? 0600 : 0) != 0) return 92;
  const pid_t child = ::fork();
  if (child == 0) {
    if (root && (::setgroups(0, nullptr) != 0 || ::setgid(65534) != 0 || ::setuid(65534) != 0)) ::_exit(93);
    ::_exit(service());
  }
  int status = 0;
  ::waitpid(child, &status, 0);
  return WIFEXITED(status) ? WEXITSTATUS(status) : 99;
}

TEST(UnreadableFiles, AreRetriedWithGrowingWaitsThenQuarantinedWithTheReason) {
  // Issue 10, item 3: an unreadable file was retried every 30 s, forever.
  const fs::path dir = test::make_temp_dir("countersign-unreadable");
  fs::create_directories(dir / "inbox");
  fs::create_directories(dir / "results");
  const fs::path locked = dir / "inbox" / "locked.dcm";
  const int status = run_unprivileged_with_unreadable_file(
      dir, locked, test::fake_plan_text(test::demo_uid(40), "FERN-DEMO-013"), [&] {
        std::ofstream log_file(dir / "service.log");
        ServiceLog log{log_file};
        auto folders = ServiceFolders::prepare(dir / "inbox", dir / "results", std::nullopt);
        auto history = test::open_history(dir / "results" / "history.sqlite", store::Access::read_write);
        if (!folders || !history) return 95;
        IntakeOptions options;
        options.first_retry = 100ms;
        options.read_attempts = 3;
        PlanIntake intake{folders.value(), std::move(history.value()), test::fake_processor(), log, options};
        auto watcher = FolderWatcher::open(intake);
        if (!watcher) return 96;
        const StopSignal stop;
        std::thread stopper([&] {
          for (int i = 0; i < 400 && !fs::exists(dir / "results" / "quarantine" / "locked.dcm.reason.txt");
               ++i)
            std::this_thread::sleep_for(25ms);
          stop.request();
        });
        const int fds[] = {stop.fd()};
        const auto summary = watcher->run(RunUntil::stopped, fds);
        stopper.join();
        if (!summary) return 97;
        return summary->quarantined == 1 && summary->failures == 2 ? 0 : 98;
      });
  const std::string log = slurp(dir / "service.log");
  ASSERT_EQ(status, 0) << log;
  EXPECT_FALSE(fs::exists(locked));
  EXPECT_TRUE(fs::exists(dir / "results" / "quarantine" / "locked.dcm"));
  const std::string reason = slurp(dir / "results" / "quarantine" / "locked.dcm.reason.txt");
  EXPECT_NE(reason.find("could not be read in 3 attempts"), std::string::npos) << reason;
  // Each wait twice the one before.
  EXPECT_NE(log.find("(attempt 1, next in 0.1 s)"), std::string::npos) << log;
  EXPECT_NE(log.find("(attempt 2, next in 0.2 s)"), std::string::npos) << log;
  fs::remove_all(dir);
}

TEST(ServiceFolders, TheInboxCannotBeAnOutputFolder) {
  const fs::path dir = test::make_temp_dir("countersign-folders");
  EXPECT_FALSE(ServiceFolders::prepare(dir / "results", dir / "results", std::nullopt));
  EXPECT_FALSE(ServiceFolders::prepare(dir / "results" / "quarantine", dir / "results", std::nullopt));
  EXPECT_FALSE(ServiceFolders::prepare(dir / "q", dir / "results", dir / "q"));
  const auto fine = ServiceFolders::prepare(dir / "inbox", dir / "results", std::nullopt);
  ASSERT_TRUE(fine) << fine.error().message();
  EXPECT_EQ(fine->quarantine, dir / "results" / "quarantine");
  EXPECT_EQ(fine->checked_plans, dir / "results" / "plans");
  fs::remove_all(dir);
}

}  // namespace
}  // namespace countersign::service
