#include "result_sender.hpp"

#include <countersign/dicom_export/export_objects.hpp>
#include <countersign/report/html_pdf.hpp>

#include <cstdlib>
#include <ctime>
#include <system_error>

#include <stdlib.h>  // mkdtemp

namespace countersign::cli {

namespace fs = std::filesystem;

namespace {

// A private folder for the objects while they are made; the outbox keeps its own copies.
class WorkFolder {
 public:
  WorkFolder() {
    std::string pattern = (fs::temp_directory_path() / "countersign-send-XXXXXX").string();
    if (::mkdtemp(pattern.data()) != nullptr) path_ = pattern;
  }
  WorkFolder(const WorkFolder&) = delete;
  WorkFolder& operator=(const WorkFolder&) = delete;
  ~WorkFolder() {
    std::error_code ec;
    if (!path_.empty()) fs::remove_all(path_, ec);
  }
  [[nodiscard]] const fs::path& path() const { return path_; }

 private:
  fs::path path_;
};

std::string status_word(net::DeliveryStatus status) {
  switch (status) {
    case net::DeliveryStatus::delivered:
      return "delivered";
    case net::DeliveryStatus::rejected:
      return "rejected";
    case net::DeliveryStatus::queued:
      return "queued";
  }
  return "queued";
}

std::string local_time_text(net::WallClock::time_point when) {
  const std::time_t seconds = net::WallClock::to_time_t(when);
  std::tm local{};
  ::localtime_r(&seconds, &local);
  char text[32];
  std::strftime(text, sizeof text, "%Y-%m-%d %H:%M:%S", &local);
  return text;
}

}  // namespace

fs::path default_outbox_folder() {
  if (const char* state = std::getenv("XDG_STATE_HOME"); state != nullptr && *state == '/') {
    return fs::path{state} / "countersign" / "outbox";
  }
  if (const char* home = std::getenv("HOME"); home != nullptr && *home == '/') {
    return fs::path{home} / ".local" / "state" / "countersign" / "outbox";
  }
  return {};
}

Expected<ResultSender> ResultSender::open(SendSettings settings, std::optional<fs::path> chromium,
                                          std::ostream& notes) {
  if (settings.outbox.empty()) settings.outbox = default_outbox_folder();
  if (settings.outbox.empty()) {
    return Error{ErrorKind::usage, "", "--outbox", "", "no outbox folder: name one (HOME is not set)"};
  }
  // Retries within one run come quickly; entries left for later runs keep their schedule.
  auto outbox =
      net::Outbox::open(settings.outbox, net::RetryPolicy{std::chrono::seconds{2}, std::chrono::minutes{10}});
  if (!outbox) return outbox.error();
  if (!chromium) {
    notes << "countersign check: no Chromium found: sending the structured report (SR) only; the PDF record "
             "needs Chromium (Debian package chromium, or set COUNTERSIGN_CHROMIUM)\n";
  }
  return ResultSender{std::move(settings), std::move(outbox.value()), std::move(chromium)};
}

Expected<std::vector<MadeObject>> ResultSender::queue(const check::PlanCheck& check,
                                                      const report::HtmlOptions& record,
                                                      const std::optional<fs::path>& record_pdf) {
  const WorkFolder work;
  if (work.path().empty()) return Error{ErrorKind::io, "", "", "", "cannot create a temporary folder"};
  std::vector<dicom_export::ExportedObject> made;
  auto sr = dicom_export::write_result_sr(check, check.source_file, work.path() / "result-sr.dcm");
  if (!sr) return sr.error();
  made.push_back(std::move(sr.value()));
  if (record_pdf || chromium_) {
    auto pdf = record_pdf ? Expected<fs::path>{*record_pdf}
                          : report::write_pdf(check, work.path() / "record.pdf", *chromium_, record);
    if (!pdf) return pdf.error();
    auto encapsulated =
        dicom_export::write_record_pdf(check, check.source_file, *pdf, work.path() / "record-pdf.dcm");
    if (!encapsulated) return encapsulated.error();
    made.push_back(std::move(encapsulated.value()));
  }
  std::vector<MadeObject> objects;
  for (const auto& object : made) {
    const bool is_sr = object.sop_class_uid == dicom_export::comprehensive_sr_sop_class;
    const std::string description =
        std::string{is_sr ? "structured result (SR)" : "record (PDF)"} + " of plan " + check.sop_instance_uid;
    for (const auto& destination : settings_.destinations) {
      auto queued = outbox_.enqueue(object.file, destination, object.sop_instance_uid, description);
      if (!queued) return queued.error();
    }
    objects.push_back(MadeObject{check.sop_instance_uid, is_sr ? "sr" : "pdf", object.sop_instance_uid,
                                 object.series_instance_uid, object.study_instance_uid});
  }
  return objects;
}

std::vector<net::DeliveryEvent> ResultSender::deliver() {
  const net::ScuSettings scu = settings_.scu;
  const net::Sender sender = [scu](const net::Destination& destination, const fs::path& file) {
    return net::send_file(destination, file, scu);
  };
  return outbox_.deliver_until(sender, std::chrono::steady_clock::now() + settings_.wait);
}

std::string delivery_line(const net::DeliveryEvent& event, const fs::path& outbox) {
  const std::string what = event.entry.description + " to " + event.entry.destination.text();
  switch (event.status) {
    case net::DeliveryStatus::delivered:
      return "sent " + what;
    case net::DeliveryStatus::rejected:
      return "REJECTED " + what + ": " + event.detail + "; kept in " +
             (outbox / "failed" / event.entry.id).string();
    case net::DeliveryStatus::queued:
      break;
  }
  return "not yet sent " + what + ": " + event.detail + "; kept in the outbox " + outbox.string() +
         " (next attempt after " + local_time_text(event.entry.next_attempt) + ", at the next run)";
}

nlohmann::json dicom_results_to_json(const std::vector<MadeObject>& objects,
                                     const std::vector<net::DeliveryEvent>& events) {
  nlohmann::json made = nlohmann::json::array();
  for (const auto& o : objects) {
    made.push_back({{"plan_sop_instance_uid", o.plan_sop_instance_uid},
                    {"kind", o.kind},
                    {"sop_instance_uid", o.sop_instance_uid},
                    {"series_instance_uid", o.series_instance_uid},
                    {"study_instance_uid", o.study_instance_uid}});
  }
  nlohmann::json deliveries = nlohmann::json::array();
  for (const auto& e : events) {
    deliveries.push_back({{"outbox_entry", e.entry.id},
                          {"sop_instance_uid", e.entry.sop_instance_uid},
                          {"description", e.entry.description},
                          {"destination", e.entry.destination.text()},
                          {"status", status_word(e.status)},
                          {"attempts", e.entry.attempts},
                          {"detail", e.detail}});
  }
  return {{"objects", made}, {"deliveries", deliveries}};
}

}  // namespace countersign::cli
