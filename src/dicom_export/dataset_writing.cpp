#include "dataset_writing.hpp"

#include <dcmtk/dcmdata/dcdeftag.h>

#include <fmt/format.h>

#include <array>
#include <cmath>
#include <ctime>
#include <random>

namespace countersign::dicom_export::detail {

void put(DcmItem& item, const DcmTagKey& tag, std::string_view value) {
  const std::string text{value};
  if (item.putAndInsertString(tag, text.c_str()).bad()) {
    throw ExportDefect("cannot write " + std::string{DcmTag(tag).toString().c_str()} + " = \"" + text + "\"");
  }
}

DcmItem& append_item(DcmItem& parent, const DcmTagKey& sequence) {
  DcmItem* item = nullptr;
  if (parent.findOrCreateSequenceItem(sequence, item, -2).bad() || item == nullptr) {
    throw ExportDefect("cannot add an item to " + std::string{DcmTag(sequence).toString().c_str()});
  }
  return *item;
}

void put_empty_sequence(DcmItem& item, const DcmTagKey& sequence) {
  if (item.insertEmptyElement(sequence).bad()) {
    throw ExportDefect("cannot write the empty sequence " + std::string{DcmTag(sequence).toString().c_str()});
  }
}

void put_code(DcmItem& parent, const DcmTagKey& sequence, const Code& code) {
  DcmItem& item = append_item(parent, sequence);
  put(item, DCM_CodeValue, code.value);
  put(item, DCM_CodingSchemeDesignator, code.scheme);
  put(item, DCM_CodeMeaning, code.meaning);
}

std::string decimal_string(double value, int significant_digits) {
  if (std::abs(value) < 5e-12) value = 0.0;
  for (int precision = significant_digits; precision > 0; --precision) {
    std::string text = fmt::format("{:.{}g}", value, precision);
    if (text.size() <= 16) return text;
  }
  throw ExportDefect("a value does not fit a decimal string");
}

std::string new_uuid_uid() {
  std::random_device random;
  std::array<std::uint32_t, 4> limbs{};  // most significant first
  for (auto& limb : limbs) limb = static_cast<std::uint32_t>(random());
  limbs[1] = (limbs[1] & 0xFFFF0FFFU) | 0x00004000U;  // version 4 (random)
  limbs[2] = (limbs[2] & 0x3FFFFFFFU) | 0x80000000U;  // variant 1
  // The 128-bit number in decimal: repeated division by 10 over the limbs.
  std::string digits;
  while (limbs[0] != 0 || limbs[1] != 0 || limbs[2] != 0 || limbs[3] != 0) {
    std::uint64_t remainder = 0;
    for (auto& limb : limbs) {
      const std::uint64_t current = (remainder << 32) | limb;
      limb = static_cast<std::uint32_t>(current / 10);
      remainder = current % 10;
    }
    digits.insert(digits.begin(), static_cast<char>('0' + remainder));
  }
  return "2.25." + (digits.empty() ? std::string{"0"} : digits);
}

LocalDateTime local_date_time(std::chrono::system_clock::time_point when) {
  const std::time_t seconds = std::chrono::system_clock::to_time_t(when);
  std::tm local{};
  ::localtime_r(&seconds, &local);
  std::array<char, 16> date{};
  std::array<char, 16> time{};
  std::array<char, 16> offset{};
  std::strftime(date.data(), date.size(), "%Y%m%d", &local);
  std::strftime(time.data(), time.size(), "%H%M%S", &local);
  std::strftime(offset.data(), offset.size(), "%z", &local);
  return {date.data(), time.data(), offset.data()};
}

}  // namespace countersign::dicom_export::detail
