#pragma once

// Which files are plan files: the one rule `check FOLDER` and the folder watcher share.
//
// By name, every file is a candidate except hidden and temporary ones (see is_candidate_name); the
// name says nothing more: "RP1.2.3", "RP.X.DCM" and "plan.dcm" are all candidates. By content, a
// candidate is a plan file when it holds a DICOM object (with or without the Part 10 preamble)
// whose SOP class is RT Plan; the reader decides that while it reads (content_of).

#include <countersign/util/error.hpp>

#include <filesystem>
#include <string_view>
#include <vector>

namespace countersign::dicom {

// False for names no exporter means as a finished file and for countersign's own files: hidden
// names (a leading dot: temporary files of exporters, of the receiver and of atomic writes) and
// names ending in .part, .partial, .tmp, .temp, .swp, "~" or .reason.txt (quarantine notes).
[[nodiscard]] bool is_candidate_name(std::string_view file_name);

enum class Subfolders { ignore, include };

struct FolderListing {
  std::vector<std::filesystem::path> files;  // regular files with candidate names, sorted
  std::vector<std::filesystem::path>
      subfolders;  // with candidate names: listed (include) or passed over (ignore)
};

// The candidate files of `folder` (and, with Subfolders::include, of its subfolders, to any depth).
// Symbolic links are not followed. A folder that cannot be listed gives what could be listed.
[[nodiscard]] FolderListing list_candidates(const std::filesystem::path& folder, Subfolders subfolders);

enum class FileContent {
  rt_plan,       // an RT Plan, read or with the errors the reader found (truncated, missing attribute...)
  other_object,  // a DICOM object of another SOP class (CT, RT Dose, RT Ion Plan...): not a plan file
  not_dicom,     // not DICOM at all (a text file, an empty file): not a plan file
  unreadable,    // the file could not be read (I/O): its content is unknown
};

// What a candidate held, from the reader's error (a plan that reads is FileContent::rt_plan).
[[nodiscard]] FileContent content_of(const Error& read_error);

}  // namespace countersign::dicom
