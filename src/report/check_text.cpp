#include <countersign/report/check_text.hpp>
#include <countersign/report/scatter_comparison.hpp>
#include <countersign/util/units.hpp>

#include <countersign/util/text.hpp>

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <vector>

namespace countersign::report {

namespace {

std::string number(const std::optional<double>& value, const char* format) {
  return value ? fmt::format(fmt::runtime(format), *value) : std::string("-");
}

std::string depth_label(const check::BeamCheck& b) {
  if (!b.calculation || !b.calculation->dose_computed) return "-";
  const engine::DepthUsed& d = b.calculation->depth;
  const char* tag = "plan";
  if (d.source == engine::DepthSource::derived_spd_minus_ssd) tag = "SPD-SSD";
  if (d.source == engine::DepthSource::derived_from_dose_point_ssd) tag = "ray-SSD";
  if (d.kind == engine::DepthChoice::equivalent || d.equivalent_by_policy) tag = "equiv";
  if (d.source == engine::DepthSource::ct_geometric) tag = "CT-geo";
  if (d.source == engine::DepthSource::ct_radiological) tag = "CT-rad";
  return fmt::format("{:.1f} {}", util::mm_to_cm(d.depth_mm), tag);
}

// A value from the plan file, on one line of a terminal: control characters escaped.
std::string shown(std::string_view text) { return escape_control_characters(text); }

std::string cm(const std::optional<double>& mm) {
  return mm ? fmt::format("{:.1f}", util::mm_to_cm(*mm)) : std::string("-");
}

// The patient study the check used, or why it used none.
void write_study_line(std::ostream& out, const check::StudyUsed& study) {
  if (study.problem) {
    out << "Patient study: not usable: " << shown(study.problem->sentence) << "\n";
  } else if (study.present) {
    out << fmt::format("Patient study: CT series {}, structure set {}, body from {}, densities from {}\n",
                       shown(study.ct_series_uid), shown(study.structure_set_uid), study.body_source,
                       study.density_table);
  } else {
    out << "Patient study: none; " << study.note << "\n";
  }
}

// Per computed beam: the medium, where the depth came from, and what the CT said beside the plan.
void write_medium_lines(std::ostream& out, const check::BeamCheck& b) {
  if (!b.calculation || !b.calculation->dose_computed) return;
  const engine::BeamDose& c = *b.calculation;
  out << fmt::format("  beam {} {}: medium: {}; depth {}\n", b.beam_number, shown(b.beam_name),
                     b.words.medium, b.words.depth_description);
  if (c.patient) {
    const engine::CtRay& ray = c.patient->ray;
    out << fmt::format(
        "    CT: SSD {:.1f} cm (plan {}), point SSD {:.1f} cm (plan {}), depth {:.1f} cm (plan {}), "
        "radiological "
        "depth {:.1f} cm (plan equivalent {}), entry ({:.1f}, {:.1f}, {:.1f}) mm, field outside the body "
        "{:.0f} %, "
        "heterogeneity {}\n",
        util::mm_to_cm(ray.ssd_mm), cm(c.ssd_mm), util::mm_to_cm(ray.source_to_entry_mm),
        cm(c.depth.plan_dose_point_ssd_mm), util::mm_to_cm(ray.depth_mm), cm(c.depth.plan_depth_mm),
        util::mm_to_cm(ray.radiological_depth_mm), cm(c.depth.plan_equivalent_depth_mm), ray.entry_mm[0],
        ray.entry_mm[1], ray.entry_mm[2], 100.0 * (ray.missing_tissue_fraction + ray.outside_ct_fraction),
        engine::to_code(c.patient->method));
  }
  if (c.homogeneous_dose_gy) {
    out << fmt::format(
        "    homogeneous water at the geometric depth: {:.4f} Gy (beside the {:.4f} Gy used)\n",
        *c.homogeneous_dose_gy, c.computed_dose_gy);
  }
}

// Per beam that used sector integration: its dose beside the equivalent square's, and for a beam of
// several parts the range of the parts' differences (`explain` lists every part).
void write_scatter_lines(std::ostream& out, const check::BeamCheck& b) {
  if (!b.calculation) return;
  const std::vector<ScatterComparison> rows = scatter_comparisons(*b.calculation);
  if (rows.empty()) return;
  const ScatterComparison& beam = rows.front();
  out << fmt::format(
      "  beam {} {}: sector integration {:.4f} Gy, equivalent square {:.4f} Gy, difference {:+.2f} %\n",
      b.beam_number, shown(b.beam_name), beam.sector_dose_gy, beam.equivalent_square_dose_gy,
      beam.difference_percent);
  if (rows.size() < 2) return;
  const auto [low, high] = std::minmax_element(rows.begin() + 1, rows.end(),
                                               [](const ScatterComparison& a, const ScatterComparison& c) {
                                                 return a.difference_percent < c.difference_percent;
                                               });
  out << fmt::format(
      "    {} of {} parts by sector integration, differences from {:+.2f} % (part {}) to {:+.2f} % (part "
      "{})\n",
      rows.size() - 1, b.calculation->segments.size(), low->difference_percent, low->part,
      high->difference_percent, high->part);
}

void write_scatter_section(std::ostream& out, const check::PlanCheck& c) {
  const bool any = std::any_of(c.beams.begin(), c.beams.end(), [](const check::BeamCheck& b) {
    return b.calculation && !scatter_comparisons(*b.calculation).empty();
  });
  if (!any) return;
  out << "\nSector integration beside the equivalent square (Sterling's 4A/P of the same opening):\n";
  for (const check::BeamCheck& b : c.beams) write_scatter_lines(out, b);
}

}  // namespace

void write_check_text(std::ostream& out, const check::PlanCheck& c) {
  out << fmt::format("Plan {} ({}), patient {}, SOP Instance UID {}\n",
                     c.plan_label.empty() ? "-" : shown(c.plan_label), shown(c.source_file),
                     c.patient_id.empty() ? "-" : shown(c.patient_id), shown(c.sop_instance_uid));
  out << fmt::format("Beam data: {} (SHA-256 {})\n", c.beamdata_root, c.beamdata_sha256);
  out << fmt::format("Tolerance policy: {}\n", c.options.policy.source);
  write_study_line(out, c.options.study);
  for (const std::string& warning : c.warnings)
    out << "Warning: " << escape_control_characters(warning) << "\n";
  out << "\n";
  out << fmt::format("{:>2} {:>4} {:<12} {:>8} {:>9} {:>9} {:>7} {:>5} {:>5} {:>8} {:>6} {:>12}  {}\n", "FG",
                     "Beam", "Name", "MU", "Plan Gy", "Calc Gy", "Dev %", "u %", "Tol %", "Indep MU",
                     "Method", "Depth cm", "Status");
  for (const check::BeamCheck& b : c.beams) {
    const bool computed = b.calculation && b.calculation->dose_computed;
    out << fmt::format("{:>2} {:>4} {:<12.12} {:>8} {:>9} {:>9} {:>7} {:>5} {:>5} {:>8} {:>6} {:>12}  {}\n",
                       b.fraction_group_number, b.beam_number, shown(b.beam_name),
                       number(b.meterset_mu, "{:.1f}"), number(b.planned_dose_gy, "{:.4f}"),
                       number(b.computed_dose_gy, "{:.4f}"), number(b.deviation_percent, "{:+.2f}"),
                       number(b.calc_uncertainty_percent, "{:.1f}"), number(b.tolerance_percent, "{:.1f}"),
                       number(b.independent_mu, "{:.1f}"),
                       computed ? std::string(engine::to_code(b.calculation->method)) : std::string("-"),
                       depth_label(b), check::to_code(b.status));
  }
  bool header = false;
  for (const check::BeamCheck& b : c.beams) {
    if (b.status == check::Status::within_tolerance &&
        b.reason.reason == check::Reason::deviation_within_tolerance) {
      continue;
    }
    if (!header) out << "\n";
    header = true;
    out << fmt::format("  beam {} {}: {} ({}): {}\n", b.beam_number, shown(b.beam_name),
                       check::to_code(b.status), check::reason_code(b.reason.reason), b.reason.sentence);
  }
  out << "\nMedium and depth of each beam:\n";
  for (const check::BeamCheck& b : c.beams) write_medium_lines(out, b);
  write_scatter_section(out, c);
  if (!c.dose_references.empty()) {
    out << "\nDose references (sum of contributions):\n";
    for (const check::DoseReferenceCheck& r : c.dose_references) {
      out << fmt::format("  FG {} reference {} {}: planned {:.4f} Gy, computed {} Gy, deviation {} %{}\n",
                         r.fraction_group_number, r.number, shown(r.description), r.planned_dose_gy,
                         number(r.computed_dose_gy, "{:.4f}"), number(r.deviation_percent, "{:+.2f}"),
                         r.note.empty() ? "" : " (" + r.note + ")");
    }
  }
  out << fmt::format("\nPlan: {} ({}): {}\n", check::to_code(c.status), check::reason_code(c.reason.reason),
                     c.reason.sentence);
}

void write_plan_summary_line(std::ostream& out, const check::PlanCheck& c) {
  const auto [within, outside, not_checked, skipped] = c.beam_counts();
  std::optional<double> largest_deviation_percent;
  for (const check::BeamCheck& b : c.beams) {
    if (b.deviation_percent && (!largest_deviation_percent ||
                                std::abs(*b.deviation_percent) > std::abs(*largest_deviation_percent))) {
      largest_deviation_percent = b.deviation_percent;
    }
  }
  out << fmt::format(
      "{:<18} {:>3} within {:>3} outside {:>3} not checked {:>3} skipped  largest {:>8}  {} ({})\n",
      check::to_code(c.status), within, outside, not_checked, skipped,
      largest_deviation_percent ? fmt::format("{:+.2f} %", *largest_deviation_percent) : std::string{"-"},
      shown(c.plan_label), shown(c.source_file));
}

}  // namespace countersign::report
