#include <countersign/service/peer_allow_list.hpp>

#include <arpa/inet.h>
#include <netdb.h>
#include <netinet/in.h>
#include <sys/socket.h>

#include <algorithm>
#include <charconv>
#include <cstring>
#include <memory>

namespace countersign::service {

namespace {

Error entry_error(const std::string& entry, const std::string& why) {
  return Error{ErrorKind::usage, "", "--allow-ae", "", "\"" + entry + "\": " + why};
}

// Every address of a host name or literal address (IPv4 and IPv6), or nothing.
std::vector<IpAddress> resolve(const std::string& host) {
  if (auto literal = IpAddress::parse(host)) return {*literal};
  addrinfo hints{};
  hints.ai_family = AF_UNSPEC;
  hints.ai_socktype = SOCK_STREAM;
  addrinfo* found = nullptr;
  if (::getaddrinfo(host.c_str(), nullptr, &hints, &found) != 0 || found == nullptr) return {};
  const std::unique_ptr<addrinfo, decltype(&::freeaddrinfo)> owner{found, &::freeaddrinfo};
  std::vector<IpAddress> addresses;
  for (const addrinfo* a = found; a != nullptr; a = a->ai_next) {
    if (auto address = IpAddress::from_socket_address(*a->ai_addr)) {
      if (std::find(addresses.begin(), addresses.end(), *address) == addresses.end())
        addresses.push_back(*address);
    }
  }
  return addresses;
}

Expected<AllowedPeer> parse_entry(const std::string& entry) {
  AllowedPeer peer;
  const auto at = entry.rfind('@');
  peer.ae_title =
      trim_spaces(at == std::string::npos ? std::string_view{entry} : std::string_view{entry}.substr(0, at));
  if (!is_valid_ae_title(peer.ae_title))
    return entry_error(entry, "not a valid AE title (1 to 16 printable characters)");
  if (at == std::string::npos) return peer;

  peer.any_host = false;
  peer.host_text = entry.substr(at + 1);
  if (peer.host_text.empty()) return entry_error(entry, "no host after '@'");
  const auto slash = peer.host_text.find('/');
  if (slash != std::string::npos) {
    const auto network = IpAddress::parse(std::string_view{peer.host_text}.substr(0, slash));
    const std::string_view bits_text = std::string_view{peer.host_text}.substr(slash + 1);
    unsigned bits = 0;
    const auto [end, ec] = std::from_chars(bits_text.data(), bits_text.data() + bits_text.size(), bits);
    if (!network || ec != std::errc{} || end != bits_text.data() + bits_text.size() || bits_text.empty() ||
        bits > (network->is_v4() ? 32U : 128U)) {
      return entry_error(entry, "not a network in CIDR form (e.g. 10.20.0.0/16)");
    }
    peer.addresses = {*network};
    peer.prefix_bits = bits;
    return peer;
  }
  peer.addresses = resolve(peer.host_text);
  if (peer.addresses.empty())
    return entry_error(entry, "the host \"" + peer.host_text + "\" cannot be resolved");
  peer.prefix_bits = 128;  // whole address; in_network caps it at 32 for IPv4
  return peer;
}

}  // namespace

std::optional<IpAddress> IpAddress::parse(std::string_view text) {
  const std::string copy{text};
  IpAddress address;
  in_addr v4{};
  if (::inet_pton(AF_INET, copy.c_str(), &v4) == 1) {
    std::memcpy(address.bytes_.data(), &v4, 4);
    return address;
  }
  in6_addr v6{};
  if (::inet_pton(AF_INET6, copy.c_str(), &v6) != 1) return std::nullopt;
  sockaddr_in6 socket_address{};
  socket_address.sin6_family = AF_INET6;
  socket_address.sin6_addr = v6;
  return from_socket_address(reinterpret_cast<const sockaddr&>(socket_address));
}

std::optional<IpAddress> IpAddress::from_socket_address(const sockaddr& address) {
  IpAddress result;
  if (address.sa_family == AF_INET) {
    const auto& v4 = reinterpret_cast<const sockaddr_in&>(address);
    std::memcpy(result.bytes_.data(), &v4.sin_addr, 4);
    return result;
  }
  if (address.sa_family != AF_INET6) return std::nullopt;
  const auto& v6 = reinterpret_cast<const sockaddr_in6&>(address);
  if (IN6_IS_ADDR_V4MAPPED(&v6.sin6_addr)) {
    std::memcpy(result.bytes_.data(), &v6.sin6_addr.s6_addr[12], 4);
    return result;
  }
  result.v4_ = false;
  std::memcpy(result.bytes_.data(), &v6.sin6_addr, 16);
  return result;
}

std::string IpAddress::text() const {
  char buffer[INET6_ADDRSTRLEN] = {};
  ::inet_ntop(v4_ ? AF_INET : AF_INET6, bytes_.data(), buffer, sizeof buffer);
  return buffer;
}

bool IpAddress::in_network(const IpAddress& network, unsigned prefix_bits) const {
  if (v4_ != network.v4_) return false;
  const unsigned bits = std::min(prefix_bits, v4_ ? 32U : 128U);
  for (unsigned i = 0; i < bits; ++i) {
    const unsigned mask = 0x80U >> (i % 8);
    if ((bytes_[i / 8] & mask) != (network.bytes_[i / 8] & mask)) return false;
  }
  return true;
}

bool AllowedPeer::matches_host(const IpAddress& peer) const {
  if (any_host) return true;
  return std::any_of(addresses.begin(), addresses.end(),
                     [&](const IpAddress& a) { return peer.in_network(a, prefix_bits); });
}

std::string AllowedPeer::text() const { return any_host ? ae_title : ae_title + "@" + host_text; }

Expected<PeerAllowList> PeerAllowList::parse(const std::vector<std::string>& entries) {
  if (entries.empty()) {
    return Error{ErrorKind::usage, "", "--allow-ae", "",
                 "at least one allowed sender (AE or AE@HOST) is required; no sender is trusted by default"};
  }
  PeerAllowList list;
  for (const auto& entry : entries) {
    auto parsed = parse_entry(entry);
    if (!parsed) return parsed.error();
    list.entries_.push_back(std::move(parsed.value()));
  }
  return list;
}

bool PeerAllowList::host_may_connect(const IpAddress& peer) const {
  return std::any_of(entries_.begin(), entries_.end(),
                     [&](const AllowedPeer& e) { return e.matches_host(peer); });
}

bool PeerAllowList::allows(std::string_view calling_ae_title, const IpAddress& peer) const {
  return std::any_of(entries_.begin(), entries_.end(), [&](const AllowedPeer& e) {
    return e.ae_title == calling_ae_title && e.matches_host(peer);
  });
}

std::string PeerAllowList::refusal_reason(std::string_view calling_ae_title, const IpAddress& peer) const {
  std::string hosts;
  for (const auto& e : entries_) {
    if (e.ae_title == calling_ae_title) hosts += (hosts.empty() ? "" : ", ") + e.host_text;
  }
  if (hosts.empty()) return "calling AE title not on the allow-list (--allow-ae)";
  return "calling AE title allowed only from " + hosts + ", not from " + peer.text() + " (--allow-ae)";
}

std::string trim_spaces(std::string_view text) {
  const auto first = text.find_first_not_of(' ');
  if (first == std::string_view::npos) return {};
  return std::string{text.substr(first, text.find_last_not_of(' ') - first + 1)};
}

bool is_valid_ae_title(const std::string& title) {
  if (title.empty() || title.size() > 16 || trim_spaces(title).empty()) return false;
  return std::all_of(title.begin(), title.end(), [](char c) { return c >= 0x20 && c < 0x7f && c != '\\'; });
}

}  // namespace countersign::service
