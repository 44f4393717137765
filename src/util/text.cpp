#include <countersign/util/text.hpp>

#include <cstdio>

namespace countersign {

namespace {

bool is_continuation(unsigned char byte) { return (byte & 0xC0U) == 0x80U; }

// Code points shown escaped in a log line although they are valid text: C1 controls, and those
// that make a viewer break a line or reorder what follows (Unicode line/paragraph separators,
// bidirectional marks, embeddings, overrides and isolates).
bool shown_escaped(char32_t c) {
  return (c >= 0x80 && c <= 0x9F) || c == 0x2028 || c == 0x2029 || c == 0x200E || c == 0x200F ||
         (c >= 0x202A && c <= 0x202E) || (c >= 0x2066 && c <= 0x2069);
}

void append_hex(std::string& out, const char* format, unsigned value) {
  char buffer[16];
  std::snprintf(buffer, sizeof buffer, format, value);
  out += buffer;
}

}  // namespace

std::optional<CodePoint> decode_utf8_at(std::string_view text, std::size_t at) {
  if (at >= text.size()) return std::nullopt;
  const auto lead = static_cast<unsigned char>(text[at]);
  if (lead < 0x80) return CodePoint{lead, 1};
  std::size_t length = 0;
  char32_t value = 0;
  char32_t minimum = 0;
  if ((lead & 0xE0U) == 0xC0U) {
    length = 2, value = lead & 0x1FU, minimum = 0x80;
  } else if ((lead & 0xF0U) == 0xE0U) {
    length = 3, value = lead & 0x0FU, minimum = 0x800;
  } else if ((lead & 0xF8U) == 0xF0U) {
    length = 4, value = lead & 0x07U, minimum = 0x10000;
  } else {
    return std::nullopt;
  }
  if (at + length > text.size()) return std::nullopt;
  for (std::size_t i = 1; i < length; ++i) {
    const auto byte = static_cast<unsigned char>(text[at + i]);
    if (!is_continuation(byte)) return std::nullopt;
    value = (value << 6U) | (byte & 0x3FU);
  }
  if (value < minimum || value > 0x10FFFF || (value >= 0xD800 && value <= 0xDFFF)) return std::nullopt;
  return CodePoint{value, length};
}

bool is_valid_utf8(std::string_view text) {
  for (std::size_t i = 0; i < text.size();) {
    const auto point = decode_utf8_at(text, i);
    if (!point) return false;
    i += point->length;
  }
  return true;
}

std::string valid_utf8(std::string_view text) {
  if (is_valid_utf8(text)) return std::string{text};
  std::string out;
  out.reserve(text.size() + 8);
  for (std::size_t i = 0; i < text.size();) {
    if (const auto point = decode_utf8_at(text, i)) {
      out.append(text.substr(i, point->length));
      i += point->length;
    } else {
      out += replacement_character;
      ++i;
    }
  }
  return out;
}

std::string escape_control_characters(std::string_view text) {
  std::string out;
  out.reserve(text.size());
  for (std::size_t i = 0; i < text.size();) {
    const auto point = decode_utf8_at(text, i);
    if (!point) {
      append_hex(out, "\\x%02x", static_cast<unsigned char>(text[i]));
      ++i;
      continue;
    }
    const char32_t c = point->value;
    if (c == '\\') {
      out += "\\\\";
    } else if (c == '\n') {
      out += "\\n";
    } else if (c == '\r') {
      out += "\\r";
    } else if (c == '\t') {
      out += "\\t";
    } else if (c < 0x20 || c == 0x7F) {
      append_hex(out, "\\x%02x", static_cast<unsigned>(c));
    } else if (shown_escaped(c)) {
      append_hex(out, "\\u%04x", static_cast<unsigned>(c));
    } else {
      out.append(text.substr(i, point->length));
    }
    i += point->length;
  }
  return out;
}

}  // namespace countersign
