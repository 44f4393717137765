#pragma once

// One accepted TCP connection of the DICOM receiver, before DCMTK takes it (internal to service).

#include <countersign/service/peer_allow_list.hpp>
#include <countersign/service/unique_fd.hpp>

#include <cstdint>
#include <string>

namespace countersign::service::detail {

struct PeerConnection {
  UniqueFd socket;
  IpAddress address;
  std::uint16_t port = 0;

  [[nodiscard]] std::string text() const {
    return (address.is_v4() ? address.text() : "[" + address.text() + "]") + ":" + std::to_string(port);
  }
};

}  // namespace countersign::service::detail
