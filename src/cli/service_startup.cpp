#include "service_startup.hpp"

#include <countersign/service/check_processor.hpp>

#include <chrono>

namespace countersign::cli {

namespace fs = std::filesystem;

void add_intake_options(CLI::App& command, IntakeFlags& flags) {
  command
      .add_option("--quiet-seconds,--settle-seconds", flags.quiet_s,
                  "a file written in the inbox in place (not moved in whole) is read only after it has been "
                  "unchanged this long (default 2; --settle-seconds is the older name)")
      ->check(CLI::Range(0.0, 3600.0));
  command
      .add_option("--retry-limit", flags.retry_limit,
                  "a file that cannot be read is retried with growing waits (1 s, 2 s, 4 s ...) and moved to "
                  "quarantine with the reason at this attempt (default 5)")
      ->check(CLI::Range(1, 1000));
}

service::IntakeOptions intake_options_from(const IntakeFlags& flags) {
  service::IntakeOptions options;
  options.quiet_period = std::chrono::milliseconds{static_cast<long long>(flags.quiet_s * 1000.0)};
  options.read_attempts = flags.retry_limit;
  return options;
}

Expected<OpenedService> open_checking_service(service::ServiceSettings settings, const CheckFlags& flags,
                                              service::ServiceLog& log) {
  OpenedService opened;
  opened.beamdata_dir = beamdata_folder(flags.beamdata);
  check::CheckOptions options;
  TRY_ASSIGN(options, check_options_from(flags));
  opened.settings_line = "beam data " + opened.beamdata_dir.string() + ", method " +
                         std::string{flag_text(flags.method)} + ", depth " +
                         std::string{engine::to_code(flags.depth)} + ", policy " + options.policy.source;
  service::PlanProcessor processor;
  TRY_ASSIGN(processor, service::load_check_processor(opened.beamdata_dir, std::move(options)));
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
