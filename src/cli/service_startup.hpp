#pragma once

// What `watch` and `receive` share: the options of the intake, loading the beam data and policy
// once, opening the checking service, and the log line written when a service stops.

#include <countersign/service/checking_service.hpp>
#include <countersign/service/folder_watcher.hpp>
#include <countersign/service/service_log.hpp>
#include <countersign/util/error.hpp>

#include <CLI/CLI.hpp>
#include "shared_options.hpp"

#include <filesystem>
#include <memory>
#include <optional>
#include <string>
#include <vector>

namespace countersign::cli {

// The command-line options of the intake both services share.
struct IntakeFlags {
  double quiet_s = 2.0;      // --quiet-seconds (older name: --settle-seconds)
  int retry_limit = 5;       // --retry-limit
  int study_wait_s = 120;    // --study-wait
  int study_keep_days = 30;  // --study-keep-days
};
void add_intake_options(CLI::App& command, IntakeFlags& flags);
[[nodiscard]] service::IntakeOptions intake_options_from(const IntakeFlags& flags);
[[nodiscard]] service::StudyStoreSettings study_settings_from(const IntakeFlags& flags);

// The options of what follows a check (alerts, sending to the archive) and of the history store,
// shared by both services.
struct FollowUpFlags {
  std::string db;                    // --db FILE|postgresql://…
  std::string on_flag;               // --on-flag COMMAND
  std::vector<std::string> send_to;  // --send-to AE@HOST:PORT
  std::string outbox;                // --outbox DIR (default RESULTS/outbox)
  std::string calling_ae = "COUNTERSIGN";
};
void add_follow_up_options(CLI::App& command, FollowUpFlags& flags);
// The follow-ups and the store of `settings` from the flags; errors (kind usage) name the option.
[[nodiscard]] Expected<bool> apply_follow_up_options(const FollowUpFlags& flags,
                                                     service::ServiceSettings& settings);

struct OpenedService {
  std::filesystem::path beamdata_dir;  // the library in use, for the log
  std::string settings_line;           // "beam data DIR, method auto, depth planned, policy ...", for the log
  std::unique_ptr<service::CheckingService> service;
};

// The check options come from the same flags, built the same way, as `check` uses; the intake
// options are already in `settings` (intake_options_from).
[[nodiscard]] Expected<OpenedService> open_checking_service(service::ServiceSettings settings,
                                                            const CheckFlags& flags,
                                                            service::ServiceLog& log);

// "stopped on signal 15: 3 checked, 1 already checked, 0 quarantined, 0 failed attempts".
[[nodiscard]] std::string stopped_line(const service::WatchSummary& summary, std::optional<int> signal);

}  // namespace countersign::cli
