#include <countersign/report/html_escape.hpp>

#include <countersign/util/text.hpp>

namespace countersign::report {

std::string html_escape(std::string_view raw) {
  // The page is declared UTF-8; bytes that are not become U+FFFD here rather than in the browser.
  const std::string text = valid_utf8(raw);
  std::string out;
  out.reserve(text.size());
  for (const char c : text) {
    switch (c) {
      case '&':
        out += "&amp;";
        break;
      case '<':
        out += "&lt;";
        break;
      case '>':
        out += "&gt;";
        break;
      case '"':
        out += "&quot;";
        break;
      case '\'':
        out += "&#39;";
        break;
      default:
        out += c;
    }
  }
  return out;
}

}  // namespace countersign::report
