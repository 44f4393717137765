#pragma once

// One running checking service, as `countersign watch` and `countersign receive` use it: it locks
// the results folder (one service per folder), prepares the folders, clears what an interrupted run
// left behind, opens the history store (SQLite in the results folder, or a shared PostgreSQL
// database), starts the follow-ups (alerts, sending to the archive) and resumes those an earlier run
// left, and watches the inbox. The processor (the checking pipeline, with its beam-data library
// loaded once) is given by the caller.

#include <countersign/service/folder_watcher.hpp>
#include <countersign/service/follow_ups.hpp>
#include <countersign/service/plan_intake.hpp>
#include <countersign/service/plan_outcome.hpp>
#include <countersign/service/private_files.hpp>
#include <countersign/service/service_log.hpp>
#include <countersign/service/study_store.hpp>
#include <countersign/store/store.hpp>
#include <countersign/util/error.hpp>

#include <chrono>
#include <filesystem>
#include <memory>
#include <optional>
#include <span>

namespace countersign::service {

struct ServiceSettings {
  std::filesystem::path inbox;
  std::filesystem::path results;
  std::optional<std::filesystem::path> quarantine;  // default RESULTS/quarantine
  std::optional<std::string> store;  // --db: a file or postgresql://…; default RESULTS/history.sqlite
  IntakeOptions intake;
  WatchOptions watch;
  FollowUpSettings follow_ups;
  // CT images and structure sets kept under RESULTS/studies, plans waiting for them; none: plans
  // are checked without a CT study and CT images are not plans (quarantined).
  std::optional<StudyStoreSettings> studies;
};

// Where the history of a service with these settings is.
[[nodiscard]] store::StoreLocation store_location(const ServiceSettings& settings);

class CheckingService {
 public:
  [[nodiscard]] static Expected<std::unique_ptr<CheckingService>> open(const ServiceSettings& settings,
                                                                       PlanProcessor processor,
                                                                       ServiceLog& log);
  CheckingService(const CheckingService&) = delete;
  CheckingService& operator=(const CheckingService&) = delete;

  // See FolderWatcher::run.
  [[nodiscard]] Expected<WatchSummary> run(RunUntil until, std::span<const int> stop_fds);

  [[nodiscard]] const ServiceFolders& folders() const { return intake_.folders(); }
  [[nodiscard]] store::Store& store() const { return intake_.store(); }
  // Waits up to `timeout` for the follow-ups (alerts, sending) in hand; see ServiceFollowUps::wait_idle.
  void wait_for_follow_ups(std::chrono::seconds timeout);

 private:
  CheckingService(FolderLock lock, PlanIntake intake, std::unique_ptr<ServiceFollowUps> follow_ups,
                  std::unique_ptr<StudyStore> studies);

  FolderLock lock_;
  std::unique_ptr<StudyStore> studies_;  // before the intake that uses it
  PlanIntake intake_;
  std::unique_ptr<ServiceFollowUps> follow_ups_;  // after the intake: stopped first
  std::optional<FolderWatcher> watcher_;
};

}  // namespace countersign::service
