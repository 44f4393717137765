#pragma once

// One running checking service, as `countersign watch` and `countersign receive` use it: it locks
// the results folder (one service per folder), prepares the folders, clears what an interrupted run
// left behind, opens the history and watches the inbox. The processor (the checking pipeline, with
// its beam-data library loaded once) is given by the caller.

#include <countersign/service/folder_watcher.hpp>
#include <countersign/service/history.hpp>
#include <countersign/service/plan_intake.hpp>
#include <countersign/service/plan_outcome.hpp>
#include <countersign/service/private_files.hpp>
#include <countersign/service/service_log.hpp>
#include <countersign/util/error.hpp>

#include <filesystem>
#include <memory>
#include <optional>
#include <span>

namespace countersign::service {

struct ServiceSettings {
  std::filesystem::path inbox;
  std::filesystem::path results;
  std::optional<std::filesystem::path> quarantine;    // default RESULTS/quarantine
  std::optional<std::filesystem::path> history_file;  // default RESULTS/history.sqlite
  IntakeOptions intake;
  WatchOptions watch;
};

// The history file a service with these results uses.
[[nodiscard]] std::filesystem::path default_history_file(const std::filesystem::path& results);

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
  [[nodiscard]] const History& history() const { return intake_.history(); }

 private:
  CheckingService(FolderLock lock, PlanIntake intake);

  FolderLock lock_;
  PlanIntake intake_;
  std::optional<FolderWatcher> watcher_;
};

}  // namespace countersign::service
