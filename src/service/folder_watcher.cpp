#include <countersign/service/folder_watcher.hpp>

#include <poll.h>
#include <sys/inotify.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <cstring>
#include <utility>

namespace countersign::service {

namespace fs = std::filesystem;

namespace {

constexpr std::uint32_t folder_events =
    IN_CLOSE_WRITE | IN_MOVED_TO | IN_CREATE | IN_DELETE_SELF | IN_MOVE_SELF | IN_ONLYDIR | IN_DONT_FOLLOW;

bool any_readable(std::span<const int> fds, int timeout_ms = 0) {
  std::vector<pollfd> polled;
  for (const int fd : fds) polled.push_back(pollfd{fd, POLLIN, 0});
  if (polled.empty()) return false;
  if (::poll(polled.data(), polled.size(), timeout_ms) <= 0) return false;
  return std::any_of(polled.begin(), polled.end(), [](const pollfd& p) { return (p.revents & POLLIN) != 0; });
}

std::string joined(const std::string& folder, const std::string& name) {
  return folder.empty() ? name : (fs::path{folder} / name).string();
}

}  // namespace

FolderWatcher::FolderWatcher(PlanIntake& intake, UniqueFd inotify, WatchOptions options)
    : intake_(&intake), inotify_(std::move(inotify)), options_(options) {}

Expected<FolderWatcher> FolderWatcher::open(PlanIntake& intake, WatchOptions options) {
  UniqueFd inotify{::inotify_init1(IN_NONBLOCK | IN_CLOEXEC)};
  const fs::path& inbox = intake.folders().inbox;
  if (!inotify.valid()) {
    return Error{ErrorKind::io, inbox.string(), "", "",
                 std::string{"cannot start watching: "} + std::strerror(errno)};
  }
  // Watch first, list second (in run): a file arriving in between is seen at least once.
  const int watch = ::inotify_add_watch(inotify.get(), inbox.c_str(), folder_events);
  if (watch < 0) {
    return Error{ErrorKind::io, inbox.string(), "", "",
                 std::string{"cannot watch folder: "} + std::strerror(errno)};
  }
  FolderWatcher watcher{intake, std::move(inotify), options};
  watcher.inbox_watch_ = watch;
  watcher.watched_folders_[watch] = "";
  return watcher;
}

void FolderWatcher::enqueue(const std::string& relative, Arrival arrival) {
  if (!dicom::is_candidate_name(fs::path{relative}.filename().string())) return;
  const auto [it, added] = tracked_.try_emplace(relative);
  Tracked& tracked = it->second;
  tracked.arrival = arrival;  // the latest event says how the file came to be as it is
  if (added || tracked.due) {
    tracked.due.reset();
    ready_.push_back(relative);
  }
}

void FolderWatcher::watch_subfolder(const std::string& relative) {
  const fs::path folder = intake_->folders().inbox / relative;
  const int watch = ::inotify_add_watch(inotify_.get(), folder.c_str(), folder_events);
  if (watch < 0) {
    intake_->log().line("cannot watch subfolder " + relative + ": " + std::strerror(errno));
    return;
  }
  watched_folders_[watch] = relative;
}

// A folder created or moved into a watched folder.
void FolderWatcher::handle_directory_event(const std::string& relative, Arrival arrival) {
  if (!dicom::is_candidate_name(fs::path{relative}.filename().string())) return;
  if (options_.subfolders == dicom::Subfolders::ignore) {
    if (reported_subfolders_.insert(relative).second) {
      intake_->log().line(
          "subfolder " + relative +
          " is not watched: plans in subfolders are not checked (start watch with --recursive "
          "to check them)");
    }
    return;
  }
  // Watch it first, then list it: files written before the watch existed are found by the listing.
  const fs::path folder = intake_->folders().inbox / relative;
  watch_subfolder(relative);
  const dicom::FolderListing listing = dicom::list_candidates(folder, dicom::Subfolders::include);
  for (const fs::path& sub : listing.subfolders)
    watch_subfolder(sub.lexically_relative(intake_->folders().inbox).string());
  for (const fs::path& file : listing.files) {
    enqueue(file.lexically_relative(intake_->folders().inbox).string(), arrival);
  }
}

bool FolderWatcher::drain_events() {
  alignas(inotify_event) char buffer[64 * 1024];
  for (;;) {
    const ssize_t got = ::read(inotify_.get(), buffer, sizeof buffer);
    if (got <= 0) return true;  // EAGAIN: nothing more for now
    for (ssize_t offset = 0; offset < got;) {
      const auto* event = reinterpret_cast<const inotify_event*>(buffer + offset);
      offset += static_cast<ssize_t>(sizeof(inotify_event) + event->len);
      if ((event->mask & IN_Q_OVERFLOW) != 0) {
        rescan();
        continue;
      }
      const auto folder = watched_folders_.find(event->wd);
      if ((event->mask & (IN_DELETE_SELF | IN_MOVE_SELF | IN_IGNORED)) != 0) {
        if (event->wd == inbox_watch_) return false;
        if ((event->mask & IN_IGNORED) != 0 && folder != watched_folders_.end())
          watched_folders_.erase(folder);
        continue;
      }
      if (event->len == 0 || folder == watched_folders_.end()) continue;
      const std::string relative = joined(folder->second, event->name);
      const Arrival arrival = (event->mask & IN_MOVED_TO) != 0 ? Arrival::complete : Arrival::in_place;
      if ((event->mask & IN_ISDIR) != 0) {
        handle_directory_event(relative, arrival);
      } else {
        enqueue(relative, arrival);
      }
    }
  }
}

void FolderWatcher::rescan() {
  next_rescan_ = Clock::now() + options_.rescan_interval;
  const fs::path& inbox = intake_->folders().inbox;
  const dicom::FolderListing listing = dicom::list_candidates(inbox, options_.subfolders);
  for (const fs::path& folder : listing.subfolders) {
    const std::string relative = folder.lexically_relative(inbox).string();
    if (options_.subfolders == dicom::Subfolders::ignore) {
      handle_directory_event(relative, Arrival::in_place);  // says once that it is not watched
    } else if (std::none_of(watched_folders_.begin(), watched_folders_.end(),
                            [&](const auto& watched) { return watched.second == relative; })) {
      watch_subfolder(relative);
    }
  }
  struct Entry {
    fs::file_time_type modified;
    std::string relative;
  };
  std::vector<Entry> found;
  for (const fs::path& file : listing.files) {
    std::string relative = file.lexically_relative(inbox).string();
    if (tracked_.contains(relative)) continue;
    std::error_code ec;
    found.push_back(Entry{fs::last_write_time(file, ec), std::move(relative)});
  }
  // Oldest first: a re-export of a plan is then checked after the version it replaces.
  std::sort(found.begin(), found.end(), [](const Entry& a, const Entry& b) {
    return a.modified != b.modified ? a.modified < b.modified : a.relative < b.relative;
  });
  for (const auto& entry : found) enqueue(entry.relative, Arrival::in_place);
}

void FolderWatcher::release_due(Clock::time_point now) {
  for (auto& [relative, tracked] : tracked_) {
    if (tracked.due && *tracked.due <= now) {
      tracked.due.reset();
      ready_.push_back(relative);
    }
  }
}

std::optional<FolderWatcher::Clock::time_point> FolderWatcher::next_due() const {
  std::optional<Clock::time_point> earliest;
  for (const auto& [relative, tracked] : tracked_) {
    if (tracked.due && (!earliest || *tracked.due < *earliest)) earliest = tracked.due;
  }
  return earliest;
}

void FolderWatcher::settle(const std::string& relative, const IntakeResult& result, WatchSummary& summary,
                           RunUntil until) {
  Tracked& tracked = tracked_[relative];
  switch (result.status) {
    case IntakeStatus::checked:
      ++summary.checked;
      tracked_.erase(relative);
      return;
    case IntakeStatus::duplicate:
      ++summary.duplicates;
      tracked_.erase(relative);
      return;
    case IntakeStatus::quarantined:
      ++summary.quarantined;
      tracked_.erase(relative);
      return;
    case IntakeStatus::ignored:
      tracked_.erase(relative);
      return;
    case IntakeStatus::kept_for_study:
      ++summary.kept_for_study;
      tracked_.erase(relative);
      return;
    case IntakeStatus::discarded:
      ++summary.discarded;
      tracked_.erase(relative);
      return;
    case IntakeStatus::failed:
      ++summary.failures;
      if (until == RunUntil::one_pass) {  // one attempt each: reported, not retried
        summary.not_taken.push_back(relative + ": " + result.message);
        tracked_.erase(relative);
        return;
      }
      ++tracked.attempt;
      tracked.due = result.retry_at;
      tracked.last_reason = result.message;
      return;
    case IntakeStatus::not_ready:
      tracked.due = result.retry_at;
      tracked.last_reason = result.message;
      return;
    case IntakeStatus::deferred:
      return;  // put back at the front by the caller
  }
}

void FolderWatcher::take_batch(WatchSummary& summary, RunUntil until, std::span<const int> stop_fds) {
  std::vector<std::string> names;
  std::vector<IntakeCandidate> candidates;
  while (!ready_.empty() && names.size() < options_.max_batch) {
    std::string relative = std::move(ready_.front());
    ready_.pop_front();
    const Tracked& tracked = tracked_[relative];
    candidates.push_back(
        IntakeCandidate{intake_->folders().inbox / relative, tracked.arrival, tracked.attempt});
    names.push_back(std::move(relative));
  }
  const auto results = intake_->take_batch(candidates, [stop_fds] { return any_readable(stop_fds); });
  std::vector<std::string> deferred;
  for (std::size_t i = 0; i < names.size(); ++i) {
    settle(names[i], results[i], summary, until);
    if (results[i].status == IntakeStatus::deferred) deferred.push_back(names[i]);
  }
  // Deferred files keep their place at the head of the queue (oldest first still holds).
  for (auto it = deferred.rbegin(); it != deferred.rend(); ++it) ready_.push_front(*it);
}

Expected<WatchSummary> FolderWatcher::run(RunUntil until, std::span<const int> stop_fds) {
  const fs::path& inbox = intake_->folders().inbox;
  WatchSummary summary;
  const auto pass_started = Clock::now();
  rescan();  // the backlog: files that arrived while the service was down
  for (;;) {
    // One pass takes what was there at the start; new arrivals wait for the next run.
    if (until == RunUntil::stopped && !drain_events()) {
      return Error{ErrorKind::io, inbox.string(), "", "", "the inbox folder was removed or moved; stopping"};
    }
    if (any_readable(stop_fds)) break;
    const auto now = Clock::now();
    release_due(now);
    if (until == RunUntil::stopped && now >= next_rescan_) rescan();
    if (!ready_.empty()) {
      take_batch(summary, until, stop_fds);
      continue;
    }
    const auto due = next_due();
    if (until == RunUntil::one_pass) {
      if (!due) break;
      if (now - pass_started > options_.one_pass_wait) {
        for (const auto& [relative, tracked] : tracked_)
          summary.not_taken.push_back(relative + ": " + tracked.last_reason);
        break;
      }
    }
    auto wake = until == RunUntil::stopped ? next_rescan_ : now + options_.one_pass_wait;
    if (due) wake = std::min(wake, *due);
    const auto wait_ms = std::chrono::duration_cast<std::chrono::milliseconds>(wake - Clock::now()).count();
    const int timeout_ms = static_cast<int>(std::clamp<long long>(wait_ms + 1, 0, 60000));
    std::vector<pollfd> polled;
    if (until == RunUntil::stopped) polled.push_back(pollfd{inotify_.get(), POLLIN, 0});
    for (const int fd : stop_fds) polled.push_back(pollfd{fd, POLLIN, 0});
    if (::poll(polled.data(), polled.size(), timeout_ms) < 0 && errno != EINTR) {
      return Error{ErrorKind::io, inbox.string(), "", "",
                   std::string{"cannot wait for files: "} + std::strerror(errno)};
    }
  }
  return summary;
}

}  // namespace countersign::service
