#pragma once

// `check --send-to`: what the check command needs from the DICOM network side, as an interface, so
// that the program which checks plans does not link the network libraries (README, "Performance");
// the network program (countersign-network) provides it.

#include <countersign/check/check_plan.hpp>
#include <countersign/cli/commands.hpp>
#include <countersign/report/html_report.hpp>
#include <countersign/util/error.hpp>
#include <countersign/util/exit_code.hpp>

#include <nlohmann/json.hpp>

#include <filesystem>
#include <functional>
#include <iosfwd>
#include <memory>
#include <optional>
#include <string>
#include <vector>

namespace countersign::cli {

// The options of `check` that ask for the results in an archive, as given.
struct ArchiveRequest {
  std::vector<std::string> send_to;  // AE@HOST:PORT, one or more
  std::string outbox;                // empty: the default outbox
  std::string calling_ae;
  int wait_s = 30;
};

class ArchiveDelivery {
 public:
  ArchiveDelivery() = default;
  ArchiveDelivery(const ArchiveDelivery&) = delete;
  ArchiveDelivery& operator=(const ArchiveDelivery&) = delete;
  ArchiveDelivery(ArchiveDelivery&&) = delete;
  ArchiveDelivery& operator=(ArchiveDelivery&&) = delete;
  virtual ~ArchiveDelivery() = default;

  // Makes the DICOM objects of one check and queues them; `record_pdf` is the printed record when
  // there is one. An error means they could not be made or queued (the check itself stands).
  [[nodiscard]] virtual Expected<void> queue(const check::PlanCheck& check, const report::HtmlOptions& record,
                                             const std::optional<std::filesystem::path>& record_pdf) = 0;
  // Delivers what is queued, one line per event to `out`; record_not_written when one was rejected.
  [[nodiscard]] virtual ExitCode deliver(std::ostream& out) = 0;
  // The objects made and the deliveries (the `dicom_results` JSON key).
  [[nodiscard]] virtual nlohmann::json to_json() const = 0;
};

}  // namespace countersign::cli
