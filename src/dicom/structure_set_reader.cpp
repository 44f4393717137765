// RT Structure Set: what it refers to (Frame of Reference, CT series, images), its ROIs and their
// interpreted types, and the contours of the EXTERNAL ROI.

#include <countersign/dicom/read_study.hpp>

#include "study_parts.hpp"

#include <dcmtk/dcmdata/dcdeftag.h>

#include <fmt/format.h>

#include <algorithm>
#include <cmath>

namespace countersign::dicom::detail {

namespace {

using study::Problem;
using study::ProblemKind;

struct ReferencedSeries {
  std::string frame_of_reference_uid;
  std::string series_uid;
  std::vector<std::string> image_uids;
};

// Referenced Frame of Reference Sequence > RT Referenced Study Sequence > RT Referenced Series Sequence.
std::vector<ReferencedSeries> referenced_series(const ItemReader& top, std::vector<std::string>& frames) {
  std::vector<ReferencedSeries> found;
  for (const auto& frame : top.sequence(DCM_ReferencedFrameOfReferenceSequence, Need::optional)) {
    const std::string frame_uid = frame.text(DCM_FrameOfReferenceUID, Need::required);
    frames.push_back(frame_uid);
    for (const auto& study_item : frame.sequence(DCM_RTReferencedStudySequence, Need::optional)) {
      for (const auto& series_item : study_item.sequence(DCM_RTReferencedSeriesSequence, Need::required)) {
        ReferencedSeries series{frame_uid, series_item.text(DCM_SeriesInstanceUID, Need::required), {}};
        for (const auto& image : series_item.sequence(DCM_ContourImageSequence, Need::optional))
          series.image_uids.push_back(image.text(DCM_ReferencedSOPInstanceUID, Need::required));
        found.push_back(std::move(series));
      }
    }
  }
  return found;
}

std::vector<study::RoiSummary> read_rois(const ItemReader& top) {
  std::vector<study::RoiSummary> rois;
  for (const auto& item : top.sequence(DCM_StructureSetROISequence, Need::required)) {
    study::RoiSummary roi;
    roi.number = item.integer(DCM_ROINumber, Need::required).value_or(0);
    roi.name = item.text(DCM_ROIName, Need::optional);
    roi.frame_of_reference_uid = item.text(DCM_ReferencedFrameOfReferenceUID, Need::required);
    rois.push_back(std::move(roi));
  }
  for (const auto& item : top.sequence(DCM_RTROIObservationsSequence, Need::optional)) {
    const auto number = item.integer(DCM_ReferencedROINumber, Need::required);
    const std::string type = item.text(DCM_RTROIInterpretedType, Need::optional);
    for (auto& roi : rois) {
      if (number && roi.number == *number && !type.empty()) roi.interpreted_type = type;
    }
  }
  return rois;
}

// One CLOSED_PLANAR contour item; nullopt (with the sink or `problem` set) when unusable.
std::optional<study::PlanarContour> read_contour(const ItemReader& item, std::optional<Problem>& problem) {
  const auto count = item.integer(DCM_NumberOfContourPoints, Need::required);
  if (item.failed()) return std::nullopt;
  if (*count < 3) {
    problem = Problem{ProblemKind::body_contour_invalid, item.file(), keyword(DCM_NumberOfContourPoints),
                      tag_text(DCM_NumberOfContourPoints),
                      fmt::format("in {}: a closed planar contour needs 3 or more points, it has {}",
                                  item.where(), *count)};
    return std::nullopt;
  }
  const auto data = item.numbers(DCM_ContourData, Need::required, static_cast<std::size_t>(*count) * 3);
  if (!data) return std::nullopt;
  study::PlanarContour contour;
  contour.z_mm = (*data)[2];
  contour.points_mm.reserve(static_cast<std::size_t>(*count));
  for (std::size_t p = 0; p < data->size(); p += 3) {
    if (std::abs((*data)[p + 2] - contour.z_mm) > study::planar_tolerance_mm) {
      problem = Problem{
          ProblemKind::body_contour_invalid, item.file(), keyword(DCM_ContourData), tag_text(DCM_ContourData),
          fmt::format("in {}: CLOSED_PLANAR contour is not in one transverse plane (z = {} and {} "
                      "mm)",
                      item.where(), contour.z_mm, (*data)[p + 2])};
      return std::nullopt;
    }
    contour.points_mm.push_back({(*data)[p], (*data)[p + 1]});
  }
  return contour;
}

// The closed planar contours of one ROI; other geometric types are counted and left out.
std::optional<Problem> read_roi_contours(const ItemReader& top, ParsedStructureSet& parsed) {
  std::optional<Problem> problem;
  std::size_t other_types = 0;
  for (const auto& roi : top.sequence(DCM_ROIContourSequence, Need::optional)) {
    if (roi.integer(DCM_ReferencedROINumber, Need::required) != parsed.summary.rois[*parsed.external].number)
      continue;
    for (const auto& item : roi.sequence(DCM_ContourSequence, Need::optional)) {
      if (item.text(DCM_ContourGeometricType, Need::required) != "CLOSED_PLANAR") {
        ++other_types;
        continue;
      }
      auto contour = read_contour(item, problem);
      if (problem || item.failed()) return problem;
      parsed.external_contours.push_back(std::move(*contour));
    }
  }
  if (other_types > 0)
    parsed.notes.push_back(fmt::format("body: {} EXTERNAL contours not CLOSED_PLANAR ignored", other_types));
  return problem;
}

// The single referenced series, or the one in the EXTERNAL ROI's frame when several are referenced.
std::optional<Problem> choose_series(const std::vector<ReferencedSeries>& series,
                                     ParsedStructureSet& parsed) {
  std::vector<const ReferencedSeries*> candidates;
  for (const auto& s : series) {
    const bool in_body_frame =
        parsed.external &&
        s.frame_of_reference_uid == parsed.summary.rois[*parsed.external].frame_of_reference_uid;
    if (series.size() == 1 || in_body_frame) candidates.push_back(&s);
  }
  if (candidates.size() > 1) {
    return Problem{
        ProblemKind::study_ambiguous, parsed.summary.file, keyword(DCM_RTReferencedSeriesSequence),
        tag_text(DCM_RTReferencedSeriesSequence),
        fmt::format("the structure set refers to {} image series; cannot tell which is the planning CT",
                    candidates.size())};
  }
  if (candidates.size() == 1) {
    parsed.summary.frame_of_reference_uid = candidates.front()->frame_of_reference_uid;
    parsed.summary.ct_series_uid = candidates.front()->series_uid;
    parsed.summary.contour_image_uids = candidates.front()->image_uids;
  }
  return std::nullopt;
}

}  // namespace

study::Result<ParsedStructureSet> read_structure_set(const std::filesystem::path& path) {
  auto file = load_part10(path, DCM_UndefinedTagKey);
  if (!file) return as_problem(file.error());
  ParsedStructureSet parsed;
  parsed.summary.file = path.string();
  ErrorSink sink;
  const ItemReader top(*file.value()->getDataset(), parsed.summary.file, "", sink);
  parsed.summary.sop_instance_uid = top.text(DCM_SOPInstanceUID, Need::required);
  parsed.summary.label = top.text(DCM_StructureSetLabel, Need::required);
  std::vector<std::string> frames;
  const auto series = referenced_series(top, frames);
  parsed.summary.rois = read_rois(top);
  if (sink.failed()) return as_problem(sink.error());

  std::vector<const study::RoiSummary*> externals;
  for (std::size_t r = 0; r < parsed.summary.rois.size(); ++r) {
    if (parsed.summary.rois[r].interpreted_type != "EXTERNAL") continue;
    externals.push_back(&parsed.summary.rois[r]);
    parsed.external = r;
  }
  if (externals.size() > 1) {
    return Problem{
        ProblemKind::study_ambiguous, parsed.summary.file, keyword(DCM_RTROIInterpretedType),
        tag_text(DCM_RTROIInterpretedType),
        fmt::format("{} ROIs are of type EXTERNAL (ROI {} \"{}\" and ROI {} \"{}\"); the body must be one",
                    externals.size(), externals[0]->number, externals[0]->name, externals[1]->number,
                    externals[1]->name)};
  }
  if (auto problem = choose_series(series, parsed)) return *problem;
  if (parsed.summary.frame_of_reference_uid.empty() && frames.size() == 1)
    parsed.summary.frame_of_reference_uid = frames.front();
  if (parsed.external) {
    if (auto problem = read_roi_contours(top, parsed)) return *problem;
  }
  if (sink.failed()) return as_problem(sink.error());
  return parsed;
}

}  // namespace countersign::dicom::detail
