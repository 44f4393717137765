#pragma once

// Who may send to the DICOM receiver: entries "AE" (that calling AE title from any host the
// receiver is reachable from), "AE@HOST" (a host name or an IPv4/IPv6 address) or "AE@ADDRESS/BITS"
// (a network in CIDR form). The last '@' separates the host, so an AE title may itself hold one.
// Host names are resolved once, when the list is made.

#include <countersign/util/error.hpp>

#include <array>
#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

struct sockaddr;

namespace countersign::service {

// An IPv4 or IPv6 address; IPv4-mapped IPv6 addresses (::ffff:a.b.c.d) count as IPv4.
class IpAddress {
 public:
  [[nodiscard]] static std::optional<IpAddress> parse(std::string_view text);
  [[nodiscard]] static std::optional<IpAddress> from_socket_address(const sockaddr& address);

  [[nodiscard]] bool is_v4() const { return v4_; }
  [[nodiscard]] std::string text() const;
  // True when the first `prefix_bits` bits equal those of `network` (same family).
  [[nodiscard]] bool in_network(const IpAddress& network, unsigned prefix_bits) const;
  friend bool operator==(const IpAddress&, const IpAddress&) = default;

 private:
  bool v4_ = true;
  std::array<std::uint8_t, 16> bytes_{};  // IPv4 in the first four bytes
};

struct AllowedPeer {
  std::string ae_title;
  std::string host_text;             // as written; empty: any host
  std::vector<IpAddress> addresses;  // the host's addresses, or the network's address
  unsigned prefix_bits = 0;          // CIDR entries: network prefix; otherwise the full length
  bool any_host = true;

  [[nodiscard]] bool matches_host(const IpAddress& peer) const;
  [[nodiscard]] std::string text() const;  // "AE" or "AE@HOST"
};

class PeerAllowList {
 public:
  // Errors (kind usage, attribute "--allow-ae") name the entry: a bad AE title, an unresolvable host,
  // a malformed network. An empty list is an error: no sender is trusted by default.
  [[nodiscard]] static Expected<PeerAllowList> parse(const std::vector<std::string>& entries);

  // Some entry accepts this host (checked before any DICOM is read from the connection).
  [[nodiscard]] bool host_may_connect(const IpAddress& peer) const;
  // The calling AE title is listed for this host.
  [[nodiscard]] bool allows(std::string_view calling_ae_title, const IpAddress& peer) const;
  // Why `allows` said no, in one phrase for the log.
  [[nodiscard]] std::string refusal_reason(std::string_view calling_ae_title, const IpAddress& peer) const;

  [[nodiscard]] const std::vector<AllowedPeer>& entries() const { return entries_; }

 private:
  std::vector<AllowedPeer> entries_;
};

// A valid AE title: 1 to 16 characters of printable ASCII without backslash, not only spaces
// (DICOM PS3.5 Table 6.2-1, value representation AE).
[[nodiscard]] bool is_valid_ae_title(const std::string& title);

// Leading and trailing spaces removed (DICOM pads AE titles with spaces).
[[nodiscard]] std::string trim_spaces(std::string_view text);

}  // namespace countersign::service
