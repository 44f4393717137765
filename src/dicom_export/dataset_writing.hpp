#pragma once

// Small helpers for writing the exported objects with plain DcmItem calls (internal to
// dicom_export). A failure to put a value is a defect of ours (a wrong VR or tag), reported by
// throwing ExportDefect, which the public functions turn into an Error.

#include <countersign/dicom_export/result_codes.hpp>

#include <dcmtk/config/osconfig.h>  // must come first among DCMTK headers

#include <dcmtk/dcmdata/dcitem.h>

#include <chrono>
#include <stdexcept>
#include <string>
#include <string_view>

namespace countersign::dicom_export::detail {

struct ExportDefect : std::runtime_error {
  using std::runtime_error::runtime_error;
};

void put(DcmItem& item, const DcmTagKey& tag, std::string_view value);
// Appends a new item to `sequence` (creating it) and returns it.
DcmItem& append_item(DcmItem& parent, const DcmTagKey& sequence);
// An empty sequence (type 2).
void put_empty_sequence(DcmItem& item, const DcmTagKey& sequence);
// One item with Code Value (or Long Code Value), Coding Scheme Designator and Code Meaning.
void put_code(DcmItem& parent, const DcmTagKey& sequence, const Code& code);

// A decimal string (DS) of at most 16 characters and `significant_digits` significant digits.
[[nodiscard]] std::string decimal_string(double value, int significant_digits = 10);

// A new UID derived from a random UUID (PS3.5 B.2: "2.25." and the UUID as one decimal integer).
[[nodiscard]] std::string new_uuid_uid();

// DA, TM and the UTC offset ("+HHMM") of a time point in the local time zone.
struct LocalDateTime {
  std::string date;
  std::string time;
  std::string utc_offset;
};
[[nodiscard]] LocalDateTime local_date_time(std::chrono::system_clock::time_point when);

}  // namespace countersign::dicom_export::detail
