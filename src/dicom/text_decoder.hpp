#pragma once

// Text values of a dataset converted to UTF-8 from its Specific Character Set (0008,0005), with
// DCMTK's character-set support (iconv on Debian). Internal to the dicom module.
//
// A value DCMTK converts whole is taken as converted. A value it cannot convert (a byte the
// character set does not define, bad UTF-8, an unknown or unsupported character set) is decoded
// piece by piece: every character DCMTK converts is kept and every byte it cannot is shown as
// U+FFFD, and the count of those bytes is returned, so that the reader can say so.

#include <dcmtk/config/osconfig.h>
#include <dcmtk/dcmdata/dcitem.h>
#include <dcmtk/dcmdata/dcspchrs.h>
#include <dcmtk/dcmdata/dcvr.h>

#include <cstddef>
#include <memory>
#include <string>
#include <string_view>

namespace countersign::dicom::detail {

struct DecodedText {
  std::string utf8;                // always well-formed UTF-8
  std::size_t replaced_bytes = 0;  // bytes shown as U+FFFD
};

class TextDecoder {
 public:
  // For the character set(s) named in a Specific Character Set value, e.g. "ISO_IR 100" or
  // "\ISO 2022 IR 149"; empty means the default repertoire (ASCII).
  explicit TextDecoder(std::string declared);
  TextDecoder(const TextDecoder&) = delete;
  TextDecoder& operator=(const TextDecoder&) = delete;

  // The decoder for `item`: its own when it carries Specific Character Set (0008,0005), else
  // `inherited` (the enclosing dataset's), else one for the default repertoire.
  [[nodiscard]] static std::shared_ptr<TextDecoder> for_item(DcmItem& item,
                                                             std::shared_ptr<TextDecoder> inherited);

  // `raw` (the value's bytes as stored, all values) as UTF-8. Only the VRs the Specific Character
  // Set applies to (SH, LO, ST, LT, PN, UC, UT) are converted; other VRs allow only the default
  // repertoire, and any byte above 0x7F in them is replaced.
  [[nodiscard]] DecodedText decode(std::string_view raw, DcmEVR vr);

  // The Specific Character Set as declared (spaces trimmed; may name several, separated by "\").
  [[nodiscard]] const std::string& declared() const { return declared_; }
  // Why DCMTK cannot convert from the declared set on this system; empty when it can.
  [[nodiscard]] const std::string& unusable_reason() const { return unusable_reason_; }

 private:
  bool convert(std::string_view bytes, std::string_view delimiters, std::string& out);
  DecodedText decode_component(std::string_view component);
  DecodedText decode_characters(std::string_view component);

  std::string declared_;
  std::string unusable_reason_;
  DcmSpecificCharacterSet converter_;
};

// True for the VRs the Specific Character Set applies to.
[[nodiscard]] bool uses_specific_character_set(DcmEVR vr);

// `raw` with every byte above 0x7F replaced: the VRs outside the Specific Character Set's reach.
[[nodiscard]] DecodedText replace_non_ascii(std::string_view raw);

// A value of an unconvertible character set decoded without a converter: ASCII outside escape
// sequences is kept, everything else (bytes above 0x7F, and what follows an escape sequence to a
// multi-byte set) becomes U+FFFD. Exposed for tests.
[[nodiscard]] DecodedText decode_ascii_only(std::string_view raw, std::string_view delimiters);

}  // namespace countersign::dicom::detail
