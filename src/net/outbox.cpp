#include <countersign/net/outbox.hpp>

#include "durable_files.hpp"

#include <fcntl.h>
#include <sys/file.h>
#include <unistd.h>

#include <algorithm>
#include <cstdio>
#include <ctime>
#include <fstream>
#include <map>
#include <optional>
#include <random>
#include <sstream>
#include <thread>

namespace countersign::net {

namespace fs = std::filesystem;

namespace {

constexpr const char* object_name = "object.dcm";
constexpr const char* entry_name = "entry";

std::int64_t to_ms(WallClock::time_point t) {
  return std::chrono::duration_cast<std::chrono::milliseconds>(t.time_since_epoch()).count();
}
WallClock::time_point from_ms(std::int64_t ms) {
  return WallClock::time_point{
      std::chrono::duration_cast<WallClock::duration>(std::chrono::milliseconds{ms})};
}

std::string one_line(std::string text) {
  std::replace(text.begin(), text.end(), '\n', ' ');
  std::replace(text.begin(), text.end(), '\r', ' ');
  return text;
}

std::string serialise(const OutboxEntry& entry,
                      std::optional<WallClock::time_point> delivered_at = std::nullopt) {
  std::ostringstream out;
  out << "destination=" << entry.destination.text() << "\n"
      << "sop_instance_uid=" << one_line(entry.sop_instance_uid) << "\n"
      << "description=" << one_line(entry.description) << "\n"
      << "queued_at_ms=" << to_ms(entry.queued_at) << "\n"
      << "attempts=" << entry.attempts << "\n"
      << "next_attempt_ms=" << to_ms(entry.next_attempt) << "\n"
      << "last_error=" << one_line(entry.last_error) << "\n";
  if (delivered_at) out << "delivered_at_ms=" << to_ms(*delivered_at) << "\n";
  return out.str();
}

std::optional<OutboxEntry> parse_entry(const fs::path& dir) {
  std::ifstream in(dir / entry_name);
  if (!in) return std::nullopt;
  std::map<std::string, std::string> values;
  std::string line;
  while (std::getline(in, line)) {
    const auto equals = line.find('=');
    if (equals != std::string::npos) values[line.substr(0, equals)] = line.substr(equals + 1);
  }
  auto destination = Destination::parse(values["destination"]);
  if (!destination) return std::nullopt;
  OutboxEntry entry;
  entry.id = dir.filename().string();
  entry.destination = destination.value();
  entry.sop_instance_uid = values["sop_instance_uid"];
  entry.description = values["description"];
  entry.last_error = values["last_error"];
  try {
    entry.queued_at = from_ms(std::stoll(values["queued_at_ms"]));
    entry.attempts = std::stoi(values["attempts"]);
    entry.next_attempt = from_ms(std::stoll(values["next_attempt_ms"]));
  } catch (const std::exception&) {
    return std::nullopt;
  }
  return entry;
}

// "<UTC yyyymmddThhmmss.mmm>-<8 hex>": sorts by queue time; unique enough with the random part.
std::string new_entry_id(WallClock::time_point now) {
  const std::time_t seconds = WallClock::to_time_t(now);
  std::tm utc{};
  ::gmtime_r(&seconds, &utc);
  char stamp[32];
  std::strftime(stamp, sizeof stamp, "%Y%m%dT%H%M%S", &utc);
  std::random_device random;
  char suffix[32];
  std::snprintf(suffix, sizeof suffix, ".%03d-%08x", static_cast<int>(to_ms(now) % 1000), random());
  return std::string{stamp} + suffix;
}

// An exclusive, non-blocking lock on an entry's object for as long as it lives.
class EntryLock {
 public:
  explicit EntryLock(const fs::path& object) : fd_(::open(object.c_str(), O_RDONLY | O_CLOEXEC)) {
    locked_ = fd_ >= 0 && ::flock(fd_, LOCK_EX | LOCK_NB) == 0;
  }
  EntryLock(const EntryLock&) = delete;
  EntryLock& operator=(const EntryLock&) = delete;
  ~EntryLock() {
    if (fd_ >= 0) ::close(fd_);
  }
  [[nodiscard]] bool locked() const { return locked_; }

