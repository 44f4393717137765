#pragma once

// The DICOM objects of a recorded check, for the department's archive: the structured result (SR)
// kept with the record when the check was made (sent as it was made, so that sending again sends
// the same instance), and the printable record as an Encapsulated PDF (made once with headless
// Chromium from the record kept, and kept beside it as <check id>.pdf.dcm when the folder is
// writable). Files are compared with the hashes the audit trail recorded: a file that differs is
// never sent.

#include <countersign/store/records.hpp>
#include <countersign/util/error.hpp>

#include <filesystem>
#include <optional>
#include <string>
#include <vector>

namespace countersign::service {

struct RecordObject {
  std::filesystem::path file;
  std::string kind;  // "sr" or "pdf"
  std::string sop_instance_uid;
  std::string description;  // "structured result (SR) of check #17 (plan 1.2.3…)"
};

struct RecordObjects {
  std::vector<RecordObject> objects;
  std::vector<std::string> notes;  // why an object is not among them (no Chromium, ...)
};

enum class KeepPdf { yes, no };

// The objects of `check`, whose files are under `results` (its results folder as seen from here);
// a PDF made now is written in `work` (and kept beside the record with KeepPdf::yes). An error
// when the SR is missing or differs from what was recorded.
[[nodiscard]] Expected<RecordObjects> record_objects(const store::CheckRecord& check,
                                                     const std::filesystem::path& results,
                                                     const std::optional<std::filesystem::path>& chromium,
                                                     const std::filesystem::path& work, KeepPdf keep);

// SHA-256 of a file's bytes; nullopt when it cannot be read.
[[nodiscard]] std::optional<std::string> sha256_of_file(const std::filesystem::path& file);

}  // namespace countersign::service
