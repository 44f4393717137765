#pragma once

// A DICOM storage provider, the way a planning system sends to an archive. It listens on one
// address (loopback unless another is asked for), accepts Verification (C-ECHO) and the storage SOP
// classes in accepted_storage_classes, only from the senders on its allow-list (AE title, optionally
// bound to a host or network) and only when called by its own AE title; optionally over TLS with
// both peers' certificates verified. Each received object is written straight to a hidden file in
// the inbox (never held whole in memory; an object over the size limit is refused with a failure
// status), then renamed into place, where the folder watcher checks it like any other file.
//
// No single peer can stall or flood it: connections are accepted by a thread of their own and each
// is served on its own thread, an association request must be complete within the ACSE timeout,
// every later read within the DIMSE timeout, and connections beyond max_associations are refused.
// Every refused or dropped connection is logged with the peer's address and the reason.
// DCMTK stays inside the implementation.

#include <countersign/service/object_classes.hpp>
#include <countersign/service/peer_allow_list.hpp>
#include <countersign/service/service_log.hpp>
#include <countersign/util/error.hpp>

#include <array>
#include <chrono>
#include <cstdint>
#include <filesystem>
#include <memory>
#include <optional>
#include <string>
#include <vector>

namespace countersign::service {

inline constexpr const char* rt_plan_storage_sop_class = "1.2.840.10008.5.1.4.1.1.481.5";
inline constexpr const char* verification_sop_class = "1.2.840.10008.1.1";

// The storage SOP classes accepted (one presentation context each): plans, their studies (CT, RT
// Structure Set) and the RT objects that come with them (logged and discarded by the intake).
using AcceptedStorageClass = StorageClass;
inline constexpr const auto& accepted_storage_classes = storage_classes;

// TLS with DCMTK's OpenSSL layer: our certificate and key, and the CA that signed the senders'
// certificates. A peer without a certificate signed by that CA is refused.
struct ReceiverTls {
  std::filesystem::path certificate;  // PEM
  std::filesystem::path private_key;  // PEM, without a passphrase
  std::filesystem::path trusted_ca;   // PEM, one or more CA certificates
};

struct ReceiverSettings {
  std::string bind_address = "127.0.0.1";    // an IPv4 or IPv6 address of this machine
  std::uint16_t port = 0;                    // TCP port to listen on (1..65535)
  std::string ae_title;                      // our AE title; associations must call it
  std::vector<std::string> allowed_senders;  // "AE", "AE@HOST" or "AE@ADDRESS/BITS"; never empty
  std::filesystem::path inbox;               // where received objects are stored
  std::uint16_t max_associations = 4;        // served at once; more are refused and logged
  std::chrono::seconds acse_timeout{30};     // whole association negotiation (TLS handshake included)
  std::chrono::seconds dimse_timeout{30};    // each wait for data once the association is up
  std::uint64_t max_object_bytes = std::uint64_t{256} << 20;  // larger objects are refused
  std::optional<ReceiverTls> tls;
};

class StorageReceiver {
 public:
  // Checks the settings (allow-list, bind address, TLS files), binds the address and port and starts
  // serving on background threads. Errors are of kind usage and name the option. Call it after
  // TerminationSignals exists, so that the receiver's threads inherit the blocked signal mask.
  [[nodiscard]] static Expected<std::unique_ptr<StorageReceiver>> start(const ReceiverSettings& settings,
                                                                        ServiceLog& log);
  StorageReceiver(const StorageReceiver&) = delete;
  StorageReceiver& operator=(const StorageReceiver&) = delete;
  ~StorageReceiver();  // stops

  // Stops accepting, drops connections still negotiating, lets transfers in progress finish and
  // waits for every thread.
  void stop();

  struct Impl;

 private:
  explicit StorageReceiver(std::unique_ptr<Impl> impl);
  std::unique_ptr<Impl> impl_;
};

}  // namespace countersign::service
