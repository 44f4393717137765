#pragma once

// A DICOM storage provider for RT Plans, the way a planning system sends to an archive. It accepts
// Verification (C-ECHO) and RT Plan Storage only, only from calling AE titles on the allow-list and
// only when called by its own AE title, and stores each received plan atomically in an inbox folder
// (temporary hidden file, fsync, rename), where the folder watcher checks it like any other file.
// DCMTK stays inside the implementation.

#include <countersign/service/service_log.hpp>
#include <countersign/util/error.hpp>

#include <chrono>
#include <cstdint>
#include <filesystem>
#include <memory>
#include <string>
#include <vector>

namespace countersign::service {

inline constexpr const char* rt_plan_storage_sop_class = "1.2.840.10008.5.1.4.1.1.481.5";
inline constexpr const char* verification_sop_class = "1.2.840.10008.1.1";

struct ReceiverSettings {
  std::uint16_t port = 0;                              // TCP port to listen on (1..65535)
  std::string ae_title;                                // our AE title; associations must call it
  std::vector<std::string> allowed_calling_ae_titles;  // senders we accept; never empty
  std::filesystem::path inbox;                         // where received plans are stored
  std::uint16_t max_associations = 4;                  // served at once; more are refused as busy
  std::chrono::seconds network_timeout{30};            // association and message timeouts
};

// A valid AE title: 1 to 16 characters of printable ASCII without backslash, not only spaces
// (DICOM PS3.5 Table 6.2-1, value representation AE).
[[nodiscard]] bool is_valid_ae_title(const std::string& title);

class StorageReceiver {
 public:
  // Checks the settings, binds the port and starts serving on background threads. Call it after
  // TerminationSignals exists, so that the receiver's threads inherit the blocked signal mask.
  [[nodiscard]] static Expected<std::unique_ptr<StorageReceiver>> start(const ReceiverSettings& settings,
                                                                        ServiceLog& log);
  StorageReceiver(const StorageReceiver&) = delete;
  StorageReceiver& operator=(const StorageReceiver&) = delete;
  ~StorageReceiver();  // stops

  // Stops accepting associations, lets the ones in progress finish and waits for the threads.
  void stop();

  struct Impl;

 private:
  explicit StorageReceiver(std::unique_ptr<Impl> impl);
  std::unique_ptr<Impl> impl_;
};

}  // namespace countersign::service
