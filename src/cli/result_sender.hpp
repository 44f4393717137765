#pragma once

// `check --send-to`: the result of each check as DICOM objects (the structured report always, the
// Encapsulated PDF record when Chromium is there), queued in the durable outbox for every
// destination, then delivered while `check` runs; what cannot be delivered in time stays queued for
// the next run. The outbox and the object writers are the library's; this only drives them.

#include <countersign/check/check_plan.hpp>
#include <countersign/net/outbox.hpp>
#include <countersign/report/html_report.hpp>
#include <countersign/util/error.hpp>

#include <nlohmann/json.hpp>

#include <chrono>
#include <filesystem>
#include <optional>
#include <ostream>
#include <string>
#include <vector>

namespace countersign::cli {

struct SendSettings {
  std::vector<net::Destination> destinations;
  std::filesystem::path outbox;  // empty: the default (default_outbox_folder())
  net::ScuSettings scu;
  std::chrono::seconds wait{30};  // how long `check` keeps trying before leaving the rest queued
};

// $XDG_STATE_HOME/countersign/outbox, else ~/.local/state/countersign/outbox; empty when neither is known.
[[nodiscard]] std::filesystem::path default_outbox_folder();

// One object made for the archive.
struct MadeObject {
  std::string plan_sop_instance_uid;
  std::string kind;  // "sr" or "pdf"
  std::string sop_instance_uid;
  std::string series_instance_uid;
  std::string study_instance_uid;
};

class ResultSender {
 public:
  // Opens the outbox; `chromium` empty means the SR alone is sent (and `notes` says why, once).
  [[nodiscard]] static Expected<ResultSender> open(SendSettings settings,
                                                   std::optional<std::filesystem::path> chromium,
                                                   std::ostream& notes);

  // Makes the objects of one check and queues each for every destination; `record_pdf`, when
  // given, is the record already printed (else it is printed here when Chromium is there). An error
  // means an object could not be made or queued (the check itself stands).
  [[nodiscard]] Expected<std::vector<MadeObject>> queue(
      const check::PlanCheck& check, const report::HtmlOptions& record,
      const std::optional<std::filesystem::path>& record_pdf = {});

  // Delivers what is queued (this run's objects and any left from earlier runs) for up to the wait.
  [[nodiscard]] std::vector<net::DeliveryEvent> deliver();

  [[nodiscard]] const std::filesystem::path& outbox_folder() const { return outbox_.folder(); }

 private:
  ResultSender(SendSettings settings, net::Outbox outbox, std::optional<std::filesystem::path> chromium)
      : settings_(std::move(settings)), outbox_(std::move(outbox)), chromium_(std::move(chromium)) {}

  SendSettings settings_;
  net::Outbox outbox_;
  std::optional<std::filesystem::path> chromium_;
};

// One line per delivery event, for people.
[[nodiscard]] std::string delivery_line(const net::DeliveryEvent& event, const std::filesystem::path& outbox);

// The JSON of the objects made and of the deliveries (keys documented in the README).
[[nodiscard]] nlohmann::json dicom_results_to_json(const std::vector<MadeObject>& objects,
                                                   const std::vector<net::DeliveryEvent>& events);

}  // namespace countersign::cli
