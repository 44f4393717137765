#pragma once

// What a service does after a check is recorded: an alert for a plan outside tolerance or not
// checked (`--on-flag`), and the results sent to the archive (`--send-to`). Each is first a marker
// file written with the check's own files, before the batch's commit:
//
//   RESULTS/followups/alert/<check id>   raise the alert of this check
//   RESULTS/followups/send/<check id>    queue this check's objects in the outbox
//   RESULTS/followups/failed/            markers of follow-ups given up, for a person to see
//
// so that a crash between the commit and the follow-up loses nothing: at the next start the markers
// left are resumed (those of a batch that was never recorded are removed). Checking never waits for
// a follow-up: alerts and deliveries run on threads of their own.

#include <countersign/service/flag_alerts.hpp>
#include <countersign/service/plan_intake.hpp>
#include <countersign/service/result_delivery.hpp>
#include <countersign/service/service_log.hpp>
#include <countersign/store/store.hpp>

#include <filesystem>
#include <memory>
#include <optional>
#include <string>
#include <utility>
#include <vector>

namespace countersign::service {

struct FollowUpSettings {
  std::optional<AlertSettings> alerts;       // --on-flag
  std::optional<DeliverySettings> delivery;  // --send-to
  [[nodiscard]] bool any() const { return alerts.has_value() || delivery.has_value(); }
};

class ServiceFollowUps final : public FollowUpSink {
 public:
  // Starts the alert and delivery threads asked for in `settings`.
  [[nodiscard]] static Expected<std::unique_ptr<ServiceFollowUps>> start(FollowUpSettings settings,
                                                                         const std::filesystem::path& results,
                                                                         ServiceLog& log);
  ServiceFollowUps(const ServiceFollowUps&) = delete;
  ServiceFollowUps& operator=(const ServiceFollowUps&) = delete;
  ~ServiceFollowUps() override;

  [[nodiscard]] std::vector<std::pair<std::filesystem::path, std::string>> markers(
      const store::NewCheck& check) override;
  void recorded(const std::vector<store::CheckRecord>& checks) override;

  // Waits (up to `deadline`) for the alerts and deliveries in hand: a one-pass run ends after them;
  // what is left keeps its marker or outbox entry for the next run.
  void wait_idle(std::chrono::steady_clock::time_point deadline);

  // Resumes the markers an earlier run left (their checks read from `store`); returns how many.
  std::size_t resume(store::Store& store);

  [[nodiscard]] std::filesystem::path folder() const { return results_ / "followups"; }

 private:
  ServiceFollowUps(std::filesystem::path results, ServiceLog& log)
      : results_(std::move(results)), log_(log) {}
  [[nodiscard]] std::filesystem::path alert_marker(std::int64_t check_id) const;
  [[nodiscard]] std::filesystem::path send_marker(std::int64_t check_id) const;
  void follow(const store::CheckRecord& check, bool alert, bool send);

  std::filesystem::path results_;
  ServiceLog& log_;
  std::unique_ptr<FlagAlerts> alerts_;
  std::unique_ptr<ResultDelivery> delivery_;
};

}  // namespace countersign::service
