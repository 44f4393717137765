#include <countersign/service/checking_service.hpp>

namespace countersign::service {

namespace fs = std::filesystem;

store::StoreLocation store_location(const ServiceSettings& settings) {
  return store::StoreLocation::parse(
      settings.store.value_or(store::default_history_file(settings.results).string()));
}

CheckingService::CheckingService(FolderLock lock, PlanIntake intake,
                                 std::unique_ptr<ServiceFollowUps> follow_ups,
                                 std::unique_ptr<StudyStore> studies)
    : lock_(std::move(lock)),
      studies_(std::move(studies)),
      intake_(std::move(intake)),
      follow_ups_(std::move(follow_ups)) {
  if (follow_ups_) intake_.set_follow_ups(follow_ups_.get());
  if (studies_) intake_.set_study_store(studies_.get());
}

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
  const store::StoreLocation location = store_location(settings);
  auto store = store::Store::open(location, store::Access::read_write);
  if (!store) return store.error();
  std::unique_ptr<ServiceFollowUps> follow_ups;
  if (settings.follow_ups.any()) {
    auto started = ServiceFollowUps::start(settings.follow_ups, folders->results, log);
    if (!started) return started.error();
    follow_ups = std::move(started.value());
    // Before any new check: what a crash or stop left undone goes first.
    follow_ups->resume(*store.value());
  }

  std::unique_ptr<StudyStore> studies;
  if (settings.studies) {
    auto opened = StudyStore::open(folders->results, *settings.studies, log);
    if (!opened) return opened.error();
    studies = std::move(opened.value());
    cleared += remove_stale_temporaries(studies->root());
  }

  std::unique_ptr<CheckingService> service{new CheckingService(
      std::move(lock.value()),
      PlanIntake{folders.value(), std::move(store.value()), std::move(processor), log, settings.intake},
      std::move(follow_ups), std::move(studies))};
  auto watcher = FolderWatcher::open(service->intake_, settings.watch);
  if (!watcher) return watcher.error();
  service->watcher_.emplace(std::move(watcher.value()));
  std::string started =
      "watching " + folders->inbox.string() +
      (settings.watch.subfolders == dicom::Subfolders::include ? " and its subfolders" : "") +
      "; results in " + folders->results.string() + ", quarantine " + folders->quarantine.string() +
      ", history " + location.describe();
  if (settings.studies) {
    started += "; CT studies kept in " + (folders->results / "studies").string() + " for " +
               std::to_string(settings.studies->keep.count() / 24) + " days, a plan waits up to " +
               std::to_string(settings.studies->wait.count()) + " s for its study";
  }
  if (cleared > 0)
    started += "; removed " + std::to_string(cleared) + " temporary file(s) of an interrupted run";
  log.line(started);
  return service;
}

void CheckingService::wait_for_follow_ups(std::chrono::seconds timeout) {
  if (follow_ups_) follow_ups_->wait_idle(std::chrono::steady_clock::now() + timeout);
}

Expected<WatchSummary> CheckingService::run(RunUntil until, std::span<const int> stop_fds) {
  return watcher_->run(until, stop_fds);
}

}  // namespace countersign::service
