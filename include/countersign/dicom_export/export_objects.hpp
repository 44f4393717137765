#pragma once

// The result of a check as DICOM objects for the department's archive or treatment-management
// system: a Comprehensive SR with the per-beam numbers and verdicts, and the printable record as an
// Encapsulated PDF. Both go into the plan's own study (Study Instance UID and the Patient and General
// Study modules copied from the plan file), each in a new series, and both reference the plan
// (SR: a COMPOSITE content item and the Current Requested Procedure Evidence Sequence; PDF: the
// Source Instance Sequence). The SR is marked UNVERIFIED: nobody has signed it. Both carry the
// caution that the check supports, and does not replace, the physicist's review.
//
// Concepts no standard code fits use the project's own coding scheme "99CSIGN" (result_codes.hpp,
// documented in the README); units use UCUM.

#include <countersign/check/check_plan.hpp>
#include <countersign/util/error.hpp>

#include <chrono>
#include <filesystem>
#include <string>

namespace countersign::dicom_export {

inline constexpr const char* comprehensive_sr_sop_class = "1.2.840.10008.5.1.4.1.1.88.33";
inline constexpr const char* encapsulated_pdf_sop_class = "1.2.840.10008.5.1.4.1.1.104.1";

struct ExportOptions {
  std::chrono::system_clock::time_point created = std::chrono::system_clock::now();
  std::string station_name;  // (0008,1010) of the exported objects; empty: not written
};

// One written object and where it belongs.
struct ExportedObject {
  std::filesystem::path file;
  std::string sop_class_uid;
  std::string sop_instance_uid;
  std::string series_instance_uid;
  std::string study_instance_uid;
};

// Writes the structured result of `check` (made from `plan_file`) to `output` as a DICOM file
// (Explicit VR Little Endian). Errors name the plan file (it cannot be read again, or lacks a Study
// Instance UID) or the output file.
[[nodiscard]] Expected<ExportedObject> write_result_sr(const check::PlanCheck& check,
                                                       const std::filesystem::path& plan_file,
                                                       const std::filesystem::path& output,
                                                       const ExportOptions& options = {});

// Wraps `pdf_file` (the printable record of `check`) as an Encapsulated PDF and writes it to `output`.
[[nodiscard]] Expected<ExportedObject> write_record_pdf(const check::PlanCheck& check,
                                                        const std::filesystem::path& plan_file,
                                                        const std::filesystem::path& pdf_file,
                                                        const std::filesystem::path& output,
                                                        const ExportOptions& options = {});

// The same for a record kept from an earlier check (the services keep the record and the plan
// file of every check): only the plan's label is needed besides the files.
[[nodiscard]] Expected<ExportedObject> write_record_pdf(const std::string& plan_label,
                                                        const std::filesystem::path& plan_file,
                                                        const std::filesystem::path& pdf_file,
                                                        const std::filesystem::path& output,
                                                        const ExportOptions& options = {});

}  // namespace countersign::dicom_export
