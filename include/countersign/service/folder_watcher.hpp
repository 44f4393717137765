#pragma once

// Watches an inbox folder with inotify and feeds its plan files to a PlanIntake in batches. Files
// already there when the watcher starts (arrived while the service was down) are taken first, oldest
// first. A file moved in whole (a rename) is taken at once; a file written in place only after its
// quiet period (see IntakeOptions). Subfolders are watched too with Subfolders::include, and
// otherwise named once in the log as not watched.

#include <countersign/dicom/plan_files.hpp>
#include <countersign/service/plan_intake.hpp>
#include <countersign/service/unique_fd.hpp>
#include <countersign/util/error.hpp>

#include <chrono>
#include <cstddef>
#include <deque>
#include <filesystem>
#include <map>
#include <optional>
#include <set>
#include <span>
#include <string>
#include <vector>

namespace countersign::service {

enum class RunUntil {
  stopped,   // until a stop descriptor becomes readable
  one_pass,  // the files there at the start, each taken once (failures are not retried), then return
};

struct WatchSummary {
  std::size_t checked = 0;
  std::size_t duplicates = 0;
  std::size_t quarantined = 0;
  std::size_t failures = 0;            // failed attempts (unreadable files, our own failures)
  std::size_t kept_for_study = 0;      // CT images and structure sets moved to the study store
  std::size_t discarded = 0;           // other RT objects, logged and removed
  std::vector<std::string> not_taken;  // one_pass: "<name>: <why>" for each file left in the inbox
};

struct WatchOptions {
  // A full listing of the inbox now and then, in case the kernel dropped an event.
  std::chrono::milliseconds rescan_interval{60000};
  dicom::Subfolders subfolders = dicom::Subfolders::ignore;
  // Files per batch (one flush of the results and one history transaction each).
  std::size_t max_batch = 64;
  // one_pass: how long a file may go on changing before it is reported as not taken.
  std::chrono::milliseconds one_pass_wait{60000};
};

class FolderWatcher {
 public:
  // Starts watching intake.folders().inbox (and its subfolders when asked). The intake must outlive
  // the watcher.
  [[nodiscard]] static Expected<FolderWatcher> open(PlanIntake& intake, WatchOptions options = {});

  // Takes files until `until` is met or one of `stop_fds` becomes readable; the files of the batch
  // in hand when a stop arrives are finished first. An error means the inbox itself became unusable.
  [[nodiscard]] Expected<WatchSummary> run(RunUntil until, std::span<const int> stop_fds);

 private:
  using Clock = std::chrono::system_clock;
  struct Tracked {
    Arrival arrival = Arrival::in_place;
    int attempt = 1;
    std::optional<Clock::time_point> due;  // waiting until then; queued when empty
    std::string last_reason;               // why it was last left in the inbox
  };

  FolderWatcher(PlanIntake& intake, UniqueFd inotify, WatchOptions options);

  // Reads pending inotify events; false when the inbox was removed or moved away.
  bool drain_events();
  void handle_directory_event(const std::string& relative, Arrival arrival);
  void watch_subfolder(const std::string& relative);
  void rescan();
  void enqueue(const std::string& relative, Arrival arrival);
  void release_due(Clock::time_point now);
  void take_batch(WatchSummary& summary, RunUntil until, std::span<const int> stop_fds);
  void settle(const std::string& relative, const IntakeResult& result, WatchSummary& summary, RunUntil until);
  [[nodiscard]] std::optional<Clock::time_point> next_due() const;

  PlanIntake* intake_;
  UniqueFd inotify_;
  WatchOptions options_;
  int inbox_watch_ = -1;
  std::map<int, std::string> watched_folders_;  // watch descriptor -> folder relative to the inbox
  std::set<std::string> reported_subfolders_;   // not watched, said so once
  std::map<std::string, Tracked> tracked_;      // by path relative to the inbox
  std::deque<std::string> ready_;               // in arrival order
  Clock::time_point next_rescan_{};
};

}  // namespace countersign::service
