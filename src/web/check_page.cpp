// One check: who and what, its beams, the printable record written with it (the same page as
// `check --html`), the other checks of the same plan, its audit entry, the reviews and the review form.

#include <countersign/web/pages.hpp>

#include "page_parts.hpp"

namespace countersign::web {

namespace {

std::string id_link(std::int64_t id) {
  return "<a href=\"/checks/" + std::to_string(id) + "\">#" + std::to_string(id) + "</a>";
}

std::string summary(const store::CheckRecord& c) {
  std::string html = "<table class=\"summary\" id=\"summary\"><tbody>";
  const auto add = [&](std::string_view label, const std::string& value) {
    html += "<tr><th>" + std::string{label} + "</th><td>" + value + "</td></tr>";
  };
  add("Verdict", parts::badge(c.verdict));
  add("Review", parts::review_badge(c.review_status));
  add("Patient ID", "<span id=\"patient-id\">" + parts::esc(c.patient_id) + "</span>");
  add("Plan label", parts::esc(c.plan_label));
  add("SOP Instance UID", "<span class=\"hash\">" + parts::esc(c.sop_instance_uid) + "</span>");
  add("Checked", parts::time_text(c.checked_at_utc) + " on " + parts::esc(c.station) + ", countersign " +
                     parts::esc(c.software_version));
  add("File as received", parts::esc(c.source_name));
  add("Plan file SHA-256", "<span class=\"hash\">" + parts::esc(c.hashes.plan_sha256) + "</span>");
  add("Beam data SHA-256", "<span class=\"hash\">" + parts::esc(c.hashes.beamdata_sha256) + "</span>");
  add("Tolerance policy SHA-256", "<span class=\"hash\">" + parts::esc(c.hashes.policy_sha256) + "</span>");
  return html + "</tbody></table>";
}

std::string beams_table(const store::CheckRecord& c) {
  std::string html =
      "<table "
      "id=\"beams\"><thead><tr><th>Beam</th><th>Name</th><th>Machine</th><th>Energy</th><th>Method</th>"
      "<th>Verdict</th><th class=\"num\">Difference (%)</th><th class=\"num\">Tolerance (&#177;%)</th>"
      "<th>Reason</th></tr></thead><tbody>";
  for (const auto& b : c.beams) {
    html += "<tr><td>" + std::to_string(b.beam_number) + "</td><td>" + parts::esc(b.beam_name) + "</td><td>" +
            parts::esc(b.machine) + "</td><td>" + parts::energy_text(b.energy_mv) + "</td><td>" +
            parts::esc(b.technique) + "</td><td>" + parts::badge(b.verdict) + "</td><td class=\"num\">" +
            parts::signed_percent(b.deviation_percent) + "</td><td class=\"num\">" +
            parts::fixed(b.tolerance_percent, 1) + "</td><td>" + parts::esc(b.reason) + "</td></tr>";
  }
  return html + "</tbody></table>";
}

std::string record_section(const store::CheckRecord& c, RecordFileState record) {
  std::string html = "<h2>Printable record</h2>";
  switch (record) {
    case RecordFileState::shown:
      return html + "<p><a href=\"/checks/" + std::to_string(c.id) +
             "/record\" id=\"record-link\">Open the record on its own page (to print it)</a>; its SHA-256 "
             "matches the one recorded with the check.</p><iframe class=\"record\" title=\"Printable "
             "record\" "
             "src=\"/checks/" +
             std::to_string(c.id) + "/record\"></iframe>";
    case RecordFileState::none_written:
      return html + "<p class=\"notice\">No printable record was written with this check.</p>";
    case RecordFileState::missing:
      return html + "<p class=\"problem\">The record file " + parts::esc(c.files.record_html) +
             " is missing from the results folder; run <code>countersign audit verify</code>.</p>";
    case RecordFileState::differs:
      return html + "<p class=\"problem\">The record file " + parts::esc(c.files.record_html) +
             " differs from the one written with the check (its SHA-256 changed); it is not shown. Run "
             "<code>countersign audit verify</code>.</p>";
    case RecordFileState::elsewhere:
      return html + "<p class=\"notice\">The record was written by station " + parts::esc(c.station) +
             " into " + parts::esc(c.results_folder) + ", which this server cannot read.</p>";
  }
  return html;
}

std::string same_plan_section(const store::CheckDetail& d) {
  if (d.same_plan.size() < 2) return {};
  std::string html =
      "<h2>Checks of the same plan</h2><table id=\"same-plan\"><thead><tr><th>Check</th><th>Checked</th>"
      "<th>Verdict</th><th>Relation</th><th>Inputs changed</th></tr></thead><tbody>";
  for (const auto& other : d.same_plan) {
    std::string relation = other.id == d.check.id ? "this check" : "";
    if (d.check.replaces_check_id == other.id) relation = "replaced by this check";
    if (d.check.superseded_by_check_id == other.id) relation = "replaces this check";
    std::string changed;
    for (const auto& change : other.inputs_changed) {
      changed += (changed.empty() ? "" : "; ") + parts::esc(change.input) + ": " +
                 parts::esc(change.from.substr(0, 12)) + " &#8594; " + parts::esc(change.to.substr(0, 12));
    }
    html +=
        "<tr><td>" + id_link(other.id) + "</td><td>" + parts::time_text(other.checked_at_utc) + "</td><td>";
    html += parts::badge(other.verdict);
    html += "</td><td>" + relation + "</td><td>";
    html += changed;
    html += "</td></tr>";
  }
  return html + "</tbody></table>";
}

std::string audit_section(const store::CheckDetail& d) {
  std::string html = "<h2>Audit trail</h2>";
  if (!d.audit_entry) {
    return html +
           "<p class=\"notice\">Recorded before the audit trail existed; covered by its import entry.</p>";
  }
  const auto& e = *d.audit_entry;
  return html + "<table id=\"audit\"><tbody><tr><th>Entry</th><td>" + std::to_string(e.seq) +
         "</td></tr><tr><th>Recorded</th><td>" + parts::time_text(e.recorded_at_utc) +
         "</td></tr><tr><th>Entry hash</th><td class=\"hash\">" + parts::esc(e.entry_hash) +
         "</td></tr><tr><th>Previous entry's hash</th><td class=\"hash\">" + parts::esc(e.previous_hash) +
         "</td></tr></tbody></table><p>Each entry's hash covers its content and the previous hash; "
         "<code>countersign audit verify</code> recomputes the chain.</p>";
}

std::string reviews_section(const store::CheckDetail& d) {
  std::string html = "<h2>Reviews</h2>";
  if (d.reviews.empty()) return html + "<p id=\"no-reviews\">No review recorded.</p>";
  html +=
      "<table "
      "id=\"reviews\"><thead><tr><th>Review</th><th>When</th><th>Who</th><th>Scope</th><th>Decision</th>"
      "<th>Reason</th><th>Audit entry</th></tr></thead><tbody>";
  for (const auto& r : d.reviews) {
    html +=
        "<tr><td>#" + std::to_string(r.id) + "</td><td>" + parts::time_text(r.reviewed_at_utc) + "</td><td>" +
        parts::esc(r.reviewer.name) + " (" + parts::esc(store::to_string(r.reviewer.kind)) + ")</td><td>" +
        (r.beam_number ? "beam " + std::to_string(*r.beam_number) : std::string{"whole plan"}) + "</td><td>" +
        parts::esc(store::to_string(r.decision)) + "</td><td>" + parts::esc(r.reason) + "</td><td>" +
        (r.audit_seq ? std::to_string(*r.audit_seq) : std::string{"&#8211;"}) + "</td></tr>";
  }
  return html + "</tbody></table>";
}

std::string review_form(const store::CheckRecord& c, const Viewer& viewer) {
  if (!store::is_flagged(c.verdict)) return "<p>This check is within tolerance: no review is needed.</p>";
  if (viewer.role != Role::reviewer) {
    return "<p class=\"notice\">Your role (viewer) may read records; a reviewer records decisions.</p>";
  }
  std::string html = "<form class=\"review-form\" method=\"post\" action=\"/checks/" + std::to_string(c.id) +
                     "/review\" id=\"review-form\"><h2>Record a decision</h2>" +
                     parts::csrf_field(viewer.csrf_token);
  html +=
      "<p><label>About <select name=\"beam\" id=\"review-beam\"><option value=\"\">the whole plan</option>";
  for (const auto& b : c.beams) {
    if (!store::is_flagged(b.verdict)) continue;
    html += "<option value=\"" + std::to_string(b.beam_number) + "\">beam " + std::to_string(b.beam_number) +
            " (" + parts::esc(b.beam_name) + ")</option>";
  }
  html +=
      "</select></label></p><p><label><input type=\"radio\" name=\"decision\" value=\"accept\" required> "
      "accept</label> <label><input type=\"radio\" name=\"decision\" value=\"reject\"> reject</label></p>"
      "<p><label for=\"reason\">Reason: what was looked at and what it showed</label><br>"
      "<textarea id=\"reason\" name=\"reason\" rows=\"3\" cols=\"80\" required></textarea></p>"
      "<p>Recorded as <strong>" +
      parts::esc(viewer.user) +
      "</strong> with the time, in the audit trail; a decision is never changed, a later one follows it.</p>"
      "<p><button type=\"submit\" id=\"review-submit\">Record decision</button></p></form>";
  return html;
}

}  // namespace

std::string check_page(const store::CheckDetail& detail, RecordFileState record, const Viewer& viewer,
                       std::string_view notice) {
  const auto& c = detail.check;
  std::string body;
  if (!notice.empty()) body += "<p class=\"notice\" id=\"notice\">" + parts::esc(notice) + "</p>";
  if (c.superseded_by_check_id) {
    body += "<p class=\"notice\">A later check of the same plan replaces this one: " +
            id_link(*c.superseded_by_check_id) + ".</p>";
  }
  body += summary(c) + "<h2>Beams</h2>" + beams_table(c) + reviews_section(detail) + review_form(c, viewer) +
          same_plan_section(detail) + audit_section(detail) + record_section(c, record);
  return page("Check #" + std::to_string(c.id), viewer, body);
}

}  // namespace countersign::web
