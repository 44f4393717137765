#pragma once

// Why the patient geometry of a study cannot be used: one vocabulary for the study reader (dicom)
// and the rays through the patient (patient). Each kind has a stable snake_case code that the
// check turns into the reason of a beam that is not checked; never a silent fall-back to water.

#include <string>
#include <string_view>
#include <utility>
#include <variant>

namespace countersign::study {

enum class ProblemKind {
  // Finding and reading the study.
  no_structure_set_reference,   // the plan has no usable Referenced Structure Set Sequence (300C,0060)
  structure_set_not_found,      // no RT Structure Set with the referenced SOP Instance UID among the files
  ct_series_not_found,          // no CT Image Storage instance of the structure set's CT series
  frame_of_reference_mismatch,  // plan, structure set, body ROI and CT disagree on the Frame of Reference UID
  ct_not_axial,                 // slices not transverse, or not stacked along the patient z axis
  ct_slice_missing,        // a gap in the slice positions, or a slice the structure set refers to is absent
  ct_spacing_uneven,       // slice positions not evenly spaced (and not explained by a missing slice)
  ct_slices_inconsistent,  // slices of the series differ in size, spacing, pixel format or position
  ct_pixel_data_unsupported,  // compressed or otherwise unreadable pixel data
  study_file_invalid,         // a study file lacks a mandatory attribute or has a malformed value
  study_ambiguous,            // two different objects qualify (two EXTERNAL ROIs, two structure sets, ...)
  body_contour_invalid,       // the EXTERNAL ROI has no usable closed planar contour on the CT
  body_not_found,             // no body in the CT (threshold found nothing)
  // Rays through the patient.
  point_outside_ct,           // the dose point lies outside the CT volume
  point_outside_body,         // the dose point lies outside the body outline
  ray_leaves_ct_inside_body,  // towards the source the ray leaves the CT before reaching the body surface
  central_axis_misses_body,   // the central axis does not meet the body inside the CT
};

// Stable code, e.g. "ct_slice_missing".
[[nodiscard]] std::string_view code(ProblemKind kind);

struct Problem {
  ProblemKind kind = ProblemKind::study_file_invalid;
  std::string file;       // the file concerned; empty when not about one file
  std::string attribute;  // DICOM keyword, e.g. "ImagePositionPatient"; empty when not about one
  std::string tag;        // "(0020,0032)"; empty when not about a DICOM attribute
  std::string detail;     // one sentence saying what was found and what was expected

  // One line: "<code>: <file>: <attribute> <tag>: <detail>", parts left out when empty.
  [[nodiscard]] std::string message() const;
};

// A value, or the Problem that prevented it.
template <class T>
class Result {
 public:
  Result(T value) : state_(std::move(value)) {}            // NOLINT(google-explicit-constructor)
  Result(Problem problem) : state_(std::move(problem)) {}  // NOLINT(google-explicit-constructor)

  [[nodiscard]] bool has_value() const { return std::holds_alternative<T>(state_); }
  explicit operator bool() const { return has_value(); }

  [[nodiscard]] const T& value() const& { return std::get<T>(state_); }
  [[nodiscard]] T& value() & { return std::get<T>(state_); }
  [[nodiscard]] T&& value() && { return std::get<T>(std::move(state_)); }
  [[nodiscard]] const Problem& problem() const { return std::get<Problem>(state_); }

  const T& operator*() const& { return value(); }
  T& operator*() & { return value(); }
  const T* operator->() const { return &value(); }
  T* operator->() { return &value(); }

 private:
  std::variant<T, Problem> state_;
};

}  // namespace countersign::study
