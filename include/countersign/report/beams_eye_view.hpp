#pragma once

// The beam's-eye view: the field as seen from the source, drawn to scale as inline SVG whose user
// unit is one millimetre of paper. Inputs are in the isocentre plane of the beam limiting device
// (collimator) system, mm; the drawing is in the gantry system (IEC 61217), so a rotated collimator
// shows as a rotated field: +X of the gantry system to the right, +Y (towards the gantry) up.

#include <countersign/engine/beam_dose.hpp>
#include <countersign/geometry/aperture.hpp>

#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace countersign::report {

// A position on paper: mm from the drawing's top-left corner, y downwards (as SVG has it).
struct PaperMm {
  double x = 0.0;
  double y = 0.0;
};

// The pure mapping from the isocentre plane (collimator system, mm) to paper (mm).
class BevMapping {
 public:
  // scale: paper mm per isocentre-plane mm (1 draws a 10 cm field as 100 mm).
  BevMapping(double scale, double collimator_deg, PaperMm axis_on_paper);

  [[nodiscard]] PaperMm to_paper(double x_mm, double y_mm) const;
  // Collimator system -> gantry system, both in the isocentre plane (mm).
  [[nodiscard]] PaperMm to_gantry_mm(double x_mm, double y_mm) const;
  [[nodiscard]] double scale() const { return scale_; }
  [[nodiscard]] double collimator_deg() const { return collimator_deg_; }
  [[nodiscard]] PaperMm axis() const { return axis_; }

 private:
  double scale_;
  double collimator_deg_;
  double cos_;
  double sin_;
  PaperMm axis_;
};

// The scales a drawing may use, largest first (1:1, 1:1.25, 1:2, ...), so that a ruler on the
// printout reads round numbers.
[[nodiscard]] const std::vector<double>& preferred_scales();

// "1:1", "1:1.25", "1:2", ... for a scale in paper mm per isocentre-plane mm.
[[nodiscard]] std::string scale_text(double scale);

// The largest preferred scale at which a drawing reaching half_extent_mm (gantry system, from the
// axis) fits in half_room_mm of paper on each side of the axis.
[[nodiscard]] double choose_scale(double half_extent_mm, double half_room_mm);

// What one beam's drawing shows.
struct BevContent {
  double collimator_deg = 0.0;
  geometry::JawOpening jaws;                // static: control point 0; modulated: envelope of all parts
  std::vector<geometry::ApertureRow> open;  // static: the opening; modulated: area open in any part
  geometry::LeafTravel leaf_travel = geometry::LeafTravel::x;  // the frame of `open` (MLCY: y)
  bool shaped_by_mlc = false;  // static beam with an MLC: draw the leaves inside the jaws
  bool modulated = false;
  bool outline_known = true;             // false: a modulated beam whose leaf shapes could not be built
  std::optional<PaperMm> dose_point_mm;  // projected to the isocentre plane (collimator system, mm)
  std::vector<PaperMm> part_points_mm;   // modulated/arc: the point as each part sees it
  double off_axis_mm = 0.0;
  std::vector<PaperMm> body_outline_mm;    // with a CT: the body at the point's depth (isocentre-plane mm)
  std::vector<engine::BlockShape> blocks;  // Block Data polygons (collimator system, isocentre plane, mm)
};

// How a block is drawn, told apart by line style and named in the drawing's legend (not by colour).
[[nodiscard]] std::string_view block_line_style(bool aperture);
[[nodiscard]] std::string_view block_legend_words(bool aperture);

// The drawing's content for a computed beam, from the outline the engine built with the apertures
// (static: control point 0's opening; modulated: the area open in any part and the jaw envelope).
[[nodiscard]] std::optional<BevContent> bev_content(const engine::BeamDose& dose);

struct BevPanel {
  double width_mm = 120.0;
  double height_mm = 120.0;
  double margin_mm = 11.0;  // kept free for labels
};

// The mapping the drawing of `content` uses on `panel`: axis at the panel's centre, preferred scale.
[[nodiscard]] BevMapping bev_mapping(const BevContent& content, const BevPanel& panel);

// The SVG element (width and height in mm, viewBox in mm).
[[nodiscard]] std::string beams_eye_view_svg(const BevContent& content, const BevPanel& panel = {});

}  // namespace countersign::report
