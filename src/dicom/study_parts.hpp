#pragma once

// Internal steps of the study reader (read_study.cpp): the structure set and the CT series.

#include "item_reader.hpp"

#include <dcmtk/dcmdata/dcfilefo.h>

#include <countersign/study/problem.hpp>
#include <countersign/study/study.hpp>
#include <countersign/util/error.hpp>

#include <filesystem>
#include <memory>
#include <optional>
#include <vector>

namespace countersign::dicom::detail {

// The structure set's references and ROIs, and the contours of its EXTERNAL ROI (if exactly one).
struct ParsedStructureSet {
  study::StructureSet summary;
  std::optional<std::size_t> external;  // index into summary.rois of the EXTERNAL ROI
  std::vector<study::PlanarContour> external_contours;
  std::vector<std::string> notes;
};

[[nodiscard]] study::Result<ParsedStructureSet> read_structure_set(const std::filesystem::path& path);

// The CT series of these files (one SOP instance each) as one volume.
[[nodiscard]] study::Result<study::CtVolume> read_ct_series(const std::vector<std::filesystem::path>& files);

// A reader Error as a study problem of the given kind.
[[nodiscard]] study::Problem as_problem(const Error& error,
                                        study::ProblemKind kind = study::ProblemKind::study_file_invalid);

// Loads a Part 10 file; large values (pixel data, contour data) are read when first accessed.
// stop_at: parsing stops at this tag or any higher one (DcmTagKey() = read all).
[[nodiscard]] Expected<std::unique_ptr<DcmFileFormat>> load_part10(const std::filesystem::path& path,
                                                                   const DcmTagKey& stop_at);

}  // namespace countersign::dicom::detail
