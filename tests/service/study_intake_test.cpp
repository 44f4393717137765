// The services' study store through the intake: CT images and structure sets kept by Study/Series
// UID (mode 0640), other RT objects discarded (never quarantined), a plan that waits for its study
// and is checked with it once complete, or without it after the wait, saying so; purging by age.
// Data: the invented demo study testdata/studies/fern_lung_slab (20 CT slices, RS.dcm, the plan).

#include <countersign/service/plan_intake.hpp>
#include <countersign/service/study_store.hpp>

#include "service/result_files.hpp"
#include "support/paths.hpp"

#include <gtest/gtest.h>
#include <sys/stat.h>

#include <algorithm>
#include <chrono>
#include <fstream>
#include <iterator>
#include <sstream>

namespace countersign::service {
namespace {

namespace fs = std::filesystem;
using namespace std::chrono_literals;

const fs::path& lung_study() {
  static const fs::path folder = test::source_dir() / "testdata" / "studies" / "fern_lung_slab";
  return folder;
}
// UIDs of the demo study, as dcmdump shows them in its files.
constexpr const char* study_uid = "2.25.301642988147209845366118572013.201.2.0";
constexpr const char* ct_series_uid = "2.25.301642988147209845366118572013.201.7.0";

class StudyIntakeTest : public ::testing::Test {
 protected:
  void SetUp() override { dir_ = test::make_temp_dir("countersign-study-intake"); }
  void TearDown() override { fs::remove_all(dir_); }

  // An intake with a study store; the processor records the study it is given.
  void open(std::chrono::seconds wait) {
    auto folders = ServiceFolders::prepare(dir_ / "inbox", dir_ / "results", std::nullopt);
    ASSERT_TRUE(folders) << folders.error().message();
    auto history = test::open_history(dir_ / "results" / "history.sqlite", store::Access::read_write);
    ASSERT_TRUE(history) << history.error().message();
    auto studies = StudyStore::open(dir_ / "results", StudyStoreSettings{wait, std::chrono::hours{24}}, log_);
    ASSERT_TRUE(studies) << studies.error().message();
    studies_ = std::move(studies.value());
    PlanProcessor processor = [this](const fs::path&, std::span<const std::byte>,
                                     const StudyContext& study) -> Expected<PlanOutcome> {
      seen_.push_back(study);
      PlanOutcome outcome;
      outcome.sop_instance_uid = "2.25.301642988147209845366118572013.201.1.0";
      outcome.patient_id = "FERN-PH-0201";
      outcome.json_text = "{}";
      return outcome;
    };
    intake_.emplace(folders.value(), std::move(history.value()), processor, log_, IntakeOptions{});
    intake_->set_study_store(studies_.get());
  }
  fs::path arrive(const fs::path& source, const std::string& name) {
    fs::copy_file(source, dir_ / "inbox" / name);
    return dir_ / "inbox" / name;
  }

