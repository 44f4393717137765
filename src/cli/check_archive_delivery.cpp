// The archive side of `check --send-to` (ArchiveDelivery), over the result sender and its durable
// outbox; linked into the network program only.

#include <countersign/cli/archive_delivery.hpp>
#include <countersign/report/html_pdf.hpp>

#include "check_archive_delivery.hpp"
#include "result_sender.hpp"

#include <chrono>
#include <ostream>
#include <utility>

namespace countersign::cli {

namespace {

class OutboxDelivery final : public ArchiveDelivery {
 public:
  explicit OutboxDelivery(ResultSender sender) : sender_(std::move(sender)) {}

  Expected<void> queue(const check::PlanCheck& check, const report::HtmlOptions& record,
                       const std::optional<std::filesystem::path>& record_pdf) override {
    auto queued = sender_.queue(check, record, record_pdf);
    if (!queued) return queued.error();
    objects_.insert(objects_.end(), queued->begin(), queued->end());
    return {};
  }

  ExitCode deliver(std::ostream& out) override {
    events_ = sender_.deliver();
    ExitCode code = ExitCode::all_within_tolerance;
    for (const auto& event : events_) {
      out << delivery_line(event, sender_.outbox_folder()) << "\n";
      if (event.status == net::DeliveryStatus::rejected) code = ExitCode::record_not_written;
    }
    return code;
  }

  [[nodiscard]] nlohmann::json to_json() const override { return dicom_results_to_json(objects_, events_); }

 private:
  ResultSender sender_;
  std::vector<MadeObject> objects_;
  std::vector<net::DeliveryEvent> events_;
};

}  // namespace

Expected<std::unique_ptr<ArchiveDelivery>> open_outbox_delivery(const ArchiveRequest& request,
                                                                std::ostream& notes) {
  SendSettings settings;
  for (const auto& text : request.send_to) {
    auto destination = net::Destination::parse(text);
    if (!destination) return destination.error();
    settings.destinations.push_back(destination.value());
  }
  if (!net::is_valid_ae_title(request.calling_ae)) {
    return Error{ErrorKind::usage, "", "--calling-ae", "",
                 "\"" + request.calling_ae + "\" is not a valid AE title (1 to 16 printable characters)"};
  }
  settings.outbox = request.outbox;
  settings.scu.calling_ae_title = request.calling_ae;
  settings.wait = std::chrono::seconds{request.wait_s};
  auto sender = ResultSender::open(std::move(settings), report::find_chromium(), notes);
  if (!sender) return sender.error();
  return std::unique_ptr<ArchiveDelivery>{std::make_unique<OutboxDelivery>(std::move(sender.value()))};
}

}  // namespace countersign::cli