 private:
  int fd_;
  bool locked_ = false;
};

Error io(const fs::path& path, const std::string& what) {
  return Error{ErrorKind::io, path.string(), "", "", what};
}

}  // namespace

fs::path OutboxEntry::object_file(const fs::path& outbox) const {
  return outbox / "queue" / id / object_name;
}

Expected<Outbox> Outbox::open(const fs::path& folder, RetryPolicy policy) {
  for (const char* sub : {"queue", "sent", "failed"}) {
    if (auto made = detail::make_private_directory(folder / sub); !made) return made.error();
  }
  std::error_code ec;
  for (const auto& item : fs::directory_iterator{folder / "queue", ec}) {
    const std::string name = item.path().filename().string();
    if (!name.empty() && name.front() == '.')
      fs::remove_all(item.path(), ec);  // an enqueue that never finished
  }
  if (ec) return io(folder, "cannot read the outbox: " + ec.message());
  return Outbox{folder, policy};
}

Expected<OutboxEntry> Outbox::enqueue(const fs::path& object_file, const Destination& destination,
                                      const std::string& sop_instance_uid, const std::string& description) {
  OutboxEntry entry;
  entry.queued_at = WallClock::now();
  entry.next_attempt = entry.queued_at;
  entry.id = new_entry_id(entry.queued_at);
  entry.destination = destination;
  entry.sop_instance_uid = sop_instance_uid;
  entry.description = description;
  const fs::path staging = folder_ / "queue" / ("." + entry.id);
  const fs::path final_dir = folder_ / "queue" / entry.id;
  const auto give_up = [&](const Error& error) {
    std::error_code ec;
    fs::remove_all(staging, ec);
    return error;
  };
  if (auto made = detail::make_private_directory(staging); !made) return give_up(made.error());
  if (auto copied = detail::copy_synced(object_file, staging / object_name); !copied)
    return give_up(copied.error());
  if (auto written = detail::write_synced(staging / entry_name, serialise(entry)); !written) {
    return give_up(written.error());
  }
  if (auto synced = detail::sync_directory(staging); !synced) return give_up(synced.error());
  std::error_code ec;
  fs::rename(staging, final_dir, ec);
  if (ec) return give_up(io(final_dir, "cannot queue the object: " + ec.message()));
  if (auto synced = detail::sync_directory(folder_ / "queue"); !synced) return synced.error();
  return entry;
}

std::vector<OutboxEntry> Outbox::pending() const {
  std::vector<OutboxEntry> entries;
  std::error_code ec;
  for (const auto& item : fs::directory_iterator{folder_ / "queue", ec}) {
    const std::string name = item.path().filename().string();
    if (name.empty() || name.front() == '.') continue;
    if (auto entry = parse_entry(item.path())) entries.push_back(std::move(*entry));
  }
  std::sort(entries.begin(), entries.end(), [](const auto& a, const auto& b) { return a.id < b.id; });
  return entries;
}

DeliveryEvent Outbox::attempt(OutboxEntry entry, const Sender& sender) {
  const fs::path dir = folder_ / "queue" / entry.id;
  const SendOutcome sent = sender(entry.destination, dir / object_name);
  ++entry.attempts;
  entry.last_error = sent.result == SendResult::delivered ? "" : sent.detail;
  DeliveryEvent event{entry, DeliveryStatus::queued, sent.detail};
  std::error_code ec;
  if (sent.result == SendResult::delivered) {
    // The record of the delivery first, then the object goes: a crash in between sends nothing twice.
    const fs::path done = folder_ / "sent" / entry.id;
    fs::rename(dir, done, ec);
    if (!ec) {
      [[maybe_unused]] const auto noted =
          detail::replace_atomically(done / entry_name, serialise(entry, WallClock::now()));
      fs::remove(done / object_name, ec);
      event.status = DeliveryStatus::delivered;
    }
    return event;
  }
  if (sent.result == SendResult::rejected) {
    fs::rename(dir, folder_ / "failed" / entry.id, ec);
    if (!ec) {
      [[maybe_unused]] const auto noted =
          detail::replace_atomically(folder_ / "failed" / entry.id / entry_name, serialise(entry));
      event.status = DeliveryStatus::rejected;
      return event;
    }
  }
  const auto doublings = std::min(entry.attempts - 1, 20);
  const auto delay = std::min(policy_.max_delay, policy_.first_delay * (std::int64_t{1} << doublings));
  entry.next_attempt = WallClock::now() + delay;
  event.entry = entry;
  [[maybe_unused]] const auto noted = detail::replace_atomically(dir / entry_name, serialise(entry));
  return event;
}

std::vector<DeliveryEvent> Outbox::deliver_due(const Sender& sender, WallClock::time_point now) {
  std::vector<DeliveryEvent> events;
  for (OutboxEntry& entry : pending()) {
    if (entry.next_attempt > now) continue;
    const EntryLock lock{entry.object_file(folder_)};
    if (!lock.locked()) continue;  // another process is sending it (or it just left the queue)
    // Read again under the lock: another process may have sent it since the listing.
    auto current = parse_entry(folder_ / "queue" / entry.id);
    if (!current || current->next_attempt > now) continue;
    events.push_back(attempt(std::move(*current), sender));
  }
  return events;
}

std::vector<DeliveryEvent> Outbox::deliver_until(const Sender& sender,
                                                 std::chrono::steady_clock::time_point deadline,
                                                 const std::function<bool()>& stop) {
  std::vector<DeliveryEvent> events;
  for (;;) {
    auto round = deliver_due(sender);
    events.insert(events.end(), std::make_move_iterator(round.begin()), std::make_move_iterator(round.end()));
    const auto waiting = pending();
    if (waiting.empty()) return events;
    const auto next = std::min_element(waiting.begin(), waiting.end(), [](const auto& a, const auto& b) {
                        return a.next_attempt < b.next_attempt;
                      })->next_attempt;
    const auto wait =
        std::chrono::duration_cast<std::chrono::steady_clock::duration>(next - WallClock::now());
    if (std::chrono::steady_clock::now() + wait > deadline) return events;
    const auto until = std::chrono::steady_clock::now() + wait;
    while (std::chrono::steady_clock::now() < until) {
      if (stop && stop()) return events;
      std::this_thread::sleep_for(std::min<std::chrono::steady_clock::duration>(
          std::chrono::milliseconds{100}, until - std::chrono::steady_clock::now()));
    }
  }
}

}  // namespace countersign::net
