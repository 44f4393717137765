#include <countersign/service/folder_watcher.hpp>

#include <poll.h>
#include <sys/inotify.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <cstring>
#include <utility>
#include <vector>

namespace countersign::service {

namespace fs = std::filesystem;

namespace {

constexpr std::uint32_t watched_events = IN_CLOSE_WRITE | IN_MOVED_TO | IN_DELETE_SELF | IN_MOVE_SELF;

bool any_readable(std::span<const int> fds) {
  std::vector<pollfd> polled;
  for (const int fd : fds) polled.push_back(pollfd{fd, POLLIN, 0});
  if (polled.empty()) return false;
  if (::poll(polled.data(), polled.size(), 0) <= 0) return false;
  return std::any_of(polled.begin(), polled.end(), [](const pollfd& p) { return (p.revents & POLLIN) != 0; });
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
  if (::inotify_add_watch(inotify.get(), inbox.c_str(), watched_events | IN_ONLYDIR) < 0) {
    return Error{ErrorKind::io, inbox.string(), "", "",
                 std::string{"cannot watch folder: "} + std::strerror(errno)};
  }
  return FolderWatcher{intake, std::move(inotify), options};
}

void FolderWatcher::enqueue(const std::string& name) {
  if (!is_candidate_name(name)) return;
  waiting_.erase(name);
  if (ready_names_.insert(name).second) ready_.push_back(name);
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
      } else if ((event->mask & (IN_DELETE_SELF | IN_MOVE_SELF | IN_IGNORED)) != 0) {
        return false;
      } else if (event->len > 0 && (event->mask & IN_ISDIR) == 0) {
        enqueue(event->name);
      }
    }
  }
}

void FolderWatcher::rescan() {
  next_rescan_ = Clock::now() + options_.rescan_interval;
  struct Entry {
    fs::file_time_type modified;
    std::string name;
  };
  std::vector<Entry> found;
  std::error_code ec;
  for (fs::directory_iterator it{intake_->folders().inbox, ec}, end; !ec && it != end; it.increment(ec)) {
    std::error_code entry_ec;
    if (!it->is_regular_file(entry_ec)) continue;
    std::string name = it->path().filename().string();
    if (!is_candidate_name(name) || waiting_.contains(name) || ready_names_.contains(name)) continue;
    found.push_back(Entry{it->last_write_time(entry_ec), std::move(name)});
  }
  // Oldest first: a re-export of a plan is then checked after the version it replaces.
  std::sort(found.begin(), found.end(), [](const Entry& a, const Entry& b) {
    return a.modified != b.modified ? a.modified < b.modified : a.name < b.name;
  });
  for (const auto& entry : found) enqueue(entry.name);
}

void FolderWatcher::take_one(WatchSummary& summary) {
  const std::string name = ready_.front();
  ready_.pop_front();
  ready_names_.erase(name);
  const IntakeResult result = intake_->take(intake_->folders().inbox / name);
  switch (result.status) {
    case IntakeStatus::checked:
      ++summary.checked;
      break;
    case IntakeStatus::duplicate:
      ++summary.duplicates;
      break;
    case IntakeStatus::quarantined:
      ++summary.quarantined;
      break;
    case IntakeStatus::failed:
      ++summary.failures;
      waiting_[name] = result.retry_at;
      break;
    case IntakeStatus::not_ready:
      waiting_[name] = result.retry_at;
      break;
    case IntakeStatus::ignored:
      break;
  }
}

Expected<WatchSummary> FolderWatcher::run(RunUntil until, std::span<const int> stop_fds) {
  const fs::path& inbox = intake_->folders().inbox;
  const auto inbox_gone = [&] {
    return Error{ErrorKind::io, inbox.string(), "", "", "the inbox folder was removed or moved; stopping"};
  };
  WatchSummary summary;
  rescan();  // the backlog: files that arrived while the service was down
  for (;;) {
    if (!drain_events()) return inbox_gone();
    if (any_readable(stop_fds)) break;
    const auto now = Clock::now();
    for (auto it = waiting_.begin(); it != waiting_.end();) {
      if (it->second <= now) {
        const std::string name = it->first;
        it = waiting_.erase(it);
        if (ready_names_.insert(name).second) ready_.push_back(name);
      } else {
        ++it;
      }
    }
    if (now >= next_rescan_) rescan();
    if (!ready_.empty()) {
      take_one(summary);
      continue;
    }
    if (until == RunUntil::idle && waiting_.empty()) break;

    auto wake = next_rescan_;
    for (const auto& [name, due] : waiting_) wake = std::min(wake, due);
    const auto wait_ms = std::chrono::duration_cast<std::chrono::milliseconds>(wake - Clock::now()).count();
    const int timeout_ms = static_cast<int>(std::clamp<long long>(wait_ms + 1, 0, 60000));
    std::vector<pollfd> polled{pollfd{inotify_.get(), POLLIN, 0}};
    for (const int fd : stop_fds) polled.push_back(pollfd{fd, POLLIN, 0});
    if (::poll(polled.data(), polled.size(), timeout_ms) < 0 && errno != EINTR) {
      return Error{ErrorKind::io, inbox.string(), "", "",
                   std::string{"cannot wait for files: "} + std::strerror(errno)};
    }
  }
  return summary;
}

}  // namespace countersign::service
