#pragma once

// Watches an inbox folder with inotify and feeds each complete file to a PlanIntake. Files already
// there when the watcher starts (arrived while the service was down) are taken first, oldest first.
// A file is taken when it is closed after writing or moved in; one still being written is retried.

#include <countersign/service/plan_intake.hpp>
#include <countersign/service/unique_fd.hpp>
#include <countersign/util/error.hpp>

#include <chrono>
#include <cstddef>
#include <deque>
#include <filesystem>
#include <map>
#include <set>
#include <span>
#include <string>

namespace countersign::service {

enum class RunUntil {
  stopped,  // until a stop descriptor becomes readable
  idle,     // until nothing is queued or waiting (process the backlog, then return)
};

struct WatchSummary {
  std::size_t checked = 0;
  std::size_t duplicates = 0;
  std::size_t quarantined = 0;
  std::size_t failures = 0;  // our own failures (each retried later)
};

struct WatchOptions {
  // A full listing of the inbox now and then, in case the kernel dropped an event.
  std::chrono::milliseconds rescan_interval{60000};
};

class FolderWatcher {
 public:
  // Starts watching intake.folders().inbox. The intake must outlive the watcher.
  [[nodiscard]] static Expected<FolderWatcher> open(PlanIntake& intake, WatchOptions options = {});

  // Takes files until `until` is met or one of `stop_fds` becomes readable; the file being taken
  // when a stop arrives is finished first. An error means the inbox itself became unusable.
  [[nodiscard]] Expected<WatchSummary> run(RunUntil until, std::span<const int> stop_fds);

 private:
  using Clock = std::chrono::system_clock;
  FolderWatcher(PlanIntake& intake, UniqueFd inotify, WatchOptions options);

  // Reads pending inotify events; false when the inbox was removed or moved away.
  bool drain_events();
  void rescan();
  void enqueue(const std::string& name);
  void take_one(WatchSummary& summary);

  PlanIntake* intake_;
  UniqueFd inotify_;
  WatchOptions options_;
  std::deque<std::string> ready_;  // names, in arrival order
  std::set<std::string> ready_names_;
  std::map<std::string, Clock::time_point> waiting_;  // names to retry, and when
  Clock::time_point next_rescan_{};
};

}  // namespace countersign::service
