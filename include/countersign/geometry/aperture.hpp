#pragma once

// The field opening at one control point, in the isocentre plane of the beam limiting device
// system (mm): the jaw rectangle, intersected with the MLC opening when there is an MLCX.
// Leaf positions and leaf boundaries are used as DICOM states them (projected to the isocentre).

#include <countersign/plan/plan.hpp>
#include <countersign/util/error.hpp>

#include <vector>

namespace countersign::geometry {

// Where a jaw pair's positions came from.
enum class JawSource { jaws, mlc_envelope };

struct JawOpening {
  double x1_mm = 0.0;  // X1 (negative side) .. X2
  double x2_mm = 0.0;
  double y1_mm = 0.0;
  double y2_mm = 0.0;
  JawSource x_source = JawSource::jaws;
  JawSource y_source = JawSource::jaws;
  [[nodiscard]] double width_mm() const { return x2_mm - x1_mm; }
  [[nodiscard]] double length_mm() const { return y2_mm - y1_mm; }
  // Distance of the rectangle's centre from the central axis.
  [[nodiscard]] double centre_offset_mm() const;
};

// One leaf pair's opening after clipping to the jaws; an empty row has lo_mm >= hi_mm.
struct ApertureRow {
  double y_lower_mm = 0.0;
  double y_upper_mm = 0.0;
  double lo_mm = 0.0;  // bank A tip (or X1)
  double hi_mm = 0.0;  // bank B tip (or X2)
  [[nodiscard]] bool open() const { return hi_mm > lo_mm && y_upper_mm > y_lower_mm; }
};

class Aperture {
 public:
  Aperture() = default;
  Aperture(JawOpening jaws, std::vector<ApertureRow> rows, bool shaped_by_mlc);

  [[nodiscard]] const JawOpening& jaws() const { return jaws_; }
  [[nodiscard]] const std::vector<ApertureRow>& rows() const { return rows_; }
  [[nodiscard]] bool shaped_by_mlc() const { return shaped_by_mlc_; }
  [[nodiscard]] double area_mm2() const { return area_mm2_; }
  [[nodiscard]] double perimeter_mm() const { return perimeter_mm_; }
  // 4A/P of the open area (Sterling's rule for a rectangle, area/perimeter for any shape); 0 if closed.
  [[nodiscard]] double equivalent_square_mm() const;
  // Whether a point of the isocentre plane lies in the opening (edges count as inside).
  [[nodiscard]] bool contains(double x_mm, double y_mm) const;
  // Distance from a point of the isocentre plane to the nearest edge of the opening.
  [[nodiscard]] double distance_to_edge_mm(double x_mm, double y_mm) const;

 private:
  JawOpening jaws_;
  std::vector<ApertureRow> rows_;
  bool shaped_by_mlc_ = false;
  double area_mm2_ = 0.0;
  double perimeter_mm_ = 0.0;
};

// The opening at a control point from its jaw and MLCX positions and the beam's leaf boundaries.
// Rounded leaf ends: every open leaf pair's tips move apart by leaf_end_offset_mm each (their
// radiological positions), before clipping to the jaws.
// Errors: a missing device or positions (missing_attribute), MLCY or malformed positions (bad_value).
[[nodiscard]] Expected<Aperture> build_aperture(const plan::Beam& beam,
                                                const plan::ControlPoint& control_point,
                                                double leaf_end_offset_mm = 0.0);

}  // namespace countersign::geometry
