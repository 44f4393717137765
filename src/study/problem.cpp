#include <countersign/study/problem.hpp>

namespace countersign::study {

std::string_view code(ProblemKind kind) {
  switch (kind) {
    case ProblemKind::no_structure_set_reference:
      return "no_structure_set_reference";
    case ProblemKind::structure_set_not_found:
      return "structure_set_not_found";
    case ProblemKind::ct_series_not_found:
      return "ct_series_not_found";
    case ProblemKind::frame_of_reference_mismatch:
      return "frame_of_reference_mismatch";
    case ProblemKind::ct_not_axial:
      return "ct_not_axial";
    case ProblemKind::ct_slice_missing:
      return "ct_slice_missing";
    case ProblemKind::ct_spacing_uneven:
      return "ct_spacing_uneven";
    case ProblemKind::ct_slices_inconsistent:
      return "ct_slices_inconsistent";
    case ProblemKind::ct_pixel_data_unsupported:
      return "ct_pixel_data_unsupported";
    case ProblemKind::study_file_invalid:
      return "study_file_invalid";
    case ProblemKind::study_ambiguous:
      return "study_ambiguous";
    case ProblemKind::body_contour_invalid:
      return "body_contour_invalid";
    case ProblemKind::body_not_found:
      return "body_not_found";
    case ProblemKind::point_outside_ct:
      return "point_outside_ct";
    case ProblemKind::point_outside_body:
      return "point_outside_body";
    case ProblemKind::ray_leaves_ct_inside_body:
      return "ray_leaves_ct_inside_body";
    case ProblemKind::central_axis_misses_body:
      return "central_axis_misses_body";
  }
  return "unknown";
}

std::string Problem::message() const {
  std::string text{code(kind)};
  text += ": ";
  if (!file.empty()) text += file + ": ";
  if (!attribute.empty()) text += attribute + (tag.empty() ? "" : " " + tag) + ": ";
  return text + detail;
}

}  // namespace countersign::study
