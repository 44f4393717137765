#pragma once

// Study reader: finds, among files and folders, the RT Structure Set a plan refers to (Referenced
// Structure Set Sequence (300C,0060)) and through its Referenced Frame of Reference Sequence
// (3006,0010) the CT series (CT Image Storage), checks that the Frame of Reference UIDs agree, and
// reads the CT into one volume and the body outline onto its grid. Anything that makes the geometry
// unusable is a study::Problem with a stable code (never a silent fall-back to water).
//
// Supported: Part 10 files, uncompressed pixel data (any of DCMTK's uncompressed transfer syntaxes),
// transverse slices (rows along +-x, columns along +-y) stacked along z at even spacing.

#include <countersign/plan/plan.hpp>
#include <countersign/study/problem.hpp>
#include <countersign/study/study.hpp>

#include <filesystem>
#include <span>
#include <string>
#include <vector>

namespace countersign::dicom {

inline constexpr const char* ct_image_storage_uid = "1.2.840.10008.5.1.4.1.1.2";
inline constexpr const char* rt_structure_set_storage_uid = "1.2.840.10008.5.1.4.1.1.481.3";

// Slice positions agree (even spacing, same x/y origin) when they differ by no more than this.
inline constexpr double slice_position_tolerance_mm = 0.05;

// One DICOM object found while indexing: its identity, read from the header only.
struct StudyFile {
  std::filesystem::path path;
  std::string sop_class_uid;           // (0008,0016)
  std::string sop_instance_uid;        // (0008,0018)
  std::string study_instance_uid;      // (0020,000D)
  std::string series_instance_uid;     // (0020,000E)
  std::string frame_of_reference_uid;  // (0020,0052); empty for objects without one (RT Structure Set)
};

struct StudyFileIndex {
  std::vector<StudyFile> files;                  // DICOM Part 10 objects, sorted by path
  std::vector<std::filesystem::path> not_dicom;  // files without a DICOM preamble or unreadable (ignored)
};

// Indexes the files given and every regular file under the folders given (recursively; clinical
// exports often have no .dcm extension). Only headers are read.
[[nodiscard]] StudyFileIndex index_study_files(std::span<const std::filesystem::path> files_or_folders);

// The study of the structure set with this SOP Instance UID. plan_frame_of_reference_uid, when not
// empty, must equal the structure set's and the CT's.
[[nodiscard]] study::Result<study::Study> load_study(const StudyFileIndex& index,
                                                     const std::string& structure_set_uid,
                                                     const std::string& plan_frame_of_reference_uid);

// The study a plan was made on, found among the files and folders given (e.g. the folder the plan
// was exported to): `check STUDY_FOLDER/` needs nothing else.
[[nodiscard]] study::Result<study::Study> load_study_for_plan(
    const plan::Plan& plan, std::span<const std::filesystem::path> files_or_folders);

// How much of a plan's study has arrived among indexed files, for a service that waits for it: the
// structure set with this SOP Instance UID, and the CT images its contours were drawn on (Contour
// Image Sequence (3006,0016)); when it lists none, any CT Image Storage file of its series counts.
struct StudyArrival {
  bool structure_set_found = false;
  std::string ct_series_uid;    // the structure set's CT series (empty until it has arrived)
  std::size_t ct_expected = 0;  // images its contours name (0: it names none)
  std::size_t ct_found = 0;     // of them (or of the series) among the files
  [[nodiscard]] bool complete() const {
    return structure_set_found && ct_found > 0 && ct_found >= ct_expected;
  }
  // What is still missing, e.g. "RT Structure Set 1.2.3" or "12 of 20 CT images of series 1.2.4".
  [[nodiscard]] std::string missing(const std::string& structure_set_uid) const;
};

[[nodiscard]] StudyArrival study_arrival(const StudyFileIndex& index, const std::string& structure_set_uid);

}  // namespace countersign::dicom
