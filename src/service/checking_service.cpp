#include <countersign/service/checking_service.hpp>

namespace countersign::service {

namespace fs = std::filesystem;

fs::path default_history_file(const fs::path& results) { return results / "history.sqlite"; }

CheckingService::CheckingService(FolderLock lock, PlanIntake intake)
    : lock_(std::move(lock)), intake_(std::move(intake)) {}

Expected<std::unique_ptr<CheckingService>> CheckingService::open(const ServiceSettings& settings,
                                                                 PlanProcessor processor, ServiceLog& log) {
  if (auto made = ensure_private_directory(settings.results); !made) return made.error();
  auto lock = FolderLock::acquire(settings.results);
  if (!lock) return lock.error();
  auto folders = ServiceFolders::prepare(settings.inbox, settings.results, settings.quarantine);
  if (!folders) return folders.error();
  if (settings.watch.subfolders == dicom::Subfolders::include) {
    // Watched subfolders must not hold our own output: results would be taken for arriving plans.
    const auto inside_inbox = [&](const fs::path& folder) {
      std::error_code ec;
      const fs::path relative =
          fs::weakly_canonical(folder, ec).lexically_relative(fs::weakly_canonical(folders->inbox, ec));
      return !relative.empty() && *relative.begin() != "..";
    };
    for (const auto& output : {folders->results, folders->quarantine, folders->checked_plans}) {
      if (inside_inbox(output)) {
        return Error{ErrorKind::usage, output.string(), "", "",
                     "with --recursive, the results, quarantine and plans folders must be outside the inbox"};
      }
    }
  }
  std::size_t cleared = 0;
  for (const auto& dir : {folders->inbox, folders->results, folders->quarantine, folders->checked_plans}) {
    cleared += remove_stale_temporaries(dir);
  }
  const fs::path history_file = settings.history_file.value_or(default_history_file(settings.results));
  auto history = History::open(history_file, HistoryAccess::read_write);
  if (!history) return history.error();

  std::unique_ptr<CheckingService> service{new CheckingService(
      std::move(lock.value()),
      PlanIntake{folders.value(), std::move(history.value()), std::move(processor), log, settings.intake})};
  auto watcher = FolderWatcher::open(service->intake_, settings.watch);
  if (!watcher) return watcher.error();
  service->watcher_.emplace(std::move(watcher.value()));
  std::string started =
      "watching " + folders->inbox.string() +
      (settings.watch.subfolders == dicom::Subfolders::include ? " and its subfolders" : "") +
      "; results in " + folders->results.string() + ", quarantine " + folders->quarantine.string() +
      ", history " + history_file.string();
  if (cleared > 0)
    started += "; removed " + std::to_string(cleared) + " temporary file(s) of an interrupted run";
  log.line(started);
  return service;
}

Expected<WatchSummary> CheckingService::run(RunUntil until, std::span<const int> stop_fds) {
  return watcher_->run(until, stop_fds);
}

}  // namespace countersign::service
