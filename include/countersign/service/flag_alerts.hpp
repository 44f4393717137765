#pragma once

// `--on-flag COMMAND`: for each plan outside tolerance or not checked, the operator's program is run
// with the result file's path as its last argument (argv, no shell) on a thread of its own, so that
// a slow or failing program never holds up checking. A failure (non-zero exit, a signal, no answer
// within the timeout) is logged with the program's own words and retried with a growing delay; after
// the last attempt the alert's marker moves to RESULTS/followups/failed/ for a person to see.

#include <countersign/service/service_log.hpp>

#include <atomic>
#include <chrono>
#include <condition_variable>
#include <cstdint>
#include <filesystem>
#include <mutex>
#include <string>
#include <thread>
#include <vector>

namespace countersign::service {

struct AlertSettings {
  std::vector<std::string> command;             // the program (resolved) and its arguments; empty: no alerts
  std::chrono::milliseconds first_retry{5000};  // doubled after each failure ...
  std::chrono::milliseconds max_retry{300000};  // ... up to this
  int attempts = 8;
  std::chrono::seconds timeout{60};  // then the program's process group gets SIGTERM (SIGKILL 5 s later)
};

// One alert to raise.
struct AlertJob {
  std::int64_t check_id = 0;
  std::string sop_instance_uid;
  std::string verdict;
  std::filesystem::path result_file;  // absolute: the program's last argument
  std::filesystem::path marker;       // removed once the program succeeded
};

class FlagAlerts {
 public:
  FlagAlerts(AlertSettings settings, std::filesystem::path failed_folder, ServiceLog& log);
  FlagAlerts(const FlagAlerts&) = delete;
  FlagAlerts& operator=(const FlagAlerts&) = delete;
  ~FlagAlerts();  // stops a running program; what is left keeps its marker for the next start

  void add(AlertJob job);
  // Waits until no alert is running or due before `deadline` (a one-pass run ends after its alerts).
  void wait_idle(std::chrono::steady_clock::time_point deadline);

 private:
  struct Pending {
    AlertJob job;
    int attempt = 1;
    std::chrono::steady_clock::time_point due;
  };
  void loop();
  void raise(Pending& pending);

  AlertSettings settings_;
  std::filesystem::path failed_folder_;
  ServiceLog& log_;
  std::mutex mutex_;
  std::condition_variable wake_;
  std::vector<Pending> queue_;
  bool busy_ = false;  // a program is running
  std::atomic<bool> stopping_{false};
  std::thread thread_;
};

}  // namespace countersign::service
