#include "text_decoder.hpp"

#include <countersign/util/text.hpp>

#include <dcmtk/dcmdata/dcdeftag.h>

#include <algorithm>

namespace countersign::dicom::detail {

namespace {

constexpr char escape = '\x1B';
// Longer failing pieces are not decoded character by character (that is one conversion per byte
// and candidate length); the hostile-input bound, far above any name or label.
constexpr std::size_t max_component_for_characters = 4096;
constexpr std::size_t max_character_bytes = 4;

std::string trim(std::string_view text) {
  const auto first = text.find_first_not_of(' ');
  if (first == std::string_view::npos) return {};
  const auto last = text.find_last_not_of(' ');
  return std::string{text.substr(first, last - first + 1)};
}

// DICOM PS3.5 6.1.2.5.3: a delimiter returns to the initial character set state. Person names
// split at "=" and "^" too; multi-valued strings at "\". CR, LF, FF and HT always.
std::string_view delimiters_of(DcmEVR vr) {
  switch (vr) {
    case EVR_PN:
      return "\\^=\r\n\f\t";
    case EVR_SH:
    case EVR_LO:
    case EVR_UC:
      return "\\\r\n\f\t";
    default:
      return "\r\n\f\t";
  }
}

bool needs_decoding(std::string_view raw) {
  return std::any_of(raw.begin(), raw.end(),
                     [](char c) { return c == escape || static_cast<unsigned char>(c) >= 0x80; });
}

// The length of the ISO 2022 escape sequence at text[at] (ESC, intermediate bytes 0x20-0x2F, one
// final byte 0x30-0x7E), or 0 when the bytes there are not one.
std::size_t escape_sequence_length(std::string_view text, std::size_t at) {
  std::size_t i = at + 1;
  while (i < text.size() && text[i] >= 0x20 && text[i] <= 0x2F) ++i;
  if (i == at + 1 || i >= text.size() || text[i] < 0x30 || text[i] > 0x7E) return 0;
  return i - at + 1;
}

// ESC ( F and ESC $ F, ESC $ ( F designate the G0 set (what 7-bit bytes mean); others (ESC ) F,
// ESC - F, ESC $ ) F) the G1 set.
bool designates_g0(std::string_view sequence) {
  return sequence[1] == '(' || (sequence[1] == '$' && (sequence.size() == 3 || sequence[2] == '('));
}

// ASCII or JIS X 0201 Roman back in G0.
bool designates_ascii(std::string_view sequence) { return sequence == "\x1B(B" || sequence == "\x1B(J"; }

}  // namespace

DecodedText replace_non_ascii(std::string_view raw) {
  DecodedText result;
  for (const char c : raw) {
    if (static_cast<unsigned char>(c) < 0x80) {
      result.utf8 += c;
    } else {
      result.utf8 += replacement_character;
      ++result.replaced_bytes;
    }
  }
  return result;
}

bool uses_specific_character_set(DcmEVR vr) {
  switch (vr) {
    case EVR_SH:
    case EVR_LO:
    case EVR_ST:
    case EVR_LT:
    case EVR_PN:
    case EVR_UC:
    case EVR_UT:
      return true;
    default:
      return false;
  }
}

TextDecoder::TextDecoder(std::string declared) : declared_(trim(declared)) {
  if (!DcmSpecificCharacterSet::isConversionAvailable()) {
    unusable_reason_ = "this DCMTK build has no character set conversion";
    return;
  }
  const OFCondition selected = converter_.selectCharacterSet(declared_.c_str());
  if (selected.bad()) unusable_reason_ = selected.text();
}

std::shared_ptr<TextDecoder> TextDecoder::for_item(DcmItem& item, std::shared_ptr<TextDecoder> inherited) {
  OFString declared;
  if (item.findAndGetOFStringArray(DCM_SpecificCharacterSet, declared, OFFalse).good()) {
    return std::make_shared<TextDecoder>(valid_utf8(std::string_view{declared.c_str(), declared.length()}));
  }
  if (inherited) return inherited;
  return std::make_shared<TextDecoder>("");
}

bool TextDecoder::convert(std::string_view bytes, std::string_view delimiters, std::string& out) {
  if (!unusable_reason_.empty()) return false;
  OFString converted;
  const OFCondition status = converter_.convertString(bytes.data(), bytes.size(), converted,
                                                      OFString{delimiters.data(), delimiters.size()});
  if (status.bad()) return false;
  out.assign(converted.c_str(), converted.length());
  return true;
}

DecodedText TextDecoder::decode(std::string_view raw, DcmEVR vr) {
  if (!uses_specific_character_set(vr)) return replace_non_ascii(raw);
  if (!needs_decoding(raw)) return {std::string{raw}, 0};
  const std::string_view delimiters = delimiters_of(vr);
  if (!unusable_reason_.empty()) return decode_ascii_only(raw, delimiters);
  DecodedText whole;
  if (convert(raw, delimiters, whole.utf8)) {
    whole.utf8 = valid_utf8(whole.utf8);
    return whole;
  }
  // Each component between delimiters starts in the initial state: decode them one by one, so
  // that one bad byte costs only its own piece.
  DecodedText result;
  std::size_t start = 0;
  for (std::size_t i = 0; i <= raw.size(); ++i) {
    if (i < raw.size() && delimiters.find(raw[i]) == std::string_view::npos) continue;
    const DecodedText piece = decode_component(raw.substr(start, i - start));
    result.utf8 += piece.utf8;
    result.replaced_bytes += piece.replaced_bytes;
    if (i < raw.size()) result.utf8 += raw[i];
    start = i + 1;
  }
  return result;
}

DecodedText TextDecoder::decode_component(std::string_view component) {
  DecodedText piece;
  if (!needs_decoding(component)) return {std::string{component}, 0};
  if (convert(component, "", piece.utf8)) {
    piece.utf8 = valid_utf8(piece.utf8);
    return piece;
  }
  if (component.size() > max_component_for_characters) return decode_ascii_only(component, "");
  return decode_characters(component);
}

// Character by character: at each position, the shortest run of 1 to 4 bytes that DCMTK converts
// (after the escape sequences in force, so ISO 2022 state carries over); a byte that starts no
// such run becomes U+FFFD.
DecodedText TextDecoder::decode_characters(std::string_view component) {
  DecodedText piece;
  std::string g0;
  std::string g1;
  for (std::size_t i = 0; i < component.size();) {
    if (component[i] == escape) {
      if (const std::size_t length = escape_sequence_length(component, i); length > 0) {
        const std::string_view sequence = component.substr(i, length);
        (designates_g0(sequence) ? g0 : g1) = std::string{sequence};
        i += length;
        continue;
      }
    }
    bool converted = false;
    for (std::size_t length = 1; length <= max_character_bytes && i + length <= component.size(); ++length) {
      if (length > 1 && component[i + length - 1] == escape) break;
      std::string out;
      if (convert(g0 + g1 + std::string{component.substr(i, length)}, "", out) && !out.empty() &&
          is_valid_utf8(out)) {
        piece.utf8 += out;
        i += length;
        converted = true;
        break;
      }
    }
    if (!converted) {
      piece.utf8 += replacement_character;
      ++piece.replaced_bytes;
      ++i;
    }
  }
  return piece;
}

DecodedText decode_ascii_only(std::string_view raw, std::string_view delimiters) {
  DecodedText result;
  bool foreign_g0 = false;  // 7-bit bytes belong to another (multi-byte) set
  for (std::size_t i = 0; i < raw.size();) {
    const char c = raw[i];
    if (c == escape) {
      if (const std::size_t length = escape_sequence_length(raw, i); length > 0) {
        const std::string_view sequence = raw.substr(i, length);
        if (designates_g0(sequence)) foreign_g0 = !designates_ascii(sequence);
        i += length;
        continue;
      }
    }
    if (delimiters.find(c) != std::string_view::npos) {
      foreign_g0 = false;
      result.utf8 += c;
    } else if (static_cast<unsigned char>(c) < 0x80 && !foreign_g0) {
      result.utf8 += c;
    } else {
      result.utf8 += replacement_character;
      ++result.replaced_bytes;
    }
    ++i;
  }
  return result;
}

}  // namespace countersign::dicom::detail