  fs::path dir_;
  std::ostringstream log_text_;
  ServiceLog log_{log_text_};
  std::unique_ptr<StudyStore> studies_;
  std::optional<PlanIntake> intake_;
  std::vector<StudyContext> seen_;
};

TEST_F(StudyIntakeTest, CtImagesAndTheStructureSetAreKeptByStudyAndSeriesWithMode0640) {
  open(120s);
  const auto kept = intake_->take(arrive(lung_study() / "CT001.dcm", "CT001.dcm"));
  ASSERT_EQ(kept.status, IntakeStatus::kept_for_study) << kept.message;
  const fs::path stored = dir_ / "results" / "studies" / study_uid / ct_series_uid /
                          "2.25.301642988147209845366118572013.201.8.1.dcm";
  ASSERT_TRUE(fs::exists(stored)) << log_text_.str();
  struct stat s {};
  ASSERT_EQ(::stat(stored.c_str(), &s), 0);
  EXPECT_EQ(s.st_mode & 0777, 0640U);
  EXPECT_FALSE(fs::exists(dir_ / "inbox" / "CT001.dcm"));
  EXPECT_EQ(intake_->take(arrive(lung_study() / "RS.dcm", "RS.dcm")).status, IntakeStatus::kept_for_study);
  EXPECT_NE(log_text_.str().find("kept RS.dcm in the study store: RT Structure Set"), std::string::npos);
}

TEST_F(StudyIntakeTest, OtherRtObjectsAreLoggedAndDiscardedNotQuarantined) {
  open(120s);
  const auto result = intake_->take(
      arrive(test::source_dir() / "testdata" / "malformed" / "rt_dose_sop_class.dcm", "RD.dcm"));
  EXPECT_EQ(result.status, IntakeStatus::discarded) << result.message;
  EXPECT_FALSE(fs::exists(dir_ / "inbox" / "RD.dcm"));
  EXPECT_TRUE(fs::is_empty(dir_ / "results" / "quarantine"));
  EXPECT_NE(log_text_.str().find("discarded RD.dcm: RT Dose"), std::string::npos) << log_text_.str();
}

TEST_F(StudyIntakeTest, APlanWaitsForItsWholeStudyAndIsCheckedWithItWhenTheLastSliceArrives) {
  open(600s);
  const fs::path plan = arrive(lung_study() / "RP.fern_lung_4field.dcm", "RP.dcm");
  auto first = intake_->take(plan);
  EXPECT_EQ(first.status, IntakeStatus::not_ready);
  EXPECT_NE(first.message.find("the RT Structure Set"), std::string::npos) << first.message;
  EXPECT_LE(first.retry_at, std::chrono::system_clock::now() + 3s);
  ASSERT_EQ(intake_->take(arrive(lung_study() / "RS.dcm", "RS.dcm")).status, IntakeStatus::kept_for_study);
  for (int i = 1; i <= 19; ++i) {  // all but the last slice
    const std::string name = (i < 10 ? "CT00" : "CT0") + std::to_string(i) + ".dcm";
    ASSERT_EQ(intake_->take(arrive(lung_study() / name, name)).status, IntakeStatus::kept_for_study);
  }
  const auto waiting = intake_->take(plan);
  EXPECT_EQ(waiting.status, IntakeStatus::not_ready);
  EXPECT_NE(waiting.message.find("1 of 20 CT images"), std::string::npos) << waiting.message;
  EXPECT_TRUE(seen_.empty());
  ASSERT_EQ(intake_->take(arrive(lung_study() / "CT020.dcm", "CT020.dcm")).status,
            IntakeStatus::kept_for_study);
  const auto checked = intake_->take(plan);
  ASSERT_EQ(checked.status, IntakeStatus::checked) << checked.message;
  ASSERT_EQ(seen_.size(), 1U);
  ASSERT_EQ(seen_.front().folders.size(), 1U);
  EXPECT_EQ(seen_.front().folders.front(), dir_ / "results" / "studies" / study_uid);
  EXPECT_NE(checked.message.find("with its CT study"), std::string::npos) << checked.message;
  // The wait was logged once, however often the plan was looked at.
  const std::string log = log_text_.str();
  EXPECT_EQ(log.find("waiting for the study of RP.dcm"), log.rfind("waiting for the study of RP.dcm")) << log;
}

TEST_F(StudyIntakeTest, APlanWhoseStudyDoesNotArriveInTimeIsCheckedWithoutItAndSaysSo) {
  open(0s);
  const auto checked = intake_->take(arrive(lung_study() / "RP.fern_lung_4field.dcm", "RP.dcm"));
  ASSERT_EQ(checked.status, IntakeStatus::checked) << checked.message;
  ASSERT_EQ(seen_.size(), 1U);
  EXPECT_TRUE(seen_.front().folders.empty());
  EXPECT_NE(seen_.front().note.find("--study-wait"), std::string::npos) << seen_.front().note;
  EXPECT_NE(seen_.front().note.find("homogeneous water"), std::string::npos);
  EXPECT_NE(checked.message.find("without a CT study"), std::string::npos);
  EXPECT_NE(log_text_.str().find("no study for RP.dcm after 0 s"), std::string::npos) << log_text_.str();
}

TEST_F(StudyIntakeTest, APlanCheckedWithoutItsStudyIsCheckedAgainWhenTheStudyArrivesLate) {
  open(0s);
  const auto first = intake_->take(arrive(lung_study() / "RP.fern_lung_4field.dcm", "RP.dcm"));
  ASSERT_EQ(first.status, IntakeStatus::checked) << first.message;
  ASSERT_TRUE(first.record);
  const fs::path awaiting = dir_ / "results" / "awaiting-study";
  ASSERT_EQ(std::distance(fs::directory_iterator{awaiting}, fs::directory_iterator{}), 1) << log_text_.str();
  ASSERT_EQ(intake_->take(arrive(lung_study() / "RS.dcm", "RS.dcm")).status, IntakeStatus::kept_for_study);
  for (int i = 1; i <= 20; ++i) {
    EXPECT_EQ(seen_.size(), 1U) << "checked again before the study was complete (slice " << i << ")";
    const std::string name = (i < 10 ? "CT00" : "CT0") + std::to_string(i) + ".dcm";
    ASSERT_EQ(intake_->take(arrive(lung_study() / name, name)).status, IntakeStatus::kept_for_study);
  }
  // The last slice completed the study: the plan kept under RESULTS/plans was checked with it.
  ASSERT_EQ(seen_.size(), 2U) << log_text_.str();
  EXPECT_TRUE(seen_[0].folders.empty());
  ASSERT_EQ(seen_[1].folders.size(), 1U);
  EXPECT_EQ(seen_[1].folders.front(), dir_ / "results" / "studies" / study_uid);
  EXPECT_TRUE(seen_[1].note.empty());
  // Both checks are in the history; the second supersedes the first; the marker is gone.
  auto checks = test::recorded_checks(dir_ / "results");
  ASSERT_EQ(checks.size(), 2U);
  std::sort(checks.begin(), checks.end(), [](const auto& a, const auto& b) { return a.id < b.id; });
  EXPECT_EQ(checks[1].replaces_check_id, first.record->id);
  EXPECT_EQ(checks[1].files.plan, checks[0].files.plan);  // the plan file kept by the first check
  EXPECT_EQ(checks[1].hashes.plan_sha256, checks[0].hashes.plan_sha256);  // the same bytes
  EXPECT_TRUE(fs::exists(dir_ / "results" / checks[0].files.plan));
  EXPECT_TRUE(fs::is_empty(awaiting));
  EXPECT_NE(log_text_.str().find("which arrived after check #" + std::to_string(first.record->id)),
            std::string::npos)
      << log_text_.str();
  // A slice sent again checks nothing again.
  ASSERT_EQ(intake_->take(arrive(lung_study() / "CT001.dcm", "CT001.dcm")).status,
            IntakeStatus::kept_for_study);
  EXPECT_EQ(seen_.size(), 2U);
  EXPECT_EQ(test::recorded_checks(dir_ / "results").size(), 2U);
}

TEST_F(StudyIntakeTest, FilesOlderThanTheKeepAgeArePurgedAndEmptyFoldersRemoved) {
  open(120s);
  ASSERT_EQ(intake_->take(arrive(lung_study() / "CT001.dcm", "CT001.dcm")).status,
            IntakeStatus::kept_for_study);
  ASSERT_EQ(intake_->take(arrive(lung_study() / "RS.dcm", "RS.dcm")).status, IntakeStatus::kept_for_study);
  const auto now = std::chrono::system_clock::now();
  EXPECT_EQ(studies_->purge(now + 23h), 0U);  // kept for 24 h
  EXPECT_EQ(studies_->purge(now + 25h), 2U);
  EXPECT_TRUE(fs::is_empty(dir_ / "results" / "studies"));
  EXPECT_NE(log_text_.str().find("study store: removed 2 file(s)"), std::string::npos);
}

}  // namespace
}  // namespace countersign::service
