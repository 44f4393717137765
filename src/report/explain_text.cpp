#include <countersign/report/explain_report.hpp>

#include <countersign/geometry/patient_position.hpp>
#include <countersign/report/factor_rows.hpp>
#include <countersign/report/html_report.hpp>
#include <countersign/report/scatter_comparison.hpp>
#include <countersign/util/units.hpp>

#include <fmt/format.h>

#include <algorithm>
#include <string>
#include <vector>

namespace countersign::report {

namespace {

std::string opt(const std::optional<double>& v, int decimals, std::string_view unit = "") {
  return v ? fmt::format("{:.{}f}{}", *v, decimals, unit) : std::string{"-"};
}

std::string status_line(const check::BeamCheck& beam) {
  switch (beam.status) {
    case check::Status::within_tolerance:
      return "WITHIN TOLERANCE";
    case check::Status::outside_tolerance:
      return "OUTSIDE TOLERANCE";
    case check::Status::not_checked:
      return "NOT CHECKED";
    case check::Status::skipped:
      return "SKIPPED";
  }
  return "NOT CHECKED";
}

void factor_lines(std::string& out, const engine::PointDose& dose) {
  out += fmt::format("    {:<52} {:>8}  {}\n", "output at the calibration point (cGy/MU)",
                     fmt::format("{:.4f}", dose.factors.output_cgy_per_mu), "machine.toml");
  for (const FactorRow& row : factor_rows(dose)) {
    const engine::Factor& f = *row.factor;
    out += fmt::format("    {:<52} {:>8.4f}  {}{}\n", row.name + (row.role == "divides" ? " (divides)" : ""),
                       f.value, describe_basis(f), f.extrapolated() ? "  << EXTRAPOLATED" : "");
    if (f.lookup) {
      for (const beamdata::AxisBracket& a : f.lookup->axes) {
        out += fmt::format(
            "        {} {:.3f}: nodes {:g}..{:g} (0-based data index {}..{}), weights {:.3f}/{:.3f}{}\n",
            a.axis, a.query, a.lower_node, a.upper_node, a.lower_index, a.upper_index, 1.0 - a.upper_weight,
            a.upper_weight, a.extrapolated ? ", OUTSIDE THE TABLE" : "");
      }
    }
  }
  out += fmt::format("    {:<52} {:>8.4f}\n", "dose per MU (cGy/MU)", dose.dose_per_mu_cgy);
}

std::string percent_or_dash(const std::optional<double>& v) {
  return v ? fmt::format("{:+.1f} mm", *v) : std::string{"- (not in the plan)"};
}

// What the model's own checks found: calibration geometry, the two formalisms, the plan's distances
// against each other, and the estimated uncertainty (issue 12).
std::string model_checks_text(const check::PlanCheck& check, const engine::BeamDose& c) {
  std::string out = "\nModel checks\n";
  const check::TolerancePolicy& policy = check.options.policy;
  const engine::ReferenceConditions& ref = c.dose.reference;
  if (c.method != engine::Method::electron)
  out += fmt::format(
        "  calibration geometry {} ({}): reference field {:.2f} cm at the calibration point ({:g} cm from "
        "the "
        "source), {:.2f} cm at the surface, {:.2f} cm collimator setting; the output is divided by the "
        "factors "
      "there\n",
      beamdata::to_string(ref.geometry),
      ref.geometry_defaulted ? "not stated in the library: FORMAT.md's default rule"
                             : "stated in the library",
      ref.field_at_point_cm, ref.source_to_point_cm, ref.field_at_surface_cm, ref.collimator_field_cm);
  const engine::FormalismComparison& f = c.model.formalism;
  if (f.computed) {
    out += fmt::format(
        "  formalisms: {} {:.4f} cGy/MU (used), {} {:.4f} cGy/MU: difference {:+.2f} % (policy "
        "limit {:.1f} %){}\n",
        engine::to_code(c.method), f.used_dose_per_mu_cgy, engine::to_code(f.other), f.other_dose_per_mu_cgy,
        f.difference_percent, policy.formalism_max_difference_percent,
        f.other_extrapolated ? "; the other form extrapolated its table" : "");
  } else if (c.method == engine::Method::electron) {
    out += "  formalisms: not compared (electron beams have one form)\n";
  } else {
    out += "  formalisms: not compared (modulated beam: each part uses the chosen form)\n";
  }
  const engine::GeometryConsistency& g = c.model.geometry;
  out += fmt::format(
      "  geometry consistency (policy limit {:.1f} mm): depth + dose point SSD - ray length {}; "
      "SSD - (SPD - depth), flat surface, {}\n",
      policy.geometry_consistency_max_mm, percent_or_dash(g.ray_mismatch_mm),
      percent_or_dash(g.ssd_mismatch_mm));
  const engine::UncertaintyEstimate& u = c.model.uncertainty;
  out += fmt::format(
      "  estimated standard uncertainty of the calculation {:.2f} %: interpolation {:.2f} %, formalisms "
      "{:.2f} %, "
      "sector vs equivalent square {}, heterogeneity {:.2f} % (our estimate, common practice, no source)\n",
      u.combined_percent, u.interpolation_percent, u.formalism_percent,
      c.used_sector_integration() ? fmt::format("{:.2f} %", u.sector_percent)
                                  : std::string{"not computed (no sector integration)"},
      u.heterogeneity_percent);
  return out;
}

// The sector-integration dose beside the equivalent-square dose: the beam, then every part that
// used sector integration.
std::string scatter_comparison_text(const engine::BeamDose& c) {
  const std::vector<ScatterComparison> rows = scatter_comparisons(c);
  if (rows.empty()) return {};
  std::string out =
      "\nSector integration beside the equivalent square (Sterling's 4A/P of the same opening)\n"
      "      part  from_cp   sector Gy  equiv. sq. Gy  difference %\n";
  for (const ScatterComparison& r : rows) {
    out += fmt::format("    {:>6}  {:>7}  {:>10.5f}  {:>13.5f}  {:>+12.2f}\n",
                       r.part == 0 ? std::string{"beam"} : std::to_string(r.part),
                       r.part == 0 ? std::string{"-"} : std::to_string(r.from_control_point),
                       r.sector_dose_gy, r.equivalent_square_dose_gy, r.difference_percent);
  }
  return out;
}

// The patient study the check used, or why it used none.
std::string study_line(const check::StudyUsed& study) {
  if (study.problem) return fmt::format("Patient study: not usable: {}\n", study.problem->sentence);
  if (study.present) {
    return fmt::format("Patient study: CT series {}, structure set {}, body from {}\n", study.ct_series_uid,
                       study.structure_set_uid, study.body_source);
  }
  return fmt::format("Patient study: none; {}\n", study.note);
}

}  // namespace

std::string explanation_text(const check::PlanCheck& check, const check::BeamCheck& beam,
                             const BeamExplanation& e) {
  std::string out;
  out += fmt::format("Beam {} \"{}\", fraction group {}, of {}\n", beam.beam_number, beam.beam_name,
                     beam.fraction_group_number, check.source_file);
  out += fmt::format("Patient {}  plan {}  SOP Instance UID {}\n\n", check.patient_id, check.plan_label,
                     check.sop_instance_uid);

  out += study_line(check.options.study);
  out += fmt::format("Outcome: {}\n  {}\n", status_line(beam), beam.reason.sentence);
  out += fmt::format(
      "  MU {}  planned {} Gy  independent {} Gy  deviation {} %  tolerance {} %  independent MU {}\n",
      opt(beam.meterset_mu, 1), opt(beam.planned_dose_gy, 4), opt(beam.computed_dose_gy, 4),
      beam.deviation_percent ? fmt::format("{:+.2f}", *beam.deviation_percent) : "-",
      opt(beam.tolerance_percent, 1), opt(beam.independent_mu, 1));
  if (beam.calc_uncertainty_percent)
    out += fmt::format("  estimated standard uncertainty of the calculation {:.2f} % (see Model checks)\n",
                       *beam.calc_uncertainty_percent);
  if (beam.category) {
    out += fmt::format("  category {} ({}), policy: {}\n", check::to_code(*beam.category),
                       check::to_code(beam.medium), check.options.policy.source);
  }

  if (!beam.calculation) {
    out += "\nNo calculation was attempted for this beam.\n";
    out += fmt::format("\n{}\n", caution_text());
    return out;
  }
  const engine::BeamDose& c = *beam.calculation;
  const check::CalculationWords& words = beam.words;
  if (words.problem) out += fmt::format("  calculation stopped: {}\n", words.problem->sentence);

  out += "\nBeam data\n";
  out += fmt::format("  library {}  SHA-256 {}\n", check.beamdata_root, check.beamdata_sha256);
  if (c.machine != nullptr)
    out += fmt::format("  machine {} ({})\n", c.machine->name, c.machine->manifest.string());
  if (c.beam_data != nullptr) {
    const auto& d = *c.beam_data;
    out += fmt::format("  beam {} {} {:g} MV, dmax {:g} cm, PDD measured at SSD {:g} cm\n", d.id, d.radiation,
                       d.energy_mv, d.dmax_cm, d.pdd_ssd_cm);
    out += fmt::format("  calibration {:.4f} cGy/MU, {:g} cm field, SSD {:g} cm, depth {:g} cm\n",
                       d.calibration.output_cgy_per_mu, d.calibration.field_cm, d.calibration.ssd_cm,
                       d.calibration.depth_cm);
  }

  if (c.electron_data != nullptr) {
    const auto& d = *c.electron_data;
    out += fmt::format("  electron beam {} {:g} MeV, dmax {:g} cm, tables at SSD {:g} cm\n", d.id,
                       d.energy_mev, d.dmax_cm, d.pdd_ssd_cm);
    out += fmt::format("  calibration {:.4f} cGy/MU, applicator {}, SSD {:g} cm, depth {:g} cm\n",
                       d.calibration.output_cgy_per_mu, d.calibration.applicator, d.calibration.ssd_cm,
                       d.calibration.depth_cm);
  }
  if (c.electron) {
    const engine::ElectronFacts& ef = *c.electron;
    out += fmt::format(
        "  applicator {} ({}), {:g} cm, effective SSD {:g} cm; cutout {} {:.2f} cm; depth {:.2f} cm{}; R80 "
        "{}; "
        "SSD of the entrance surface {:.1f} cm (air gap {:+.1f} cm); obliquity {}\n",
        ef.applicator_id, ef.applicator_type.empty() ? "type absent" : ef.applicator_type,
        ef.applicator_field_cm, ef.effective_ssd_cm, engine::to_code(ef.cutout.method),
        ef.cutout.equivalent_square_cm, ef.depth_cm,
        ef.bolus_thickness_cm
            ? fmt::format(" (bolus {} {:.2f} cm included)", ef.bolus_id, *ef.bolus_thickness_cm)
            : std::string{},
        ef.r80_cm ? fmt::format("{:.2f} cm", *ef.r80_cm) : std::string{"not reached in the table"},
        ef.entrance_ssd_cm, ef.air_gap_cm,
        ef.obliquity_deg ? fmt::format("{:.1f} degrees (CT)", *ef.obliquity_deg)
                         : std::string{"unknown (no CT)"});
  }

  if (c.dose_computed) out += model_checks_text(check, c);

  if (c.point.spd_mm > 0.0) {
    out += "\nGeometry\n";
    if (c.patient_position) {
      const Eigen::Matrix3d m = geometry::patient_to_table_top(*c.patient_position);
      out += fmt::format("  patient position {}: patient (x left, y posterior, z head) -> IEC table top\n",
                         geometry::to_code(*c.patient_position));
      for (int r = 0; r < 3; ++r) {
        out += fmt::format("      [{:+.0f} {:+.0f} {:+.0f}]\n", m(r, 0), m(r, 1), m(r, 2));
      }
    }
    out += fmt::format("  gantry {:.1f} deg, collimator {:.1f} deg, couch {:.1f} deg, SAD {:.1f} mm\n",
                       c.angles.gantry_deg, c.angles.collimator_deg, c.angles.couch_deg, c.sad_mm);
    out += fmt::format(
        "  isocentre ({:.1f}, {:.1f}, {:.1f}) mm; dose point ({:.1f}, {:.1f}, {:.1f}) mm from {}\n",
        c.isocenter_mm[0], c.isocenter_mm[1], c.isocenter_mm[2], c.dose_point.point_mm[0],
        c.dose_point.point_mm[1], c.dose_point.point_mm[2], engine::to_code(c.dose_point.source));
    const auto& p = c.point.collimator_mm;
    out +=
        fmt::format("  point in collimator coordinates ({:.1f}, {:.1f}, {:.1f}) mm\n", p.x(), p.y(), p.z());
    out += fmt::format("  SPD {:.1f} mm, ray length {:.1f} mm, SSD {}\n", c.point.spd_mm,
                       c.point.ray_length_mm, opt(c.ssd_mm, 1, " mm"));
    out += fmt::format("  depth {:.1f} mm: {}\n", c.depth.depth_mm, words.depth_description);
    out += fmt::format("    plan depth {}, plan equivalent depth {}, SPD - SSD {}\n",
                       opt(c.depth.plan_depth_mm, 1, " mm"), opt(c.depth.plan_equivalent_depth_mm, 1, " mm"),
                       opt(c.depth.spd_minus_ssd_mm, 1, " mm"));
    out += fmt::format(
        "  off axis {:.1f} mm at the isocentre plane, projected to ({:.1f}, {:.1f}) mm; {} the field, "
        "{:.1f} mm from its nearest edge\n",
        c.point.off_axis_mm, c.point.iso_plane_x_mm, c.point.iso_plane_y_mm,
        c.point_in_field ? "inside" : "OUTSIDE", c.edge_distance_mm);
    const auto& j = c.aperture.jaws();
    out += fmt::format(
        "  jaws X1 {:.1f} X2 {:.1f} Y1 {:.1f} Y2 {:.1f} mm; opening {:.2f} cm2, perimeter {:.2f} cm{}\n",
        j.x1_mm, j.x2_mm, j.y1_mm, j.y2_mm, util::mm2_to_cm2(c.aperture.area_mm2()),
        util::mm_to_cm(c.aperture.perimeter_mm()), c.aperture.shaped_by_mlc() ? ", shaped by MLC" : "");
    if (c.dose_computed) {
      const auto& s = c.dose.fields;
      out += fmt::format(
          "  equivalent squares: collimator (s_c) {:.2f} cm; at isocentre {:.2f} cm; surface (s_s) {:.2f} "
          "cm; "
          "at the point (s_d) {:.2f} cm; at SSD + dmax (s_d0) {:.2f} cm\n",
          s.collimator_cm, s.isocentre_cm, s.surface_cm, s.point_cm, s.normalisation_depth_cm);
    }
  }

  if (c.dose_computed) {
    out += fmt::format("\nFactors ({}; {})\n", engine::to_code(c.method), words.method_reason);
    if (c.segments.size() > 1) out += "  (first part of the beam; every part is listed below)\n";
    factor_lines(out, c.dose);
    out += fmt::format("    x {:.2f} MU = {:.3f} cGy for the beam\n", c.meterset_mu,
                       util::gy_to_cgy(c.computed_dose_gy));
    if (c.segments.size() > 1) {
      out += fmt::format(
          "\nParts ({})\n    part  from_cp       MU  gantry  field_cm  depth_mm  point          dose_cGy\n",
          c.segments.size());
      for (std::size_t i = 0; i < c.segments.size(); ++i) {
        const auto& s = c.segments[i];
        out += fmt::format(
            "    {:>4}  {:>7}  {:>7.2f}  {:>6.1f}  {:>8.2f}  {:>8.1f}  {:<13}  {:>8.3f}\n", i + 1,
            s.from_control_point, s.meterset_mu, s.angles.gantry_deg, s.inputs.field_at_isocentre_cm,
            s.depth_mm,
            s.point_in_opening ? "in opening" : (s.point_in_jaws ? "under leaves" : "outside jaws"),
            s.dose.dose_cgy);
      }
    }
  }

  if (c.dose_computed) out += scatter_comparison_text(c);

  if (e.tmr && e.pdd) {
    out += "\nBoth formalisms (same inputs, the engine called with each method)\n";
    out += fmt::format("    {:<40} {:>12} {:>12}\n", "", "TMR form", "PDD form");
    const auto value_of = [](const engine::PointDose& d, const std::string& key) -> std::string {
      for (const FactorRow& row : factor_rows(d, FactorSelection::all_factors)) {
        if (row.key == key) {
          return row.factor->basis == engine::FactorBasis::not_applicable
                     ? "-"
                     : fmt::format("{:.4f}", row.factor->value);
        }
      }
      return "-";
    };
    for (const FactorRow& row : factor_rows(e.tmr->first_part, FactorSelection::all_factors)) {
      const std::string a = value_of(e.tmr->first_part, row.key);
      const std::string b = value_of(e.pdd->first_part, row.key);
      if (a == "-" && b == "-") continue;
      out += fmt::format("    {:<40} {:>12} {:>12}\n", row.key, a, b);
    }
    out += fmt::format("    {:<40} {:>12.4f} {:>12.4f}\n", "dose per MU, first part (cGy/MU)",
                       e.tmr->first_part.dose_per_mu_cgy, e.pdd->first_part.dose_per_mu_cgy);
    out += fmt::format("    {:<40} {:>12.4f} {:>12.4f}\n", "beam dose (Gy)", util::cgy_to_gy(e.tmr->dose_cgy),
                       util::cgy_to_gy(e.pdd->dose_cgy));
    out += fmt::format(
        "    PDD form - TMR form: {} %\n",
        e.formalism_difference_percent ? fmt::format("{:+.2f}", *e.formalism_difference_percent) : "-");
  }

  out += "\nWhat would reconcile the independent dose with the planned dose\n";
  if (!e.sensitivity) {
    out += fmt::format("  nothing to reconcile: {}\n", e.sensitivity_note);
  } else {
    const auto& s = *e.sensitivity;
    const double ratio = s.baseline_dose_cgy > 0.0 ? s.target_dose_cgy / s.baseline_dose_cgy : 0.0;
    out += fmt::format("  planned {:.4f} Gy, independent {:.4f} Gy (planned / independent = {:.4f})\n",
                       util::cgy_to_gy(s.target_dose_cgy), util::cgy_to_gy(s.baseline_dose_cgy), ratio);
    if (beam.meterset_mu && beam.independent_mu) {
      out += fmt::format(
          "  the meterset: the plan has {:.1f} MU, this calculation needs {:.1f} MU for the planned dose\n",
          *beam.meterset_mu, *beam.independent_mu);
    }
    out += "  each change alone, every other input as calculated:\n";
    for (const auto& r : s.changes) out += fmt::format("  - {}\n", reconciliation_sentence(r));
    if (ratio > 0.0 && !e.parts.empty() && e.tmr && e.pdd) {
      const engine::PointDose& used =
          e.parts.front().method == engine::Method::tmr ? e.tmr->first_part : e.pdd->first_part;
      out += "  or a single factor off by the whole difference (value needed):\n";
      for (const FactorRow& row : factor_rows(used)) {
        const double v = row.factor->value;
        out += fmt::format("      {:<52} {:.4f} -> {:.4f}\n", row.name, v,
                           row.role == "divides" ? v / ratio : v * ratio);
      }
    }
  }

  if (!words.approximations.empty()) {
    out += "\nApproximations\n";
    for (const auto& a : words.approximations) out += "  - " + a + "\n";
  }
  out += fmt::format("\n{}\n", caution_text());
  return out;
}

}  // namespace countersign::report
