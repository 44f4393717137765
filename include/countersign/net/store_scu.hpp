#pragma once

// Sends one DICOM file to a destination by C-STORE, in an association of its own (DCMTK's DcmSCU).
// What happened is sorted for the outbox: delivered, worth retrying later (the archive is down,
// busy, out of resources, or refused the association), or rejected for good (the archive refused
// this object with a failure status, or does not take its SOP class).

#include <countersign/net/destination.hpp>

#include <chrono>
#include <filesystem>
#include <string>

namespace countersign::net {

enum class SendResult { delivered, retry_later, rejected };

struct SendOutcome {
  SendResult result = SendResult::retry_later;
  std::string detail;  // one phrase: the status or the network error
};

struct ScuSettings {
  std::string calling_ae_title = "COUNTERSIGN";
  std::chrono::seconds timeout{30};  // connection, association and each message
};

[[nodiscard]] SendOutcome send_file(const Destination& destination, const std::filesystem::path& file,
                                    const ScuSettings& settings);

}  // namespace countersign::net
