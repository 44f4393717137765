#pragma once

// The field opening at one control point, in the isocentre plane of the beam limiting device
// system (mm): the jaw rectangle, intersected with the MLC opening when there is an MLCX or MLCY.
// Leaf positions and leaf boundaries are used as DICOM states them (projected to the isocentre).
// Rows are kept in the leaves' own frame: u along leaf travel, v across it (the leaf boundaries);
// for MLCX u = x and v = y, for MLCY u = y and v = x. Every query takes and gives x, y.

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

// The axis the leaves travel along: x for MLCX (and jaws only), y for MLCY.
enum class LeafTravel { x, y };

// An axis-aligned rectangle of the isocentre plane (mm).
struct RectMm {
  double x1_mm = 0.0;
  double x2_mm = 0.0;
  double y1_mm = 0.0;
  double y2_mm = 0.0;
};

// One leaf pair's opening after clipping to the jaws; an empty row has lo_mm >= hi_mm. In the
// leaves' frame: y_lower/y_upper are the pair's boundaries (v), lo/hi its tips (u).
struct ApertureRow {
  double y_lower_mm = 0.0;
  double y_upper_mm = 0.0;
  double lo_mm = 0.0;  // bank A tip (or X1)
  double hi_mm = 0.0;  // bank B tip (or X2)
  // The row as a rectangle of the isocentre plane.
  [[nodiscard]] RectMm rect(LeafTravel travel) const {
    return travel == LeafTravel::x ? RectMm{lo_mm, hi_mm, y_lower_mm, y_upper_mm}
                                   : RectMm{y_lower_mm, y_upper_mm, lo_mm, hi_mm};
  }
  [[nodiscard]] bool open() const { return hi_mm > lo_mm && y_upper_mm > y_lower_mm; }
};

class Aperture {
 public:
  Aperture() = default;
  Aperture(JawOpening jaws, std::vector<ApertureRow> rows, bool shaped_by_mlc,
           LeafTravel travel = LeafTravel::x);

  [[nodiscard]] const JawOpening& jaws() const { return jaws_; }
  // In the leaves' frame (see leaf_travel()); rect() gives each in x, y.
  [[nodiscard]] const std::vector<ApertureRow>& rows() const { return rows_; }
  [[nodiscard]] LeafTravel leaf_travel() const { return travel_; }
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
  LeafTravel travel_ = LeafTravel::x;
  double area_mm2_ = 0.0;
  double perimeter_mm_ = 0.0;
};

// The opening at a control point from its jaw and MLCX or MLCY positions and the beam's leaf
// boundaries (MLCX and MLCY together: bad_value).
// Rounded leaf ends: every open leaf pair's tips move apart by leaf_end_offset_mm each (their
// radiological positions), before clipping to the jaws.
// Errors: a missing device or positions (missing_attribute), malformed positions (bad_value).
[[nodiscard]] Expected<Aperture> build_aperture(const plan::Beam& beam,
                                                const plan::ControlPoint& control_point,
                                                double leaf_end_offset_mm = 0.0);

}  // namespace countersign::geometry
