#include <countersign/service/plan_intake.hpp>

#include "service/fake_plans.hpp"
#include "support/paths.hpp"

#include <gtest/gtest.h>
#include <sys/stat.h>

#include <algorithm>
#include <fstream>
#include <sstream>

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
    auto history = History::open(dir_ / "results" / "history.sqlite", HistoryAccess::read_write);
    ASSERT_TRUE(history) << history.error().message();
    IntakeOptions options;
    options.settle_time = 2s;
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
  EXPECT_NE(slurp(results() / (uid + ".json")).find(uid), std::string::npos);
  EXPECT_TRUE(fs::exists(results() / (uid + ".html")));
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
  auto all = intake_->history().list(HistoryFilter{});
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

TEST_F(PlanIntakeTest, AnIncompleteFreshFileWaitsAndAnIncompleteOldOneIsQuarantined) {
  const std::string text = test::fake_plan_text(test::demo_uid(4), "FERN-DEMO-004");
  test::write_text(inbox() / "half.dcm", text.substr(0, text.size() / 2));
  const IntakeResult waiting = intake_->take(inbox() / "half.dcm");
  EXPECT_EQ(waiting.status, IntakeStatus::not_ready);
  EXPECT_GT(waiting.retry_at, std::chrono::system_clock::now());
  EXPECT_TRUE(fs::exists(inbox() / "half.dcm"));

  make_old(inbox() / "half.dcm");  // nobody finished writing it
  const IntakeResult stale = intake_->take(inbox() / "half.dcm");
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
  EXPECT_FALSE(is_candidate_name("plan.dcm.tmp"));
  EXPECT_TRUE(is_candidate_name("RP.1.2.3.dcm"));
  EXPECT_TRUE(is_safe_uid("1.2.826.0.1.3680043.2.1125.1"));
  EXPECT_FALSE(is_safe_uid("1.2/3"));
  EXPECT_FALSE(is_safe_uid(""));
  EXPECT_FALSE(is_safe_uid(std::string(65, '1')));
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
