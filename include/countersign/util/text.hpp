#pragma once

// Text that came from outside (file names, DICOM values, network peers) made safe to show: valid
// UTF-8 for JSON, and one line with no control characters for logs and terminals.

#include <optional>
#include <string>
#include <string_view>

namespace countersign {

// True when `text` is well-formed UTF-8 (no overlong forms, surrogates or values above U+10FFFF).
[[nodiscard]] bool is_valid_utf8(std::string_view text);

// `text` with every byte that is not part of a well-formed UTF-8 sequence replaced by U+FFFD, so
// that a JSON writer can never reject it. Well-formed text is returned unchanged.
[[nodiscard]] std::string valid_utf8(std::string_view text);

// `text` as one unambiguous line: a backslash becomes "\\", newline, carriage return and tab become
// "\n", "\r", "\t", other C0 controls, DEL and bytes that are not UTF-8 become "\xNN", and C1
// controls, line and paragraph separators and bidirectional overrides become "\uNNNN". So a value
// can never start a new log line, move the cursor or reorder what is displayed.
[[nodiscard]] std::string escape_control_characters(std::string_view text);

// The code point of the UTF-8 sequence starting at text[at] and its length in bytes, or nullopt
// when the bytes there are not well-formed UTF-8.
struct CodePoint {
  char32_t value = 0;
  std::size_t length = 0;
};
[[nodiscard]] std::optional<CodePoint> decode_utf8_at(std::string_view text, std::size_t at);

// U+FFFD REPLACEMENT CHARACTER in UTF-8: what stands for bytes that could not be decoded.
inline constexpr std::string_view replacement_character = "\xEF\xBF\xBD";

}  // namespace countersign
