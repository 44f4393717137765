#pragma once

// `--send-to AE@HOST:PORT` for the services: after a check is recorded, its structured result (and
// its record as an Encapsulated PDF when Chromium is there) go into the durable outbox, one entry
// per destination, and a thread of their own delivers them, retrying with a growing delay while the
// service runs; what is undelivered when it stops stays in the outbox and goes at the next start.
// An archive that is down never holds up checking.

#include <countersign/net/outbox.hpp>
#include <countersign/service/service_log.hpp>
#include <countersign/store/records.hpp>
#include <countersign/util/error.hpp>

#include <atomic>
#include <chrono>
#include <condition_variable>
#include <filesystem>
#include <memory>
#include <mutex>
#include <optional>
#include <thread>
#include <vector>

namespace countersign::service {

struct DeliverySettings {
  std::vector<net::Destination> destinations;  // empty: nothing is sent
  std::filesystem::path outbox;                // empty: RESULTS/outbox
  net::ScuSettings scu;
  std::optional<std::filesystem::path> chromium;  // for the PDF record; absent: the SR alone
  net::RetryPolicy retry{std::chrono::seconds{2}, std::chrono::minutes{10}};
};

// The results of one recorded check to send.
struct DeliveryJob {
  store::CheckRecord check;
  std::filesystem::path marker;  // removed once its objects are in the outbox
};

class ResultDelivery {
 public:
  // Opens the outbox (created 0750) and starts the delivering thread; `results` holds the records,
  // `work` is a private folder on the same file system for PDFs being made.
  [[nodiscard]] static Expected<std::unique_ptr<ResultDelivery>> start(DeliverySettings settings,
                                                                       std::filesystem::path results,
                                                                       std::filesystem::path work,
                                                                       std::filesystem::path failed_folder,
                                                                       ServiceLog& log);
  ResultDelivery(const ResultDelivery&) = delete;
  ResultDelivery& operator=(const ResultDelivery&) = delete;
  ~ResultDelivery();  // finishes the object in hand, then stops

  void add(DeliveryJob job);
  // Waits until the jobs are queued and no outbox entry is due before `deadline`.
  void wait_idle(std::chrono::steady_clock::time_point deadline);
  [[nodiscard]] const std::filesystem::path& outbox_folder() const { return outbox_.folder(); }

 private:
  ResultDelivery(DeliverySettings settings, net::Outbox outbox, std::filesystem::path results,
                 std::filesystem::path work, std::filesystem::path failed_folder, ServiceLog& log);
  void loop();
  void queue_objects(const DeliveryJob& job);
  void deliver_due();
  [[nodiscard]] std::chrono::steady_clock::time_point next_wake() const;

  DeliverySettings settings_;
  net::Outbox outbox_;
  std::filesystem::path results_;
  std::filesystem::path work_;
  std::filesystem::path failed_folder_;
  ServiceLog& log_;
  std::mutex mutex_;
  std::condition_variable wake_;
  std::vector<DeliveryJob> jobs_;
  bool busy_ = false;  // jobs taken, not yet queued and delivered once
  std::atomic<bool> stopping_{false};
  std::thread thread_;
};

}  // namespace countersign::service
