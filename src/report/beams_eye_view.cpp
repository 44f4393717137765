#include <countersign/report/beams_eye_view.hpp>

#include <countersign/geometry/swept_opening.hpp>

#include <countersign/report/html_escape.hpp>
#include <countersign/util/units.hpp>

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <map>
#include <numbers>
#include <utility>

namespace countersign::report {

BevMapping::BevMapping(double scale, double collimator_deg, PaperMm axis_on_paper)
    : scale_(scale),
      collimator_deg_(collimator_deg),
      cos_(std::cos(collimator_deg * std::numbers::pi / 180.0)),
      sin_(std::sin(collimator_deg * std::numbers::pi / 180.0)),
      axis_(axis_on_paper) {}

PaperMm BevMapping::to_gantry_mm(double x_mm, double y_mm) const {
  // v_gantry = Rz(collimator) v_collimator (right-handed about +Z, as geometry::BeamFrame has it).
  return {cos_ * x_mm - sin_ * y_mm, sin_ * x_mm + cos_ * y_mm};
}

PaperMm BevMapping::to_paper(double x_mm, double y_mm) const {
  const PaperMm g = to_gantry_mm(x_mm, y_mm);
  // Seen from the source (+Z towards the viewer): +X right, +Y up; paper y grows downwards.
  return {axis_.x + scale_ * g.x, axis_.y - scale_ * g.y};
}

const std::vector<double>& preferred_scales() {
  static const std::vector<double> scales{1.0, 0.8, 0.5, 0.4, 0.25, 0.2, 0.1, 0.05};
  return scales;
}

double choose_scale(double half_extent_mm, double half_room_mm) {
  for (const double s : preferred_scales()) {
    if (half_extent_mm * s <= half_room_mm + 1e-9) return s;
  }
  return preferred_scales().back();
}

std::string scale_text(double scale) {
  const double denominator = 1.0 / scale;
  return std::abs(denominator - std::round(denominator)) < 1e-9 ? fmt::format("1:{:.0f}", denominator)
                                                                : fmt::format("1:{:g}", denominator);
}

std::optional<BevContent> bev_content(const engine::BeamDose& dose) {
  if (dose.aperture.rows().empty() || !(dose.point.spd_mm > 0.0)) return std::nullopt;
  BevContent c;
  c.collimator_deg = dose.angles.collimator_deg;
  c.dose_point_mm = PaperMm{dose.point.iso_plane_x_mm, dose.point.iso_plane_y_mm};
  c.off_axis_mm = dose.point.off_axis_mm;
  c.modulated = dose.features.modulated;
  // The outline is the one the engine built with the apertures; nothing is rebuilt here.
  c.jaws = dose.outline.jaws;
  c.open = dose.outline.open;
  c.leaf_travel = dose.outline.leaf_travel;
  c.shaped_by_mlc = !c.modulated && dose.outline.shaped_by_mlc;
  c.outline_known = dose.outline.known;
  c.blocks = dose.outline.blocks;
  if (dose.patient) {
    for (const auto& [x, y] : dose.patient->body_outline_iso_mm) c.body_outline_mm.push_back({x, y});
  }
  if (!c.modulated) return c;
  // Part points in the collimator system of control point 0 (the collimator may turn during a beam).
  const BevMapping to_cp0(1.0, -dose.angles.collimator_deg, {});
  for (const engine::Segment& s : dose.segments) {
    const BevMapping to_gantry(1.0, s.angles.collimator_deg, {});
    const PaperMm g = to_gantry.to_gantry_mm(s.point.iso_plane_x_mm, s.point.iso_plane_y_mm);
    c.part_points_mm.push_back(to_cp0.to_gantry_mm(g.x, g.y));
  }
  if (!c.outline_known) {
    bool first = true;
    for (const engine::Segment& s : dose.segments) geometry::widen_envelope(c.jaws, s.jaws, first);
  }
  return c;
}

BevMapping bev_mapping(const BevContent& content, const BevPanel& panel) {
  const BevMapping unit(1.0, content.collimator_deg, {});
  double extent = 10.0;  // at least 1 cm around the axis
  const auto reach = [&](double x, double y) {
    const PaperMm g = unit.to_gantry_mm(x, y);
    extent = std::max({extent, std::abs(g.x), std::abs(g.y)});
  };
  const auto& j = content.jaws;
  for (const double x : {j.x1_mm, j.x2_mm}) {
    for (const double y : {j.y1_mm, j.y2_mm}) reach(x, y);
  }
  for (const auto& r : content.open) {
    const geometry::RectMm b = r.rect(content.leaf_travel);
    for (const double x : {b.x1_mm, b.x2_mm}) {
      for (const double y : {b.y1_mm, b.y2_mm}) reach(x, y);
    }
  }
  if (content.dose_point_mm) reach(content.dose_point_mm->x, content.dose_point_mm->y);
  for (const PaperMm& p : content.part_points_mm) reach(p.x, p.y);
  const double half_room = 0.5 * std::min(panel.width_mm, panel.height_mm) - panel.margin_mm;
  return BevMapping(choose_scale(extent, half_room), content.collimator_deg,
                    {0.5 * panel.width_mm, 0.5 * panel.height_mm});
}

std::string_view block_line_style(bool aperture) {
  // SHIELDING: solid outline over a light fill (blocked inside); APERTURE: long dashes, no fill
  // (open inside). The jaws are a thinner solid line, a modulated beam's jaw envelope shorter dashes.
  return aperture ? "fill=\"none\" stroke=\"#000\" stroke-width=\"0.7\" stroke-dasharray=\"4 1.2\""
                  : "fill=\"#9a9a9a\" fill-opacity=\"0.55\" stroke=\"#000\" stroke-width=\"0.7\"";
}

std::string_view block_legend_words(bool aperture) {
  return aperture ? "aperture block: open inside" : "shielding block: blocked inside";
}

namespace {

std::string number(double v) { return fmt::format("{:.2f}", std::abs(v) < 0.005 ? 0.0 : v); }

// A rectangle of the collimator system as a polygon on paper.
std::string polygon(const BevMapping& m, double x1, double y1, double x2, double y2, std::string_view style) {
  std::string points;
  for (const auto& [x, y] : {std::pair{x1, y1}, {x2, y1}, {x2, y2}, {x1, y2}}) {
    const PaperMm p = m.to_paper(x, y);
    points += number(p.x) + "," + number(p.y) + " ";
  }
  points.pop_back();
  return fmt::format("<polygon points=\"{}\" {}/>\n", points, style);
}

std::string line(PaperMm a, PaperMm b, std::string_view style) {
  return fmt::format("<line x1=\"{}\" y1=\"{}\" x2=\"{}\" y2=\"{}\" {}/>\n", number(a.x), number(a.y),
                     number(b.x), number(b.y), style);
}

std::string text(PaperMm at, std::string_view content, std::string_view anchor, double size_mm,
                 std::string_view extra = "") {
  return fmt::format(
      "<text x=\"{}\" y=\"{}\" text-anchor=\"{}\" dominant-baseline=\"central\" "
      "font-size=\"{}\"{}>{}</text>\n",
      number(at.x), number(at.y), anchor, number(size_mm), extra, html_escape(content));
}

// The side of the scale bar in cm: the longest round length not over 50 mm of paper.
double scale_bar_cm(double scale) {
  double best = 1.0;
  for (const double cm : {1.0, 2.0, 5.0, 10.0, 20.0, 50.0}) {
    if (util::cm_to_mm(cm) * scale <= 50.0 + 1e-9) best = cm;
  }
  return best;
}

// The blocks as polygons in their line style, and a legend in words for each type drawn, top left
// under the gantry label (inside the margin kept free for labels).
std::string blocks_svg(const BevMapping& m, const std::vector<engine::BlockShape>& blocks) {
  std::string svg;
  bool drawn[2] = {false, false};  // [shielding, aperture]
  for (const engine::BlockShape& block : blocks) {
    if (block.outline_mm.size() < 3) continue;
    std::string points;
    for (const auto& [x, y] : block.outline_mm) {
      const PaperMm p = m.to_paper(x, y);
      points += number(p.x) + "," + number(p.y) + " ";
    }
    points.pop_back();
    svg += fmt::format("<polygon class=\"{}\" points=\"{}\" {}/>\n",
                       block.aperture ? "block-aperture" : "block-shielding", points,
                       block_line_style(block.aperture));
    drawn[block.aperture ? 1 : 0] = true;
  }
  double y = 9.0;
  for (const bool aperture : {false, true}) {
    if (!drawn[aperture ? 1 : 0]) continue;
    svg += fmt::format("<rect class=\"legend\" x=\"3.00\" y=\"{}\" width=\"7.00\" height=\"1.80\" {}/>\n",
                       number(y - 0.9), block_line_style(aperture));
    svg += text({11.5, y}, block_legend_words(aperture), "start", 2.2);
    y += 2.8;
  }
  return svg;
}

}  // namespace

std::string beams_eye_view_svg(const BevContent& c, const BevPanel& panel) {
  const BevMapping m = bev_mapping(c, panel);
  const double w = panel.width_mm;
  const double h = panel.height_mm;
  const PaperMm axis = m.axis();
  std::string svg = fmt::format(
      "<svg xmlns=\"http://www.w3.org/2000/svg\" class=\"bev\" width=\"{0}mm\" height=\"{1}mm\" viewBox=\"0 "
      "0 {0} {1}\" "
      "font-family=\"DejaVu Sans, Arial, sans-serif\" role=\"img\" aria-label=\"Beam's-eye view, scale {2} "
      "at the "
      "isocentre plane\">\n",
      number(w), number(h), scale_text(m.scale()));
  svg += fmt::format(
      "<rect x=\"0.2\" y=\"0.2\" width=\"{}\" height=\"{}\" fill=\"#fff\" stroke=\"#000\" "
      "stroke-width=\"0.3\"/>\n",
      number(w - 0.4), number(h - 0.4));

  // Gantry-system reference: ticks at the panel edges in line with the axis.
  const std::string_view tick = "stroke=\"#000\" stroke-width=\"0.3\"";
  svg += line({axis.x, 0.2}, {axis.x, 4.0}, tick) + line({axis.x, h - 4.0}, {axis.x, h - 0.2}, tick);
  svg += line({0.2, axis.y}, {4.0, axis.y}, tick) + line({w - 4.0, axis.y}, {w - 0.2, axis.y}, tick);
  svg += text({3.0, 5.5}, "\u25B2 towards gantry", "start", 2.5);

  const geometry::JawOpening& j = c.jaws;
  // A rectangle given in the leaves' frame (u along their travel, v across).
  const bool along_y = c.leaf_travel == geometry::LeafTravel::y;
  const auto leaf_frame = [&](double u1, double v1, double u2, double v2, std::string_view style) {
    return along_y ? polygon(m, v1, u1, v2, u2, style) : polygon(m, u1, v1, u2, v2, style);
  };
  const double ju1 = along_y ? j.y1_mm : j.x1_mm;
  const double ju2 = along_y ? j.y2_mm : j.x2_mm;
  if (c.modulated) {
    // Area open in at least one part, then the jaw envelope (dashed).
    for (const auto& r : c.open) {
      svg += leaf_frame(r.lo_mm, r.y_lower_mm, r.hi_mm, r.y_upper_mm,
                        "fill=\"#d4d4d4\" stroke=\"#d4d4d4\" stroke-width=\"0.05\"");
    }
    svg += polygon(m, j.x1_mm, j.y1_mm, j.x2_mm, j.y2_mm,
                   "fill=\"none\" stroke=\"#000\" stroke-width=\"0.5\" stroke-dasharray=\"2.2 1.2\"");
  } else {
    if (c.shaped_by_mlc) {
      // Leaves inside the jaws: grey where they block, the opening stays white.
      const std::string_view leaf = "fill=\"#c4c4c4\" stroke=\"#3a3a3a\" stroke-width=\"0.12\"";
      for (const auto& r : c.open) {
        if (!r.open()) {
          svg += leaf_frame(ju1, r.y_lower_mm, ju2, r.y_upper_mm, leaf);
          continue;
        }
        if (r.lo_mm > ju1) svg += leaf_frame(ju1, r.y_lower_mm, r.lo_mm, r.y_upper_mm, leaf);
        if (r.hi_mm < ju2) svg += leaf_frame(r.hi_mm, r.y_lower_mm, ju2, r.y_upper_mm, leaf);
      }
    }
    svg +=
        polygon(m, j.x1_mm, j.y1_mm, j.x2_mm, j.y2_mm, "fill=\"none\" stroke=\"#000\" stroke-width=\"0.6\"");
  }

  svg += blocks_svg(m, c.blocks);

  // The body at the point's depth (from the CT), dotted.
  if (c.body_outline_mm.size() > 2) {
    std::string points;
    for (const PaperMm& q : c.body_outline_mm) {
      const PaperMm p = m.to_paper(q.x, q.y);
      points += number(p.x) + "," + number(p.y) + " ";
    }
    points.pop_back();
    svg += fmt::format(
        "<polygon class=\"body-outline\" points=\"{}\" fill=\"none\" stroke=\"#1a5fb4\" stroke-width=\"0.4\" "
        "stroke-dasharray=\"0.8 0.8\"/>\n",
        points);
    svg += text(m.to_paper(c.body_outline_mm.front().x, c.body_outline_mm.front().y), "body", "start", 2.2,
                " fill=\"#1a5fb4\"");
  }

  // Jaw names just outside the jaw edges (kept upright for reading).
  const double out = 3.2 / m.scale();
  const double cx = 0.5 * (j.x1_mm + j.x2_mm);
  const double cy = 0.5 * (j.y1_mm + j.y2_mm);
  svg += text(m.to_paper(j.x1_mm - out, cy), "X1", "middle", 2.8, " font-weight=\"bold\"");
  svg += text(m.to_paper(j.x2_mm + out, cy), "X2", "middle", 2.8, " font-weight=\"bold\"");
  svg += text(m.to_paper(cx, j.y1_mm - out), "Y1", "middle", 2.8, " font-weight=\"bold\"");
  svg += text(m.to_paper(cx, j.y2_mm + out), "Y2", "middle", 2.8, " font-weight=\"bold\"");

  // Collimator axes through the central axis (dash-dot), and the central axis itself.
  const double reach = 0.5 * std::min(w, h) / m.scale() - 2.0 / m.scale();
  const std::string_view axis_style = "stroke=\"#000\" stroke-width=\"0.18\" stroke-dasharray=\"3 1 0.6 1\"";
  svg += line(m.to_paper(-reach, 0.0), m.to_paper(reach, 0.0), axis_style);
  svg += line(m.to_paper(0.0, -reach), m.to_paper(0.0, reach), axis_style);
  svg += fmt::format(
      "<circle cx=\"{}\" cy=\"{}\" r=\"1.1\" fill=\"#fff\" stroke=\"#000\" stroke-width=\"0.3\"/>\n",
      number(axis.x), number(axis.y));
  svg += line({axis.x - 2.4, axis.y}, {axis.x + 2.4, axis.y}, "stroke=\"#000\" stroke-width=\"0.3\"");
  svg += line({axis.x, axis.y - 2.4}, {axis.x, axis.y + 2.4}, "stroke=\"#000\" stroke-width=\"0.3\"");

  // The dose point: every part's view of it (modulated), then the point at control point 0.
  for (const PaperMm& p : c.part_points_mm) {
    const PaperMm q = m.to_paper(p.x, p.y);
    svg += fmt::format(
        "<circle cx=\"{}\" cy=\"{}\" r=\"0.6\" fill=\"#fff\" stroke=\"#000\" stroke-width=\"0.15\"/>\n",
        number(q.x), number(q.y));
  }
  if (c.dose_point_mm) {
    const PaperMm p = m.to_paper(c.dose_point_mm->x, c.dose_point_mm->y);
    const double d = 1.5;
    svg += fmt::format(
        "<circle class=\"dose-point\" cx=\"{}\" cy=\"{}\" r=\"2.1\" fill=\"#fff\" stroke=\"#000\" "
        "stroke-width=\"0.45\"/>\n",
        number(p.x), number(p.y));
    svg += line({p.x - d, p.y - d}, {p.x + d, p.y + d}, "stroke=\"#000\" stroke-width=\"0.35\"");
    svg += line({p.x - d, p.y + d}, {p.x + d, p.y - d}, "stroke=\"#000\" stroke-width=\"0.35\"");
    svg += text({p.x + 3.0, p.y - 3.0}, "P", "start", 3.2, " font-weight=\"bold\"");
  }

  // Collimator angle: a reference line (gantry +Y) and the collimator's +Y, top right.
  // Kept in the corner, clear of a field that fills the panel up to its margin.
  const PaperMm dial{w - 6.0, 6.5};
  const double rad = c.collimator_deg * std::numbers::pi / 180.0;
  svg += fmt::format(
      "<circle cx=\"{}\" cy=\"{}\" r=\"4\" fill=\"none\" stroke=\"#000\" stroke-width=\"0.15\"/>\n",
      number(dial.x), number(dial.y));
  svg += line({dial.x, dial.y}, {dial.x, dial.y - 4.0},
              "stroke=\"#000\" stroke-width=\"0.2\" stroke-dasharray=\"0.6 0.5\"");
  svg += line({dial.x, dial.y}, {dial.x - 4.0 * std::sin(rad), dial.y - 4.0 * std::cos(rad)},
              "stroke=\"#000\" stroke-width=\"0.45\"");
  svg += text({dial.x - 5.5, dial.y}, fmt::format("coll. {:.1f}\u00B0", c.collimator_deg), "end", 2.5);

  // Scale bar, bottom left, and the scale in words, bottom right.
  const double bar_cm = scale_bar_cm(m.scale());
  const double bar_mm = util::cm_to_mm(bar_cm) * m.scale();
  const double bx = 5.0;
  const double by = h - 5.0;
  const std::string_view bar = "stroke=\"#000\" stroke-width=\"0.4\"";
  svg += line({bx, by}, {bx + bar_mm, by}, bar) + line({bx, by - 1.5}, {bx, by + 1.0}, bar) +
         line({bx + bar_mm, by - 1.5}, {bx + bar_mm, by + 1.0}, bar) +
         line({bx + 0.5 * bar_mm, by - 1.0}, {bx + 0.5 * bar_mm, by}, bar);
  svg += text({bx, by - 3.2}, fmt::format("{:g} cm at isocentre", bar_cm), "start", 2.5);
  svg +=
      text({w - 4.0, h - 4.5}, fmt::format("scale {} at isocentre plane", scale_text(m.scale())), "end", 2.5);
  svg += "</svg>\n";
  return svg;
}

}  // namespace countersign::report
