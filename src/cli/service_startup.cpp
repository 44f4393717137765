#include "service_startup.hpp"

#include <countersign/service/check_processor.hpp>

#include <chrono>

namespace countersign::cli {

Expected<OpenedService> open_checking_service(service::ServiceSettings settings, double settle_s,
                                              const CheckFlags& flags, service::ServiceLog& log) {
  OpenedService opened;
  opened.beamdata_dir = beamdata_folder(flags.beamdata);
  check::CheckOptions options;
  TRY_ASSIGN(options, check_options_from(flags));
  opened.settings_line = "beam data " + opened.beamdata_dir.string() + ", method " +
                         std::string{flag_text(flags.method)} + ", depth " +
                         std::string{engine::to_code(flags.depth)} + ", policy " + options.policy.source;
  service::PlanProcessor processor;
  TRY_ASSIGN(processor, service::load_check_processor(opened.beamdata_dir, std::move(options)));
  settings.intake.settle_time = std::chrono::milliseconds{static_cast<long long>(settle_s * 1000.0)};
  TRY_ASSIGN(opened.service, service::CheckingService::open(settings, std::move(processor), log));
  return opened;
}

std::string stopped_line(const service::WatchSummary& summary, std::optional<int> signal) {
  return std::string{"stopped"} + (signal ? " on signal " + std::to_string(*signal) : std::string{}) + ": " +
         std::to_string(summary.checked) + " checked, " + std::to_string(summary.duplicates) +
         " already checked, " + std::to_string(summary.quarantined) + " quarantined, " +
         std::to_string(summary.failures) + " failed attempts";
}

}  // namespace countersign::cli
