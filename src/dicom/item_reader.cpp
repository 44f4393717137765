#include "item_reader.hpp"

#include <dcmtk/dcmdata/dcdict.h>
#include <dcmtk/dcmdata/dcelem.h>
#include <dcmtk/dcmdata/dcsequen.h>
#include <dcmtk/dcmdata/dctag.h>

#include <countersign/util/text.hpp>

#include <fmt/format.h>

#include <algorithm>
#include <charconv>
#include <cmath>
#include <limits>
#include <string_view>

namespace countersign::dicom::detail {

namespace {

std::string trim(const std::string& text) {
  const auto first = text.find_first_not_of(" \t\r\n");
  if (first == std::string::npos) return {};
  const auto last = text.find_last_not_of(" \t\r\n");
  return text.substr(first, last - first + 1);
}

// DICOM allows a leading '+'; std::from_chars does not.
std::string_view without_plus(std::string_view text) {
  if (!text.empty() && text.front() == '+') text.remove_prefix(1);
  return text;
}

bool is_text_vr(DcmEVR vr) {
  switch (vr) {
    case EVR_AE:
    case EVR_AS:
    case EVR_CS:
    case EVR_DA:
    case EVR_DS:
    case EVR_DT:
    case EVR_IS:
    case EVR_LO:
    case EVR_LT:
    case EVR_PN:
    case EVR_SH:
    case EVR_ST:
    case EVR_TM:
    case EVR_UI:
    case EVR_UC:
    case EVR_UR:
    case EVR_UT:
      return true;
    default:
      return false;
  }
}

}  // namespace

std::string tag_text(const DcmTagKey& tag) {
  return fmt::format("({:04X},{:04X})", tag.getGroup(), tag.getElement());
}

std::string keyword(const DcmTagKey& tag) {
  DcmTag full(tag);  // getTagName() is not const in DCMTK 3.6.7
  std::string name = full.getTagName();
  constexpr std::string_view retired = "RETIRED_";
  if (name.rfind(retired, 0) == 0) name.erase(0, retired.size());
  return name;
}

std::string printable(const std::string& text) {
  std::string out = escape_control_characters(std::string_view{text}.substr(0, 64));
  if (text.size() > 64) out += "...";
  return out;
}

void ErrorSink::warn(std::string warning) {
  if (std::find(warnings_.begin(), warnings_.end(), warning) == warnings_.end())
    warnings_.push_back(std::move(warning));
}

std::optional<double> parse_decimal(const std::string& text) {
  const std::string trimmed = trim(text);
  const std::string_view digits = without_plus(trimmed);
  if (digits.empty()) return std::nullopt;
  // from_chars would accept "inf" and "nan"; DS allows neither, so reject letters other than e/E.
  for (const char c : digits) {
    const bool allowed = (c >= '0' && c <= '9') || c == '.' || c == '-' || c == '+' || c == 'e' || c == 'E';
    if (!allowed) return std::nullopt;
  }
  double value = 0.0;
  const auto [end, error] = std::from_chars(digits.data(), digits.data() + digits.size(), value);
  if (error != std::errc{} || end != digits.data() + digits.size() || !std::isfinite(value))
    return std::nullopt;
  return value;
}

std::optional<long long> parse_integer(const std::string& text) {
  const std::string trimmed = trim(text);
  const std::string_view digits = without_plus(trimmed);
  if (digits.empty()) return std::nullopt;
  long long value = 0;
  const auto [end, error] = std::from_chars(digits.data(), digits.data() + digits.size(), value);
  if (error != std::errc{} || end != digits.data() + digits.size()) return std::nullopt;
  return value;
}

ItemReader::ItemReader(DcmItem& item, const std::string& file, std::string where, ErrorSink& sink)
    : ItemReader(item, file, std::move(where), sink, TextDecoder::for_item(item, nullptr)) {}

ItemReader::ItemReader(DcmItem& item, const std::string& file, std::string where, ErrorSink& sink,
                       std::shared_ptr<TextDecoder> decoder)
    : item_(&item), file_(&file), where_(std::move(where)), sink_(&sink), decoder_(std::move(decoder)) {}

void ItemReader::warn_replaced(const DcmTagKey& tag, std::size_t replaced_bytes) const {
  const std::string& declared = decoder_->declared();
  // Both are UTF-8 already; what they may hold of control characters is escaped where shown.
  const std::string set = declared.empty() ? "the default character repertoire (no SpecificCharacterSet)"
                                           : "SpecificCharacterSet \"" + declared + "\"";
  const std::string why = decoder_->unusable_reason().empty()
                              ? std::string{}
                              : " (" + valid_utf8(decoder_->unusable_reason()) + ")";
  const std::string located = where_.empty() ? std::string{} : " in " + where_;
  sink_->warn(fmt::format("{} {}{}: {} byte(s) could not be decoded as {}{} and are shown as U+FFFD",
                          keyword(tag), tag_text(tag), located, replaced_bytes, set, why));
}

DcmElement* ItemReader::element(const DcmTagKey& tag) const {
  DcmElement* found = nullptr;
  if (item_->findAndGetElement(tag, found, OFFalse /*searchIntoSub*/).bad()) return nullptr;
  return found;
}

bool ItemReader::present(const DcmTagKey& tag) const { return element(tag) != nullptr; }

bool ItemReader::has(const DcmTagKey& tag) const {
  DcmElement* found = element(tag);
  if (found == nullptr) return false;
  if (found->ident() == EVR_SQ)
    return found->getVM() > 0 || static_cast<DcmSequenceOfItems*>(found)->card() > 0;
  return found->getLength() > 0;
}

void ItemReader::fail(ErrorKind kind, const DcmTagKey& tag, const std::string& detail) const {
  const std::string located = where_.empty() ? detail : "in " + where_ + ": " + detail;
  sink_->fail(Error{kind, *file_, keyword(tag), tag_text(tag), located});
}

std::string ItemReader::text(const DcmTagKey& tag, Need need) const {
  DcmElement* found = element(tag);
  if (found == nullptr || found->getLength() == 0) {
    if (need == Need::required)
      fail(ErrorKind::missing_attribute, tag, found ? "present but empty" : "missing");
    return {};
  }
  if (!is_text_vr(found->ident())) {
    fail(ErrorKind::bad_value, tag,
         fmt::format("stored with VR {}, expected a text VR", DcmVR(found->ident()).getVRName()));
    return {};
  }
  OFString value;
  if (found->getOFStringArray(value).bad()) {
    fail(ErrorKind::bad_value, tag, "value cannot be read");
    return {};
  }
  const DecodedText decoded =
      decoder_->decode(std::string_view{value.c_str(), value.length()}, found->ident());
  if (decoded.replaced_bytes > 0) warn_replaced(tag, decoded.replaced_bytes);
  return trim(decoded.utf8);
}

std::optional<std::vector<double>> ItemReader::all_numbers(const DcmTagKey& tag, Need need) const {
  DcmElement* found = element(tag);
  if (found == nullptr || found->getLength() == 0) {
    if (need == Need::required)
      fail(ErrorKind::missing_attribute, tag, found ? "present but empty" : "missing");
    return std::nullopt;
  }
  std::vector<double> values;
  const DcmEVR vr = found->ident();
  // DS and IS: the whole value split once. DCMTK's getOFString(value, i) rescans the string for
  // each i, which is quadratic in the number of values (MLC leaf positions, or a hostile file).
  std::vector<std::string> texts;
  if (vr == EVR_DS || vr == EVR_IS) {
    OFString all;
    if (found->getOFStringArray(all, OFFalse).bad()) {
      fail(ErrorKind::bad_value, tag, "cannot be read as text");
      return std::nullopt;
    }
    const std::string_view whole(all.c_str(), all.length());
    std::size_t start = 0;
    for (std::size_t end = whole.find('\\'); end != std::string_view::npos; end = whole.find('\\', start)) {
      texts.emplace_back(whole.substr(start, end - start));
      start = end + 1;
    }
    texts.emplace_back(whole.substr(start));
  }
  const unsigned long count = texts.empty() ? found->getVM() : static_cast<unsigned long>(texts.size());
  values.reserve(count);
  for (unsigned long i = 0; i < count; ++i) {
    std::optional<double> value;
    switch (vr) {
      case EVR_DS:
      case EVR_IS: {
        const std::string& raw = texts[i];
        value = (vr == EVR_DS) ? parse_decimal(raw) : [&raw]() -> std::optional<double> {
          const auto integer = parse_integer(raw);
          return integer ? std::optional<double>(static_cast<double>(*integer)) : std::nullopt;
        }();
        if (!value) {
          fail(ErrorKind::bad_value, tag,
               fmt::format("value {} \"{}\" is not a finite {} number", i + 1, printable(raw),
                           vr == EVR_DS ? "decimal" : "integer"));
          return std::nullopt;
        }
        break;
      }
      case EVR_FL: {
        Float32 v = 0;
        if (found->getFloat32(v, i).good()) value = static_cast<double>(v);
        break;
      }
      case EVR_FD: {
        Float64 v = 0;
        if (found->getFloat64(v, i).good()) value = v;
        break;
      }
      case EVR_US: {
        Uint16 v = 0;
        if (found->getUint16(v, i).good()) value = v;
        break;
      }
      case EVR_SS: {
        Sint16 v = 0;
        if (found->getSint16(v, i).good()) value = v;
        break;
      }
      case EVR_UL: {
        Uint32 v = 0;
        if (found->getUint32(v, i).good()) value = v;
        break;
      }
      case EVR_SL: {
        Sint32 v = 0;
        if (found->getSint32(v, i).good()) value = v;
        break;
      }
      default:
        fail(ErrorKind::bad_value, tag,
             fmt::format("stored with VR {}, expected a numeric VR", DcmVR(vr).getVRName()));
        return std::nullopt;
    }
    if (!value || !std::isfinite(*value)) {
      fail(ErrorKind::bad_value, tag, fmt::format("value {} is not a finite number", i + 1));
      return std::nullopt;
    }
    values.push_back(*value);
  }
  if (values.empty()) {
    if (need == Need::required) fail(ErrorKind::missing_attribute, tag, "present but has no value");
    return std::nullopt;
  }
  return values;
}

std::optional<std::vector<double>> ItemReader::numbers(const DcmTagKey& tag, Need need,
                                                       std::size_t count) const {
  auto values = all_numbers(tag, need);
  if (values && count != 0 && values->size() != count) {
    fail(ErrorKind::bad_value, tag, fmt::format("has {} values, expected {}", values->size(), count));
    return std::nullopt;
  }
  return values;
}

std::optional<double> ItemReader::number(const DcmTagKey& tag, Need need) const {
  const auto values = numbers(tag, need, 1);
  if (!values) return std::nullopt;
  return values->front();
}

std::optional<int> ItemReader::integer(const DcmTagKey& tag, Need need) const {
  const auto value = number(tag, need);
  if (!value) return std::nullopt;
  if (*value != std::floor(*value) || std::abs(*value) > std::numeric_limits<int>::max()) {
    fail(ErrorKind::bad_value, tag, fmt::format("value {} is not an integer", *value));
    return std::nullopt;
  }
  return static_cast<int>(*value);
}

ItemReader ItemReader::described(const std::string& suffix) const {
  return ItemReader(*item_, *file_, where_ + suffix, *sink_, decoder_);
}

std::vector<ItemReader> ItemReader::sequence(const DcmTagKey& tag, Need need) const {
  std::vector<ItemReader> items;
  DcmElement* found = element(tag);
  if (found == nullptr) {
    if (need == Need::required) fail(ErrorKind::missing_attribute, tag, "missing");
    return items;
  }
  if (found->ident() != EVR_SQ) {
    fail(ErrorKind::bad_value, tag,
         fmt::format("stored with VR {}, expected SQ", DcmVR(found->ident()).getVRName()));
    return items;
  }
  auto* sequence = static_cast<DcmSequenceOfItems*>(found);
  const unsigned long count = sequence->card();
  if (count == 0 && need == Need::required) {
    fail(ErrorKind::missing_attribute, tag, "has no items");
    return items;
  }
  const std::string prefix = where_.empty() ? std::string{} : where_ + " > ";
  for (unsigned long i = 0; i < count; ++i) {
    DcmItem* child = sequence->getItem(i);
    if (child == nullptr) continue;
    items.push_back(ItemReader(*child, *file_, fmt::format("{}{} item {}", prefix, keyword(tag), i + 1),
                               *sink_, TextDecoder::for_item(*child, decoder_)));
  }
  return items;
}

std::optional<double> ItemReader::within(const DcmTagKey& tag, std::optional<double> value, double low,
                                         double high, const char* unit) const {
  if (!value) return value;
  if (*value < low || *value > high) {
    fail(
        ErrorKind::bad_value, tag,
        fmt::format("value {} {} is outside the plausible range {} to {} {}", *value, unit, low, high, unit));
    return std::nullopt;
  }
  return value;
}

}  // namespace countersign::dicom::detail
