#include <countersign/net/destination.hpp>

#include <algorithm>
#include <charconv>

namespace countersign::net {

namespace {

Error bad(std::string_view text, const std::string& why) {
  return Error{ErrorKind::usage, "", "--send-to", "",
               "\"" + std::string{text} + "\": " + why + " (expected AE@HOST:PORT)"};
}

}  // namespace

bool is_valid_ae_title(std::string_view title) {
  if (title.empty() || title.size() > 16 || title.find_first_not_of(' ') == std::string_view::npos)
    return false;
  return std::all_of(title.begin(), title.end(), [](char c) { return c >= 0x20 && c < 0x7f && c != '\\'; });
}

Expected<Destination> Destination::parse(std::string_view text) {
  const auto at = text.rfind('@');
  const auto colon = text.rfind(':');
  if (at == std::string_view::npos || colon == std::string_view::npos || colon < at)
    return bad(text, "no '@' or ':'");
  Destination destination;
  destination.ae_title = std::string{text.substr(0, at)};
  std::string_view host = text.substr(at + 1, colon - at - 1);
  if (host.size() >= 2 && host.front() == '[' && host.back() == ']') host = host.substr(1, host.size() - 2);
  destination.host = std::string{host};
  const std::string_view port_text = text.substr(colon + 1);
  unsigned port = 0;
  const auto [end, ec] = std::from_chars(port_text.data(), port_text.data() + port_text.size(), port);
  if (!is_valid_ae_title(destination.ae_title))
    return bad(text, "not a valid AE title (1 to 16 printable characters)");
  if (destination.host.empty()) return bad(text, "no host");
  if (ec != std::errc{} || end != port_text.data() + port_text.size() || port == 0 || port > 65535) {
    return bad(text, "not a port between 1 and 65535");
  }
  destination.port = static_cast<std::uint16_t>(port);
  return destination;
}

std::string Destination::text() const {
  const bool v6 = host.find(':') != std::string::npos;
  return ae_title + "@" + (v6 ? "[" + host + "]" : host) + ":" + std::to_string(port);
}

}  // namespace countersign::net
