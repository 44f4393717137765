#include "service_startup.hpp"

#include "shared_options.hpp"

#include <countersign/service/check_processor.hpp>

#include <chrono>

namespace countersign::cli {

namespace fs = std::filesystem;

Expected<OpenedService> open_checking_service(service::ServiceSettings settings, double settle_s,
                                              const std::string& beamdata_option,
                                              const std::string& policy_option, service::ServiceLog& log) {
  OpenedService opened;
  opened.beamdata_dir = beamdata_folder(beamdata_option);
  auto processor = service::load_check_processor(
      opened.beamdata_dir, policy_option.empty() ? std::nullopt : std::optional<fs::path>{policy_option});
  if (!processor) return processor.error();
  settings.intake.settle_time = std::chrono::milliseconds{static_cast<long long>(settle_s * 1000.0)};
  auto service = service::CheckingService::open(settings, std::move(processor.value()), log);
  if (!service) return service.error();
  opened.service = std::move(service.value());
  return opened;
}

std::string stopped_line(const service::WatchSummary& summary, std::optional<int> signal) {
  return std::string{"stopped"} + (signal ? " on signal " + std::to_string(*signal) : std::string{}) + ": " +
         std::to_string(summary.checked) + " checked, " + std::to_string(summary.duplicates) +
         " already checked, " + std::to_string(summary.quarantined) + " quarantined, " +
         std::to_string(summary.failures) + " failed attempts";
}

}  // namespace countersign::cli
