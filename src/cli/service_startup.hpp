#pragma once

// What `watch` and `receive` share: load the beam data and policy once, open the checking service,
// and the log line written when a service stops.

#include <countersign/service/checking_service.hpp>
#include <countersign/service/folder_watcher.hpp>
#include <countersign/service/service_log.hpp>
#include <countersign/util/error.hpp>

#include "shared_options.hpp"

#include <filesystem>
#include <memory>
#include <optional>
#include <string>

namespace countersign::cli {

struct OpenedService {
  std::filesystem::path beamdata_dir;  // the library in use, for the log
  std::string settings_line;           // "beam data DIR, method auto, depth planned, policy ...", for the log
  std::unique_ptr<service::CheckingService> service;
};

// settle_s: how long an unreadable inbox file must stay unchanged before it is quarantined. The
// check options come from the same flags, built the same way, as `check` uses.
[[nodiscard]] Expected<OpenedService> open_checking_service(service::ServiceSettings settings,
                                                            double settle_s, const CheckFlags& flags,
                                                            service::ServiceLog& log);

// "stopped on signal 15: 3 checked, 1 already checked, 0 quarantined, 0 failed attempts".
[[nodiscard]] std::string stopped_line(const service::WatchSummary& summary, std::optional<int> signal);

}  // namespace countersign::cli
