// One beam's page of the HTML record: outcome, beam's-eye view, setup, factors, parts, notes.

#include <countersign/geometry/patient_position.hpp>
#include <countersign/report/beams_eye_view.hpp>
#include <countersign/report/factor_rows.hpp>
#include <countersign/report/html_escape.hpp>
#include <countersign/report/scatter_comparison.hpp>
#include <countersign/util/units.hpp>

#include "html_parts.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <string>
#include <vector>

namespace countersign::report::html {

namespace {

constexpr std::size_t max_part_rows = 30;  // longer arcs are summarised; `explain` lists every part

std::string fact(std::string_view label, const std::string& value) {
  return fmt::format("<tr><th>{}</th><td>{}</td></tr>\n", label, html_escape(value));
}

std::string setup_facts(const engine::BeamDose& c, const check::CalculationWords& words) {
  std::string out = "<table>\n";
  if (c.machine != nullptr && c.electron_data != nullptr) {
    out += fact("Machine / beam", fmt::format("{} / {} ({:g} MeV ELECTRON)", c.machine->name,
                                              c.electron_data->id, c.electron_data->energy_mev));
  }
  if (c.machine != nullptr && c.beam_data != nullptr) {
    out += fact("Machine / beam", fmt::format("{} / {} ({:g} MV {})", c.machine->name, c.beam_data->id,
                                              c.beam_data->energy_mv, c.beam_data->radiation));
  }
  if (c.electron) {
    const engine::ElectronFacts& e = *c.electron;
    out += fact("Applicator / cutout",
                fmt::format("{} ({:g} cm, effective SSD {:g} cm) / {} {:.2f} cm", e.applicator_id,
                            e.applicator_field_cm, e.effective_ssd_cm, engine::to_code(e.cutout.method),
                            e.cutout.equivalent_square_cm));
    out += fact("Depth / R80 / air gap",
                fmt::format("{:.2f} cm{} / {} / {:+.1f} cm", e.depth_cm,
                            e.bolus_thickness_cm
                                ? fmt::format(" (bolus {} {:.2f} cm)", e.bolus_id, *e.bolus_thickness_cm)
                                : std::string{},
                            e.r80_cm ? fmt::format("{:.2f} cm", *e.r80_cm) : std::string{"-"}, e.air_gap_cm));
  }
  out += fact("Gantry / coll. / couch",
              fmt::format("{:.1f}\u00B0 / {:.1f}\u00B0 / {:.1f}\u00B0", c.angles.gantry_deg,
                          c.angles.collimator_deg, c.angles.couch_deg));
  if (c.patient_position)
    out += fact("Patient position", std::string(geometry::to_code(*c.patient_position)));
  const auto& j = c.aperture.jaws();
  out += fact("Jaws X1 / X2 mm",
              fmt::format("{:.1f} / {:.1f}{}", j.x1_mm, j.x2_mm,
                          j.x_source == geometry::JawSource::mlc_envelope ? " (MLC envelope)" : ""));
  out += fact("Jaws Y1 / Y2 mm",
              fmt::format("{:.1f} / {:.1f}{}", j.y1_mm, j.y2_mm,
                          j.y_source == geometry::JawSource::mlc_envelope ? " (MLC envelope)" : ""));
  out += fact("Opening (cp 0)", fmt::format("{:.1f} cm\u00B2{}", util::mm2_to_cm2(c.aperture.area_mm2()),
                                            c.aperture.shaped_by_mlc() ? ", shaped by MLC" : ", jaws only"));
  if (c.ssd_mm) out += fact("SSD", fmt::format("{:.1f} mm", *c.ssd_mm));
  out += fact("Source to point plane (SPD)", fmt::format("{:.1f} mm", c.point.spd_mm));
  out += fact("Depth", fmt::format("{:.1f} mm", c.depth.depth_mm));
  out += fact("Depth from", words.depth_description);
  if (!words.medium.empty()) out += fact("Medium", words.medium);
  if (c.patient) {
    const engine::CtRay& ray = c.patient->ray;
    const auto plan_mm = [](const std::optional<double>& v) {
      return v ? fmt::format("{:.1f} mm", *v) : std::string("not stated");
    };
    out += fact("CT: SSD / plan", fmt::format("{:.1f} mm / {}", ray.ssd_mm, plan_mm(c.ssd_mm)));
    out +=
        fact("CT: depth / plan", fmt::format("{:.1f} mm / {}", ray.depth_mm, plan_mm(c.depth.plan_depth_mm)));
    out += fact(
        "CT: radiological depth / plan equivalent",
        fmt::format("{:.1f} mm / {}", ray.radiological_depth_mm, plan_mm(c.depth.plan_equivalent_depth_mm)));
    out += fact("CT: ray enters the body at", fmt::format("({:.1f}, {:.1f}, {:.1f}) mm", ray.entry_mm[0],
                                                          ray.entry_mm[1], ray.entry_mm[2]));
    out += fact("CT: field at the point's depth outside the body",
                fmt::format("{:.1f} %", 100.0 * (ray.missing_tissue_fraction + ray.outside_ct_fraction)));
  }
  if (c.homogeneous_dose_gy) {
    out += fact(
        "Homogeneous water at the geometric depth",
        fmt::format("{:.4f} Gy (beside the {:.4f} Gy used)", *c.homogeneous_dose_gy, c.computed_dose_gy));
  }
  out += fact("Off axis (isocentre plane)", fmt::format("{:.1f} mm", c.point.off_axis_mm));
  if (!c.features.modulated) out += fact("Nearest field edge", fmt::format("{:.1f} mm", c.edge_distance_mm));
  out += fact("Formalism", words.method_reason);
  if (c.dose_computed) {
    const engine::FieldSizes& s = c.dose.fields;
    out += fact("Equivalent squares cm",
                fmt::format("collimator {:.2f}; at isocentre {:.2f}; surface {:.2f}; at point {:.2f}",
                            s.collimator_cm, s.isocentre_cm, s.surface_cm, s.point_cm));
  }
  out += "</table>\n";
  return out;
}

std::string factor_table(const engine::BeamDose& c) {
  const engine::PointDose& d = c.dose;
  std::string out =
      "<table class=\"factors\"><thead><tr><th>Factor</th><th class=\"num\">Value</th><th>Source</th>"
      "<th>Looked up at</th></tr></thead><tbody>\n";
  const beamdata::Calibration* cal = c.beam_data != nullptr ? &c.beam_data->calibration : nullptr;
  out += fmt::format(
      "<tr><td>Calibrated output \u1E0A<sub>ref</sub> (cGy/MU)</td><td "
      "class=\"num\">{:.4f}</td><td>machine.toml</td><td class=\"lookup\">{}</td></tr>\n",
      d.factors.output_cgy_per_mu,
      cal != nullptr ? fmt::format("{:g} \u00D7 {:g} cm field, SSD {:g} cm, depth {:g} cm", cal->field_cm,
                                   cal->field_cm, cal->ssd_cm, cal->depth_cm)
      : c.electron_data != nullptr
          ? fmt::format("applicator {}, SSD {:g} cm, depth {:g} cm", c.electron_data->calibration.applicator,
                        c.electron_data->calibration.ssd_cm, c.electron_data->calibration.depth_cm)
                     : std::string{});
  for (const FactorRow& row : factor_rows(d)) {
    const engine::Factor& f = *row.factor;
    const bool outside = f.extrapolated();
    out += fmt::format(
        "<tr{}><td>{}{}</td><td class=\"num\">{:.4f}</td><td>{}</td><td class=\"lookup\">{}</td></tr>\n",
        outside ? " class=\"outside\"" : "", html_escape(row.name), row.role == "divides" ? " (divides)" : "",
        f.value, html_escape(describe_basis(f)),
        f.lookup ? html_escape(describe_lookup(*f.lookup)) : std::string{});
  }
  out += fmt::format(
      "<tr class=\"total\"><td>Dose per MU (cGy/MU)</td><td class=\"num\">{:.4f}</td><td "
      "colspan=\"2\"></td></tr>\n",
      d.dose_per_mu_cgy);
  out += fmt::format(
      "<tr><td>\u00D7 Meterset (MU)</td><td class=\"num\">{:.1f}</td><td colspan=\"2\"></td></tr>\n",
      c.meterset_mu);
  out += fmt::format(
      "<tr class=\"total\"><td>Independent dose (cGy)</td><td class=\"num\">{:.2f}</td><td "
      "colspan=\"2\"></td></tr>\n",
      util::gy_to_cgy(c.computed_dose_gy));
  out += "</tbody></table>\n";
  return out;
}

std::string parts_table(const engine::BeamDose& c) {
  std::string out = fmt::format(
      "<p>The meterset is delivered in {} parts; each part is computed like a static field and the doses are "
      "summed.</p>\n"
      "<table class=\"factors\"><thead><tr><th class=\"num\">Part</th><th class=\"num\">From CP</th><th "
      "class=\"num\">MU</th>"
      "<th class=\"num\">Gantry\u00B0</th><th class=\"num\">Eq. sq. at iso cm</th><th class=\"num\">Depth "
      "mm</th>"
      "<th>Point</th><th class=\"num\">Dose cGy</th></tr></thead><tbody>\n",
      c.segments.size());
  const std::size_t shown = std::min(c.segments.size(), max_part_rows);
  for (std::size_t i = 0; i < shown; ++i) {
    const engine::Segment& s = c.segments[i];
    const std::string where =
        s.point_in_opening ? "in opening" : (s.point_in_jaws ? "under leaves" : "outside jaws");
    out += fmt::format(
        "<tr><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{:.2f}</td>"
        "<td class=\"num\">{:.1f}</td><td class=\"num\">{:.2f}</td><td class=\"num\">{:.1f}</td><td>{}</td>"
        "<td class=\"num\">{:.2f}</td></tr>\n",
        i + 1, s.from_control_point, s.meterset_mu, s.angles.gantry_deg, s.inputs.field_at_isocentre_cm,
        s.depth_mm, where, s.dose.dose_cgy);
  }
  if (shown < c.segments.size()) {
    double rest_mu = 0.0, rest_cgy = 0.0;
    for (std::size_t i = shown; i < c.segments.size(); ++i) {
      rest_mu += c.segments[i].meterset_mu;
      rest_cgy += c.segments[i].dose.dose_cgy;
    }
    out += fmt::format(
        "<tr><td colspan=\"2\">{} more</td><td class=\"num\">{:.2f}</td><td colspan=\"4\">"
        "(every part: countersign explain)</td><td class=\"num\">{:.2f}</td></tr>\n",
        c.segments.size() - shown, rest_mu, rest_cgy);
  }
  out += fmt::format(
      "<tr class=\"total\"><td colspan=\"2\">Beam</td><td class=\"num\">{:.2f}</td><td colspan=\"4\"></td>"
      "<td class=\"num\">{:.2f}</td></tr>\n</tbody></table>\n",
      c.meterset_mu, util::gy_to_cgy(c.computed_dose_gy));
  return out;
}

// The sector-integration dose beside the equivalent-square dose: the beam, then every part that used
// sector integration (all of them, unlike the parts table: this is the comparison a reviewer asks for).
std::string scatter_table(const engine::BeamDose& c) {
  const std::vector<ScatterComparison> rows = scatter_comparisons(c);
  if (rows.empty()) return {};
  std::string out =
      "<h3>Sector integration beside the equivalent square</h3>\n"
      "<p>Phantom scatter of the shaped opening by sector integration (used), and the same beam through "
      "Sterling's equivalent square (4A/P) of the opening.</p>\n"
      "<table class=\"factors scatter\"><thead><tr><th>Part</th><th class=\"num\">From CP</th>"
      "<th class=\"num\">Sector integration Gy</th><th class=\"num\">Equivalent square Gy</th>"
      "<th class=\"num\">Difference %</th></tr></thead><tbody>\n";
  for (const ScatterComparison& r : rows) {
    out += fmt::format(
        "<tr{}><td>{}</td><td class=\"num\">{}</td><td class=\"num\">{:.4f}</td><td class=\"num\">{:.4f}</td>"
        "<td class=\"num\">{:+.2f}</td></tr>\n",
        r.part == 0 ? " class=\"total\"" : "", r.part == 0 ? std::string{"Beam"} : std::to_string(r.part),
        r.part == 0 ? std::string{"\u2013"} : std::to_string(r.from_control_point), r.sector_dose_gy,
        r.equivalent_square_dose_gy, r.difference_percent);
  }
  out += "</tbody></table>\n";
  return out;
}

std::string figure(const engine::BeamDose& c) {
  const auto content = bev_content(c);
  if (!content) return "<p>No beam's-eye view: the field geometry was not resolved.</p>\n";
  const BevPanel panel;
  const BevMapping mapping = bev_mapping(*content, panel);
  std::string caption = fmt::format(
      "Beam's-eye view from the source, scale {} at the isocentre plane (a 10 cm field side is {:g} mm). "
      "Thick line: "
      "jaws X1/X2, Y1/Y2; dash-dot: collimator axes; \u2295 central axis; P: the dose point projected to the "
      "isocentre plane ({:.1f} mm off axis).",
      scale_text(mapping.scale()), 100.0 * mapping.scale(), content->off_axis_mm);
  if (content->shaped_by_mlc) caption += " Grey: MLC leaves inside the jaws.";
  const auto has_block = [&](bool aperture) {
    return std::any_of(content->blocks.begin(), content->blocks.end(),
                       [aperture](const engine::BlockShape& b) { return b.aperture == aperture; });
  };
  if (has_block(false)) caption += " Solid outline over a light fill: shielding block (blocked inside).";
  if (has_block(true)) caption += " Long dashes: aperture block (open inside).";
  if (content->modulated) {
    caption += content->outline_known ? " Grey: area open in at least one part of the beam; dashed: envelope "
                                        "of the jaws; small circles: the "
                                        "point as each part sees it."
                                      : " Dashed: envelope of the jaws of all parts (no leaf shapes could be "
                                        "built); small circles: the point "
                                        "as each part sees it.";
  }
  return fmt::format("<figure>{}<figcaption>{}</figcaption></figure>\n", beams_eye_view_svg(*content, panel),
                     html_escape(caption));
}

}  // namespace

std::string beam_section(const check::PlanCheck& check, const check::BeamCheck& beam, std::size_t index,
                         std::size_t count) {
  std::string out = fmt::format("<section class=\"beam\" id=\"beam-{}-{}\">\n", beam.fraction_group_number,
                                beam.beam_number);
  out += fmt::format(
      "<div class=\"running\"><span>Patient {} \u00B7 {} \u00B7 plan {}</span><span>Beam page {} of "
      "{}</span></div>\n",
      html_escape(or_dash(check.patient_id)), html_escape(person_name(check.patient_name)),
      html_escape(or_dash(check.plan_label)), index + 1, count);
  out += fmt::format("<h2>Beam {} \u201C{}\u201D \u2013 fraction group {}</h2>\n", beam.beam_number,
                     html_escape(or_dash(beam.beam_name)), beam.fraction_group_number);

  out +=
      "<table class=\"summary\"><thead><tr><th class=\"num\">MU</th><th class=\"num\">Planned Gy</th>"
      "<th class=\"num\">Independent Gy</th><th class=\"num\">Deviation %</th><th class=\"num\">Uncertainty "
      "%</th><th class=\"num\">Tolerance "
      "%</th>"
      "<th class=\"num\">Independent MU</th><th>Outcome</th></tr></thead><tbody>\n";
  out += fmt::format(
      "<tr class=\"{}\"><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td "
      "class=\"num\">{}</td>"
      "<td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td "
      "class=\"word\">{}</td></tr>\n"
      "</tbody></table>\n",
      status_class(beam.status), fixed(beam.meterset_mu, 1), fixed(beam.planned_dose_gy, 3),
      fixed(beam.computed_dose_gy, 3), signed_fixed(beam.deviation_percent, 1),
      beam.calc_uncertainty_percent ? "\u00B1" + fixed(beam.calc_uncertainty_percent, 1)
                                    : std::string{"\u2013"},
      beam.tolerance_percent ? "\u00B1" + fixed(beam.tolerance_percent, 1) : std::string{"\u2013"},
      fixed(beam.independent_mu, 1), status_words(beam.status));
  out +=
      fmt::format("<div class=\"outcome {}\"><div class=\"word\">{}</div><div>{}</div></div>\n",
                  status_class(beam.status), status_words(beam.status), html_escape(verdict_sentence(beam)));

  if (!beam.calculation) {
    out += "</section>\n";
    return out;
  }
  const engine::BeamDose& c = *beam.calculation;
  out += "<div class=\"figure-row\">\n" + figure(c);
  out +=
      "<div class=\"facts\"><h3>Setup and geometry</h3>\n" + setup_facts(c, beam.words) + "</div>\n</div>\n";

  if (c.dose_computed) {
    if (c.features.modulated) {
      out += "<h3>Parts of the beam</h3>\n" + parts_table(c);
    } else {
      const char* form = c.method == engine::Method::tmr   ? "isocentric TMR"
                         : c.method == engine::Method::pdd ? "fixed-SSD PDD"
                                                           : "TG-71 electron";
      out += fmt::format("<h3>Factors ({} form)</h3>\n", form);
      out += factor_table(c);
    }
    out += scatter_table(c);
  } else if (beam.words.problem) {
    out += fmt::format("<p>No dose was computed: {}.</p>\n", html_escape(beam.words.problem->sentence));
  }
  if (!beam.words.approximations.empty()) {
    out += "<h3>Approximations</h3>\n<ul class=\"notes\">\n";
    for (const auto& a : beam.words.approximations) out += "<li>" + html_escape(a) + "</li>\n";
    out += "</ul>\n";
  }
  out += "</section>\n";
  return out;
}

}  // namespace countersign::report::html
