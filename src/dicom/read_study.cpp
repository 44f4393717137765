// From a plan's structure-set reference to a Study: find the structure set, check the Frame of
// Reference, find and read the CT series, check the images the contours were drawn on, and make
// the body outline.

#include <countersign/dicom/read_study.hpp>

#include "study_parts.hpp"

#include <dcmtk/dcmdata/dcdeftag.h>

#include <fmt/format.h>

#include <algorithm>
#include <set>

namespace countersign::dicom {

namespace {

using study::Problem;
using study::ProblemKind;

Problem attribute_problem(ProblemKind kind, const std::string& file, const DcmTagKey& tag,
                          std::string detail) {
  return Problem{kind, file, detail::keyword(tag), detail::tag_text(tag), std::move(detail)};
}

study::Result<const StudyFile*> find_structure_set(const StudyFileIndex& index, const std::string& uid) {
  for (const auto& file : index.files) {
    if (file.sop_instance_uid == uid && file.sop_class_uid == rt_structure_set_storage_uid) return &file;
  }
  std::string detail = fmt::format(
      "no RT Structure Set with SOP Instance UID {} among the {} DICOM files given", uid, index.files.size());
  for (const auto& file : index.files) {
    if (file.sop_instance_uid == uid)
      detail = fmt::format(
          "{} has the referenced SOP Instance UID {} but is not an RT Structure Set (SOP Class UID "
          "{})",
          file.path.string(), uid, file.sop_class_uid);
  }
  return Problem{ProblemKind::structure_set_not_found, "", "", "", detail};
}

// The Frame of Reference of the structure set: its referenced frame, else the one its ROIs share.
std::string structure_set_frame(const detail::ParsedStructureSet& parsed) {
  if (!parsed.summary.frame_of_reference_uid.empty()) return parsed.summary.frame_of_reference_uid;
  std::set<std::string> frames;
  for (const auto& roi : parsed.summary.rois) frames.insert(roi.frame_of_reference_uid);
  return frames.size() == 1 ? *frames.begin() : std::string{};
}

std::optional<Problem> check_frames(const detail::ParsedStructureSet& parsed, const std::string& frame,
                                    const std::string& plan_frame) {
  const std::string& file = parsed.summary.file;
  if (frame.empty()) {
    return attribute_problem(ProblemKind::frame_of_reference_mismatch, file,
                             DCM_ReferencedFrameOfReferenceSequence,
                             "the structure set names no single Frame of Reference for its ROIs");
  }
  if (!plan_frame.empty() && plan_frame != frame) {
    return attribute_problem(
        ProblemKind::frame_of_reference_mismatch, file, DCM_FrameOfReferenceUID,
        fmt::format("the structure set's Frame of Reference {} differs from the plan's {}", frame,
                    plan_frame));
  }
  if (parsed.external && parsed.summary.rois[*parsed.external].frame_of_reference_uid != frame) {
    const auto& roi = parsed.summary.rois[*parsed.external];
    return attribute_problem(
        ProblemKind::frame_of_reference_mismatch, file, DCM_ReferencedFrameOfReferenceUID,
        fmt::format("EXTERNAL ROI {} \"{}\" is in Frame of Reference {}, the CT series in {}", roi.number,
                    roi.name, roi.frame_of_reference_uid, frame));
  }
  return std::nullopt;
}

// The CT Image Storage files of the structure set's series (or, when it names none, of its frame).
study::Result<std::vector<std::filesystem::path>> find_ct_files(const StudyFileIndex& index,
                                                                const detail::ParsedStructureSet& parsed,
                                                                const std::string& frame,
                                                                std::vector<std::string>& notes) {
  const std::string& series = parsed.summary.ct_series_uid;
  std::vector<std::filesystem::path> paths;
  std::set<std::string> instances;
  std::set<std::string> series_seen;
  std::size_t other_class = 0;
  std::size_t duplicates = 0;
  for (const auto& file : index.files) {
    const bool wanted =
        series.empty() ? file.frame_of_reference_uid == frame : file.series_instance_uid == series;
    if (!wanted) continue;
    if (file.sop_class_uid != ct_image_storage_uid) {
      other_class += series.empty() ? 0 : 1;
      continue;
    }
    if (!instances.insert(file.sop_instance_uid).second) {
      ++duplicates;  // the same slice twice (a copy); one is enough
      continue;
    }
    series_seen.insert(file.series_instance_uid);
    paths.push_back(file.path);
  }
  if (series_seen.size() > 1) {
    return attribute_problem(
        ProblemKind::study_ambiguous, parsed.summary.file, DCM_RTReferencedSeriesSequence,
        fmt::format("the structure set names no CT series, and {} CT series share its Frame of "
                    "Reference {}",
                    series_seen.size(), frame));
  }
  if (paths.empty()) {
    const std::string what = series.empty() ? "in Frame of Reference " + frame : "of series " + series;
    return attribute_problem(
        ProblemKind::ct_series_not_found, parsed.summary.file, DCM_RTReferencedSeriesSequence,
        fmt::format("no CT Image Storage file {} among the {} DICOM files given{}", what, index.files.size(),
                    other_class ? fmt::format(" ({} of another SOP class, e.g. Enhanced CT, not "
                                              "supported)",
                                              other_class)
                                : std::string{}));
  }
  if (series.empty())
    notes.push_back(
        "CT: the structure set names no series; the CT series of its Frame of Reference "
        "was used");
  if (duplicates > 0) notes.push_back(fmt::format("CT: {} duplicate copies of slices ignored", duplicates));
  return paths;
}

std::optional<Problem> check_contour_images(const detail::ParsedStructureSet& parsed,
                                            const study::CtVolume& ct) {
  const std::set<std::string> present(ct.slice_sop_instance_uids.begin(), ct.slice_sop_instance_uids.end());
  for (const auto& uid : parsed.summary.contour_image_uids) {
    if (present.count(uid) == 0) {
      return attribute_problem(
          ProblemKind::ct_slice_missing, parsed.summary.file, DCM_ContourImageSequence,
          fmt::format("the structure set was drawn on CT image {}, which is not among the files "
                      "given ({} slices of series {} found)",
                      uid, ct.slice_files.size(), ct.series_instance_uid));
    }
  }
  return std::nullopt;
}

study::Result<study::Body> make_body(const detail::ParsedStructureSet& parsed, const study::CtVolume& ct) {
  if (!parsed.external) return study::body_from_threshold(ct);
  const auto& roi = parsed.summary.rois[*parsed.external];
  auto body = study::body_from_contours(ct.grid, parsed.external_contours, roi.number, roi.name);
  if (!body) {
    Problem problem = body.problem();
    problem.file = parsed.summary.file;
    return problem;
  }
  return body;
}

}  // namespace

study::Result<study::Study> load_study(const StudyFileIndex& index, const std::string& structure_set_uid,
                                       const std::string& plan_frame_of_reference_uid) {
  const auto structure_set_file = find_structure_set(index, structure_set_uid);
  if (!structure_set_file) return structure_set_file.problem();
  auto parsed = detail::read_structure_set((*structure_set_file)->path);
  if (!parsed) return parsed.problem();
  const std::string frame = structure_set_frame(*parsed);
  if (auto problem = check_frames(*parsed, frame, plan_frame_of_reference_uid)) return *problem;

  study::Study study;
  study.notes = parsed->notes;
  const auto ct_files = find_ct_files(index, *parsed, frame, study.notes);
  if (!ct_files) return ct_files.problem();
  auto ct = detail::read_ct_series(*ct_files);
  if (!ct) return ct.problem();
  if (ct->frame_of_reference_uid != frame) {
    return attribute_problem(ProblemKind::frame_of_reference_mismatch, ct->slice_files.front(),
                             DCM_FrameOfReferenceUID,
                             fmt::format("the CT's Frame of Reference {} differs from the structure set's {}",
                                         ct->frame_of_reference_uid, frame));
  }
  if (auto problem = check_contour_images(*parsed, *ct)) return *problem;
  auto body = make_body(*parsed, *ct);
  if (!body) return body.problem();

  const auto& g = ct->grid;
  study.notes.push_back(
      fmt::format("CT: series {}, {} x {} x {} voxels of {:g} x {:g} x {:g} mm, HU by Rescale "
                  "Slope and Intercept rounded to 1 HU",
                  ct->series_instance_uid, g.size[0], g.size[1], g.size[2], g.spacing_mm[0], g.spacing_mm[1],
                  g.spacing_mm[2]));
  if (ct->clamped_voxel_count > 0)
    study.notes.push_back(
        fmt::format("CT: {} voxels beyond -32768..32767 HU clamped", ct->clamped_voxel_count));
  study.notes.insert(study.notes.end(), body->notes.begin(), body->notes.end());
  study.frame_of_reference_uid = frame;
  study.station_name = ct->station_name;
  study.structure_set = std::move(parsed->summary);
  study.ct = std::move(ct.value());
  study.body = std::move(body.value());
  return study;
}

std::string StudyArrival::missing(const std::string& structure_set_uid) const {
  if (!structure_set_found) return "the RT Structure Set " + structure_set_uid + " and its CT";
  if (ct_expected == 0) return "the CT series " + ct_series_uid;
  return fmt::format("{} of {} CT images of series {}", ct_expected - std::min(ct_found, ct_expected),
                     ct_expected, ct_series_uid);
}

StudyArrival study_arrival(const StudyFileIndex& index, const std::string& structure_set_uid) {
  StudyArrival arrival;
  const auto structure_set_file = find_structure_set(index, structure_set_uid);
  if (!structure_set_file) return arrival;
  const auto parsed = detail::read_structure_set((*structure_set_file)->path);
  // A structure set that cannot be read is complete as far as waiting goes: the check says why.
  arrival.structure_set_found = true;
  if (!parsed) {
    arrival.ct_found = 1;
    return arrival;
  }
  arrival.ct_series_uid = parsed->summary.ct_series_uid;
  const std::set<std::string> expected(parsed->summary.contour_image_uids.begin(),
                                       parsed->summary.contour_image_uids.end());
  arrival.ct_expected = expected.size();
  std::set<std::string> found;
  for (const auto& file : index.files) {
    if (file.sop_class_uid != ct_image_storage_uid) continue;
    const bool wanted = expected.empty() ? (!arrival.ct_series_uid.empty() &&
                                            file.series_instance_uid == arrival.ct_series_uid)
                                         : expected.count(file.sop_instance_uid) != 0;
    if (wanted) found.insert(file.sop_instance_uid);
  }
  arrival.ct_found = found.size();
  return arrival;
}

study::Result<study::Study> load_study_for_plan(const plan::Plan& plan,
                                                std::span<const std::filesystem::path> files_or_folders) {
  const auto& refs = plan.referenced_structure_set_uids;
  if (refs.size() != 1 || refs.front().empty()) {
    const std::string detail =
        refs.empty() ? std::string{"absent: the plan does not say which structure set and CT it was made on"}
        : refs.size() > 1 ? fmt::format("has {} items; DICOM permits one", refs.size())
                          : std::string{"its item has no Referenced SOP Instance UID (0008,1155)"};
    return attribute_problem(ProblemKind::no_structure_set_reference, plan.source_file,
                             DCM_ReferencedStructureSetSequence, detail);
  }
  const StudyFileIndex index = index_study_files(files_or_folders);
  return load_study(index, refs.front(), plan.frame_of_reference_uid);
}

}  // namespace countersign::dicom
