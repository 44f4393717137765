// The cover page of the HTML record and the page around the beam sections.

#include <countersign/report/html_report.hpp>

#include <countersign/report/html_escape.hpp>
#include <countersign/util/version.hpp>

#include "html_parts.hpp"

#include <fmt/format.h>

#include <ctime>
#include <fstream>
#include <set>
#include <system_error>

namespace countersign::report {

using html::fixed;
using html::or_dash;
using html::signed_fixed;

// The study the check used, or why none: every record states the medium the doses assume.
static std::string study_text(const check::StudyUsed& study) {
  if (study.problem) return "not usable (every beam not checked): " + study.problem->sentence;
  if (!study.present) return "none; " + study.note;
  return fmt::format("CT series {}, structure set {}, body from {}, densities from {}; depths from the CT",
                     study.ct_series_uid, study.structure_set_uid, study.body_source, study.density_table);
}

std::string_view caution_text() {
  return "This independent calculation supports, and does not replace, the review of the plan by a qualified "
         "medical physicist under local regulations and licensed practice. A result within tolerance does "
         "not "
         "show that the plan is clinically appropriate; a beam not checked has not been verified by this "
         "program.";
}

std::string local_timestamp() {
  const std::time_t now = std::time(nullptr);
  std::tm local{};
  localtime_r(&now, &local);
  char buffer[64];
  const std::size_t n = std::strftime(buffer, sizeof buffer, "%Y-%m-%d %H:%M:%S %z", &local);
  return std::string(buffer, n);
}

namespace {

std::string identity_row(std::string_view label, const std::string& value,
                         std::string_view value_class = "") {
  return fmt::format("<tr><th>{}</th><td{}>{}</td></tr>\n", label,
                     value_class.empty() ? std::string{} : fmt::format(" class=\"{}\"", value_class),
                     html_escape(value));
}

std::string machines_of(const check::PlanCheck& check) {
  std::set<std::string> names;
  for (const auto& b : check.beams) {
    if (b.calculation && b.calculation->machine != nullptr) names.insert(b.calculation->machine->name);
  }
  std::string text;
  for (const auto& n : names) text += (text.empty() ? "" : ", ") + n;
  return text.empty() ? std::string{"\u2013 (no beam matched a machine of the library)"} : text;
}

std::string policy_text(const check::TolerancePolicy& p) {
  return fmt::format(
      "{}: simple \u00B1{:.1f} %, complex \u00B1{:.1f} %, modulated \u00B1{:.1f} %; heterogeneous "
      "\u00B1{:.1f} / {:.1f} / {:.1f} %",
      p.source, p.simple_percent, p.complex_percent, p.modulated_percent, p.simple_heterogeneous_percent,
      p.complex_heterogeneous_percent, p.modulated_heterogeneous_percent);
}

std::string plan_outcome_words(const check::PlanCheck& check) {
  switch (check.status) {
    case check::Status::within_tolerance:
      return "Every checked beam within tolerance";
    case check::Status::outside_tolerance:
      return "Outside tolerance";
    case check::Status::not_checked:
      return "Not checked";
    case check::Status::skipped:
      return "Nothing to check";
  }
  return "Not checked";
}

std::string counts_text(const check::PlanCheck& check) {
  const auto [within, outside, not_checked, skipped] = check.beam_counts();
  return fmt::format("{} beam{}: {} within tolerance, {} outside tolerance, {} not checked, {} skipped",
                     check.beams.size(), check.beams.size() == 1 ? "" : "s", within, outside, not_checked,
                     skipped);
}

std::string summary_table(const check::PlanCheck& check) {
  std::string out =
      "<table class=\"summary\"><thead><tr><th class=\"num\">FG</th><th class=\"num\">Beam</th><th>Name</th>"
      "<th class=\"num\">MU</th><th class=\"num\">Planned Gy</th><th class=\"num\">Independent Gy</th>"
      "<th class=\"num\">Deviation %</th><th class=\"num\">Uncertainty %</th><th class=\"num\">Tolerance "
      "%</th><th class=\"num\">Independent "
      "MU</th>"
      "<th>Outcome</th></tr></thead><tbody>\n";
  for (const auto& b : check.beams) {
    out += fmt::format(
        "<tr class=\"{}\"><td class=\"num\">{}</td><td class=\"num\">{}</td><td>{}</td><td "
        "class=\"num\">{}</td>"
        "<td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td>"
        "<td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"word\">{}</td></tr>\n",
        html::status_class(b.status), b.fraction_group_number, b.beam_number,
        html_escape(or_dash(b.beam_name)), fixed(b.meterset_mu, 1), fixed(b.planned_dose_gy, 3),
        fixed(b.computed_dose_gy, 3), signed_fixed(b.deviation_percent, 1),
        b.calc_uncertainty_percent ? "\u00B1" + fixed(b.calc_uncertainty_percent, 1) : std::string{"\u2013"},
        b.tolerance_percent ? "\u00B1" + fixed(b.tolerance_percent, 1) : std::string{"\u2013"},
        fixed(b.independent_mu, 1), html::status_words(b.status));
  }
  out += "</tbody></table>\n";
  // The reasons of beams without a verdict, so the cover page says why.
  std::string reasons;
  for (const auto& b : check.beams) {
    if (b.status == check::Status::within_tolerance) continue;
    reasons += fmt::format("<li>Beam {} ({}): {}</li>\n", b.beam_number, html_escape(or_dash(b.beam_name)),
                           html_escape(html::verdict_sentence(b)));
  }
  if (!reasons.empty()) out += "<ul class=\"notes\">\n" + reasons + "</ul>\n";
  return out;
}

std::string dose_reference_table(const check::PlanCheck& check) {
  if (check.dose_references.empty())
    return "<p>The plan has no dose reference with beam contributions.</p>\n";
  std::string out =
      "<table class=\"references\"><thead><tr><th class=\"num\">FG</th><th "
      "class=\"num\">Ref.</th><th>Description</th>"
      "<th>Point (x, y, z) mm</th><th>Beams (planned / independent Gy)</th><th class=\"num\">Planned Gy</th>"
      "<th class=\"num\">Independent Gy</th><th class=\"num\">Deviation %</th></tr></thead><tbody>\n";
  for (const auto& r : check.dose_references) {
    std::string parts;
    for (const auto& c : r.contributions) {
      parts += fmt::format("{}beam {}: {} / {}", parts.empty() ? "" : "<br>", c.beam_number,
                           fixed(c.planned_dose_gy, 3), fixed(c.computed_dose_gy, 3));
      if (c.problem) parts += " (" + html_escape(c.problem->sentence) + ")";
    }
    const std::string point = r.point_mm ? fmt::format("{:.1f}, {:.1f}, {:.1f}", (*r.point_mm)[0],
                                                       (*r.point_mm)[1], (*r.point_mm)[2])
                                         : "\u2013";
    out += fmt::format(
        "<tr><td class=\"num\">{}</td><td class=\"num\">{}</td><td>{}</td><td class=\"num\">{}</td><td "
        "class=\"small\">{}</td>"
        "<td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td></tr>\n",
        r.fraction_group_number, r.number, html_escape(or_dash(r.description)), point, parts,
        fixed(r.planned_dose_gy, 3), fixed(r.computed_dose_gy, 3), signed_fixed(r.deviation_percent, 1));
    if (!r.note.empty()) {
      out += fmt::format("<tr><td colspan=\"8\" class=\"small\">Reference {}: {}</td></tr>\n", r.number,
                         html_escape(r.note));
    }
  }
  out += "</tbody></table>\n";
  return out;
}

}  // namespace

std::string html_report(const check::PlanCheck& check, const HtmlOptions& options) {
  const std::string when = options.generated_at.empty() ? local_timestamp() : options.generated_at;
  std::string page;
  page.reserve(64 * 1024);
  page += "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n";
  // No network: nothing on this page may fetch anything.
  page +=
      "<meta http-equiv=\"Content-Security-Policy\" content=\"default-src 'none'; style-src 'unsafe-inline'; "
      "img-src data:\">\n";
  page += fmt::format("<title>MU check record \u2013 {} \u2013 {}</title>\n",
                      html_escape(or_dash(check.patient_id)), html_escape(or_dash(check.plan_label)));
  page += "<style>" + std::string(html::style_sheet()) + "</style>\n</head>\n<body>\n";

  page +=
      "<section class=\"cover\">\n<div class=\"masthead\"><div><h1>Independent monitor-unit check</h1>"
      "<div class=\"sub\">Record of a second dose calculation for each beam, for review and "
      "signature</div></div>";
  page += fmt::format("<div class=\"stamp\">countersign {}<br>{}</div></div>\n", html_escape(version_string),
                      html_escape(when));

  page += "<h2>Plan</h2>\n<table class=\"identity\">\n";
  page += identity_row("Patient ID", or_dash(check.patient_id));
  page += identity_row("Patient name", html::person_name(check.patient_name));
  page += identity_row("Plan label", or_dash(check.plan_label));
  page += identity_row("Approval status", or_dash(check.approval_status));
  page += identity_row("SOP Instance UID", or_dash(check.sop_instance_uid), "mono");
  page += identity_row("Plan file", or_dash(check.source_file), "mono");
  for (const std::string& warning : check.warnings) page += identity_row("Reading warning", warning);
  page += "</table>\n<h2>Calculation</h2>\n<table class=\"identity\">\n";
  page += identity_row("Machine", machines_of(check));
  page += identity_row("Beam-data library", or_dash(check.beamdata_root), "mono");
  page += identity_row("Library SHA-256", or_dash(check.beamdata_sha256), "mono");
  page += identity_row("Software", std::string{"countersign "} + version_string);
  page += identity_row("Checked on", when);
  page += identity_row("Tolerance policy", policy_text(check.options.policy));
  page += identity_row("Patient study", study_text(check.options.study));
  page += "</table>\n";

  page += fmt::format(
      "<div class=\"outcome {}\"><div class=\"word\">{}</div><div>{}.</div><div>{}.</div></div>\n",
      html::status_class(check.status), html_escape(plan_outcome_words(check)),
      html_escape(check.reason.sentence.empty() ? std::string{"\u2013"} : check.reason.sentence),
      html_escape(counts_text(check)));

  page += "<h2>Beams</h2>\n" + summary_table(check);
  page += "<h2>Dose references</h2>\n" + dose_reference_table(check);

  page +=
      "<h2>Sign-off</h2>\n<div class=\"signoff\"><div>Checked by "
      "(name)</div><div>Signature</div><div>Date</div>"
      "<div class=\"wide\">Comments</div></div>\n";
  page +=
      fmt::format("<div class=\"caution\"><strong>Caution.</strong> {}</div>\n", html_escape(caution_text()));
  page += "</section>\n";

  std::vector<const check::BeamCheck*> detailed;
  for (const auto& b : check.beams) {
    if (b.status != check::Status::skipped) detailed.push_back(&b);
  }
  for (std::size_t i = 0; i < detailed.size(); ++i) {
    page += html::beam_section(check, *detailed[i], i, detailed.size());
  }
  page += "</body>\n</html>\n";
  return page;
}

Expected<std::filesystem::path> write_html(const check::PlanCheck& check, const std::filesystem::path& file,
                                           const HtmlOptions& options) {
  const std::string page = html_report(check, options);
  std::filesystem::path temporary = file;
  temporary += ".partial";
  {
    std::ofstream out(temporary, std::ios::binary | std::ios::trunc);
    if (!out) return Error{ErrorKind::io, file.string(), "", "", "cannot create the HTML record"};
    out.write(page.data(), static_cast<std::streamsize>(page.size()));
    out.close();
    if (!out) return Error{ErrorKind::io, file.string(), "", "", "cannot write the HTML record"};
  }
  std::error_code ec;
  std::filesystem::rename(temporary, file, ec);
  if (ec) {
    std::filesystem::remove(temporary, ec);
    return Error{ErrorKind::io, file.string(), "", "", "cannot move the HTML record into place"};
  }
  return file;
}

}  // namespace countersign::report
