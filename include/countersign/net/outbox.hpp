#pragma once

// A durable queue of DICOM objects to send: nothing is lost when a destination is down, and it
// survives restarts. Each entry is one object for one destination, in a folder of its own:
//
//   OUTBOX/queue/<id>/object.dcm, entry    waiting; `entry` holds the destination and the attempts
//   OUTBOX/sent/<id>/entry                 delivered (the object itself is removed)
//   OUTBOX/failed/<id>/object.dcm, entry   rejected by the destination for good; kept for a person
//
// An entry is staged in a hidden folder (object and entry written and fsync'ed) and renamed into
// queue/ in one step, so it exists whole or not at all. Ids sort by the time they were queued.
// Several processes may share one outbox: an entry being sent is locked (flock on its object).
// Failed attempts are retried with a delay that doubles each time, up to a maximum.

#include <countersign/net/destination.hpp>
#include <countersign/net/store_scu.hpp>
#include <countersign/util/error.hpp>

#include <chrono>
#include <filesystem>
#include <functional>
#include <string>
#include <vector>

namespace countersign::net {

using WallClock = std::chrono::system_clock;

struct RetryPolicy {
  std::chrono::milliseconds first_delay{5000};  // after the first failed attempt; doubles each time
  std::chrono::milliseconds max_delay{3600000};
};

struct OutboxEntry {
  std::string id;
  Destination destination;
  std::string description;  // e.g. "structured result of plan <UID>", for logs
  std::string sop_instance_uid;
  int attempts = 0;
  WallClock::time_point queued_at{};
  WallClock::time_point next_attempt{};
  std::string last_error;
  [[nodiscard]] std::filesystem::path object_file(const std::filesystem::path& outbox) const;
};

enum class DeliveryStatus { delivered, queued, rejected };

// What one attempt did to one entry.
struct DeliveryEvent {
  OutboxEntry entry;
  DeliveryStatus status = DeliveryStatus::queued;
  std::string detail;
};

// Sends one object file to one destination (send_file in production, a stand-in in tests).
using Sender = std::function<SendOutcome(const Destination&, const std::filesystem::path&)>;

class Outbox {
 public:
  // Creates the folders (0750) if needed and removes staging folders left by an interrupted enqueue
  // (never acknowledged to anyone). Errors are of kind io and name the folder.
  [[nodiscard]] static Expected<Outbox> open(const std::filesystem::path& folder, RetryPolicy policy = {});

  // Copies `object_file` into the queue for `destination`. Once this returns, the object is
  // delivered or kept, whatever happens to the process.
  [[nodiscard]] Expected<OutboxEntry> enqueue(const std::filesystem::path& object_file,
                                              const Destination& destination,
                                              const std::string& sop_instance_uid,
                                              const std::string& description);

  // Tries each entry that is due at `now` once (oldest first); entries another process is sending
  // are left alone.
  std::vector<DeliveryEvent> deliver_due(const Sender& sender, WallClock::time_point now = WallClock::now());

  // Delivers until the queue is empty or `deadline` passes, sleeping until the next entry is due in
  // between; `stop` (if given) is asked every 100 ms.
  std::vector<DeliveryEvent> deliver_until(const Sender& sender,
                                           std::chrono::steady_clock::time_point deadline,
                                           const std::function<bool()>& stop = {});

  // Entries waiting in the queue, oldest first.
  [[nodiscard]] std::vector<OutboxEntry> pending() const;
  [[nodiscard]] const std::filesystem::path& folder() const { return folder_; }

 private:
  Outbox(std::filesystem::path folder, RetryPolicy policy) : folder_(std::move(folder)), policy_(policy) {}
  DeliveryEvent attempt(OutboxEntry entry, const Sender& sender);

  std::filesystem::path folder_;
  RetryPolicy policy_;
};

}  // namespace countersign::net
