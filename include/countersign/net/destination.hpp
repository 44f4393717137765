#pragma once

// Where DICOM objects are sent: a called AE title, a host and a TCP port, written AE@HOST:PORT
// (an IPv6 address in brackets: AE@[2001:db8::7]:104).

#include <countersign/util/error.hpp>

#include <cstdint>
#include <string>
#include <string_view>

namespace countersign::net {

// A valid AE title: 1 to 16 printable ASCII characters without backslash, not only spaces
// (DICOM PS3.5 Table 6.2-1, value representation AE).
[[nodiscard]] bool is_valid_ae_title(std::string_view title);

struct Destination {
  std::string ae_title;
  std::string host;
  std::uint16_t port = 0;

  // Errors are of kind usage, attribute "--send-to", and say what is wrong with `text`.
  [[nodiscard]] static Expected<Destination> parse(std::string_view text);
  [[nodiscard]] std::string text() const;
  friend bool operator==(const Destination&, const Destination&) = default;
};

}  // namespace countersign::net
