// The worklist: the checks of the history, open ones first, with filters and counts per verdict.

#include <countersign/web/pages.hpp>

#include "page_parts.hpp"

#include <algorithm>
#include <array>
#include <cmath>

namespace countersign::web {

namespace {

std::string param(const QueryParams& params, const std::string& key) {
  const auto it = params.find(key);
  return it == params.end() ? std::string{} : it->second;
}

std::string select(std::string_view name, std::string_view label, const std::string& current,
                   const std::vector<std::pair<std::string, std::string>>& choices) {
  std::string html = "<label>" + std::string{label} + "<select name=\"" + std::string{name} + "\">";
  for (const auto& [value, words] : choices) {
    html += "<option value=\"" + parts::esc(value) + "\"" + (value == current ? " selected" : "") + ">" +
            parts::esc(words) + "</option>";
  }
  return html + "</select></label>";
}

std::string filter_form(const WorklistQuery& query, const std::string& today) {
  std::string html = "<form class=\"filters\" method=\"get\" action=\"/\">";
  html += "<label>Day (YYYY-MM-DD)<input name=\"date\" value=\"" + parts::esc(query.date) +
          "\" size=\"11\"></label>";
  html += "<label>Machine<input name=\"machine\" value=\"" + parts::esc(query.machine) +
          "\" size=\"14\"></label>";
  html += select("verdict", "Verdict", query.verdict,
                 {{"", "any"},
                  {"outside_tolerance", "Outside tolerance"},
                  {"not_checked", "Not checked"},
                  {"within_tolerance", "Within tolerance"}});
  html += select("review", "Review", query.review,
                 {{"", "any"}, {"open", "Awaiting review"}, {"reviewed", "Reviewed"}});
  html += "<button type=\"submit\">Show</button> <a href=\"/?date=" + parts::esc(today) +
          "\">Today</a> <a href=\"/\">All</a></form>";
  return html;
}

std::string counts_line(const std::vector<store::CheckRecord>& checks) {
  std::array<std::size_t, 3> counts{};
  std::size_t open = 0;
  for (const auto& c : checks) {
    ++counts.at(static_cast<std::size_t>(c.verdict));
    if (c.review_status == store::ReviewStatus::open) ++open;
  }
  return "<p class=\"counts\" id=\"counts\"><span>" + std::to_string(checks.size()) + " checks</span><span>" +
         parts::badge(store::PlanVerdict::outside_tolerance) + " " + std::to_string(counts[1]) +
         "</span><span>" + parts::badge(store::PlanVerdict::not_checked) + " " + std::to_string(counts[2]) +
         "</span><span>" + parts::badge(store::PlanVerdict::within_tolerance) + " " +
         std::to_string(counts[0]) + "</span><span>" + "awaiting review: " + std::to_string(open) +
         "</span></p>";
}

std::string machines_of(const store::CheckRecord& check) {
  std::vector<std::string> names;
  for (const auto& beam : check.beams) {
    if (!beam.machine.empty() && std::find(names.begin(), names.end(), beam.machine) == names.end())
      names.push_back(beam.machine);
  }
  std::string text;
  for (const auto& name : names) text += (text.empty() ? "" : ", ") + parts::esc(name);
  return text.empty() ? "&#8211;" : text;
}

std::string largest_deviation(const store::CheckRecord& check) {
  std::optional<double> largest;
  for (const auto& beam : check.beams) {
    if (beam.deviation_percent && (!largest || std::abs(*beam.deviation_percent) > std::abs(*largest)))
      largest = beam.deviation_percent;
  }
  return parts::signed_percent(largest);
}

std::string row(const store::CheckRecord& c) {
  const bool open = c.review_status == store::ReviewStatus::open;
  std::string html = "<tr class=\"check" + std::string{open ? " open" : ""} + "\" data-check=\"" +
                     std::to_string(c.id) + "\" data-verdict=\"" + std::string{store::to_string(c.verdict)} +
                     "\">";
  html += "<td><a href=\"/checks/" + std::to_string(c.id) + "\">#" + std::to_string(c.id) + "</a></td>";
  html += "<td>" + parts::time_text(c.checked_at_utc) + "</td>";
  html += "<td>" + parts::esc(c.patient_id) + "</td><td>" + parts::esc(c.plan_label) + "</td>";
  html += "<td>" + machines_of(c) + "</td>";
  html += "<td>" + parts::badge(c.verdict) + "</td>";
  html += "<td class=\"num\">" + largest_deviation(c) + "</td>";
  html += "<td>" + parts::review_badge(c.review_status) +
          (c.review_count > 0 ? " (" + std::to_string(c.review_count) + ")" : std::string{}) + "</td>";
  html += "<td>" +
          (c.superseded_by_check_id
               ? "replaced by <a href=\"/checks/" + std::to_string(*c.superseded_by_check_id) + "\">#" +
                     std::to_string(*c.superseded_by_check_id) + "</a>"
               : std::string{}) +
          "</td></tr>";
  return html;
}

}  // namespace

WorklistQuery worklist_query(const QueryParams& params) {
  return WorklistQuery{param(params, "date"), param(params, "machine"), param(params, "verdict"),
                       param(params, "review")};
}

Expected<store::CheckFilter> worklist_filter(const WorklistQuery& query) {
  store::CheckFilter filter;
  if (!query.date.empty()) {
    auto day = store::parse_time_bound(query.date, "day");
    if (!day) return day.error();
    filter.since_utc = day.value();
    filter.until_utc = day.value();
  }
  if (!query.machine.empty()) filter.machine = query.machine;
  if (!query.verdict.empty()) {
    filter.verdict = store::plan_verdict_from_string(query.verdict);
    if (!filter.verdict) {
      return Error{
          ErrorKind::usage, "", "verdict", "",
          "\"" + query.verdict + "\" is not a verdict (within_tolerance, outside_tolerance, not_checked)"};
    }
  }
  if (query.review == "open") {
    filter.review = store::ReviewFilter::open;
  } else if (query.review == "reviewed") {
    filter.review = store::ReviewFilter::reviewed;
  } else if (!query.review.empty()) {
    return Error{ErrorKind::usage, "", "review", "", "\"" + query.review + "\" is not open or reviewed"};
  }
  return filter;
}

void order_for_worklist(std::vector<store::CheckRecord>& checks) {
  // The store lists newest first; a stable partition keeps that order within each part.
  std::stable_partition(checks.begin(), checks.end(), [](const store::CheckRecord& c) {
    return c.review_status == store::ReviewStatus::open;
  });
}

std::string worklist_page(const std::vector<store::CheckRecord>& checks, std::size_t shown,
                          const WorklistQuery& query, const std::string& today, const Viewer& viewer) {
  std::string body = filter_form(query, today) + counts_line(checks);
  if (checks.empty()) {
    body += "<p class=\"notice\">No check matches.</p>";
    return page("Worklist", viewer, body);
  }
  body +=
      "<table id=\"worklist\"><thead><tr><th>Check</th><th>Checked</th><th>Patient ID</th><th>Plan</th>"
      "<th>Machine</th><th>Verdict</th><th class=\"num\">Largest difference (%)</th><th>Review</th>"
      "<th>Replaced</th></tr></thead><tbody>";
  const std::size_t count = std::min(shown, checks.size());
  for (std::size_t i = 0; i < count; ++i) body += row(checks[i]);
  body += "</tbody></table>";
  if (count < checks.size()) {
    body += "<p class=\"notice\">The first " + std::to_string(count) + " of " +
            std::to_string(checks.size()) + " checks are listed; narrow the filter to see others.</p>";
  }
  return page("Worklist", viewer, body);
}

}  // namespace countersign::web
