// Trends per machine, energy and technique: the statistics of `history --trends`
// (store::summarize_trends) with an individuals control chart of each group (store::individuals_chart).

#include <countersign/store/control_chart.hpp>
#include <countersign/store/trend.hpp>
#include <countersign/web/pages.hpp>

#include "page_parts.hpp"
#include "trend_chart.hpp"

#include <cmath>

namespace countersign::web {

namespace {

std::string param(const QueryParams& params, const std::string& key) {
  const auto it = params.find(key);
  return it == params.end() ? std::string{} : it->second;
}

bool in_group(const store::BeamOutcome& beam, const store::TrendGroup& group) {
  const bool same_energy = beam.energy_mv.has_value() == group.energy_mv.has_value() &&
                           (!beam.energy_mv || std::abs(*beam.energy_mv - *group.energy_mv) < 0.005);
  return beam.machine == group.machine && beam.technique == group.technique && same_energy;
}

// The checked beams of a group, oldest first (the store lists newest first).
std::vector<TrendPoint> points_of(const std::vector<store::CheckRecord>& checks,
                                  const store::TrendGroup& group, const store::CheckFilter& filter) {
  std::vector<TrendPoint> points;
  for (auto c = checks.rbegin(); c != checks.rend(); ++c) {
    for (const auto& b : c->beams) {
      const bool checked = b.verdict == store::BeamVerdict::within_tolerance ||
                           b.verdict == store::BeamVerdict::outside_tolerance;
      if (!checked || !b.deviation_percent || !std::isfinite(*b.deviation_percent) ||
          !filter.beam_matches(b) || !in_group(b, group))
        continue;
      points.push_back(TrendPoint{c->id, c->checked_at_utc, b.beam_number, b.beam_name, *b.deviation_percent,
                                  b.tolerance_percent, b.verdict == store::BeamVerdict::outside_tolerance});
    }
  }
  return points;
}

std::string statistics_table(const store::TrendGroup& g,
                             const std::optional<store::IndividualsChart>& chart) {
  std::string html =
      "<table class=\"stats\"><thead><tr><th class=\"num\">Checked beams</th><th class=\"num\">Outside</th>"
      "<th class=\"num\">Not checked</th><th class=\"num\">Mean (%)</th><th class=\"num\">SD (%)</th>"
      "<th class=\"num\">Min (%)</th><th class=\"num\">Max (%)</th><th class=\"num\">Mean moving range "
      "(%)</th>"
      "<th class=\"num\">Lower limit (%)</th><th class=\"num\">Upper limit (%)</th></tr></thead><tbody><tr>";
  html += "<td class=\"num\">" + std::to_string(g.checked_beams) + "</td><td class=\"num\">" +
          std::to_string(g.outside_tolerance_beams) + "</td><td class=\"num\">" +
          std::to_string(g.not_checked_beams) + "</td><td class=\"num\">" +
          parts::signed_percent(g.mean_deviation_percent) + "</td><td class=\"num\">" +
          parts::fixed(g.sd_deviation_percent, 2) + "</td><td class=\"num\">" +
          parts::signed_percent(g.min_deviation_percent) + "</td><td class=\"num\">" +
          parts::signed_percent(g.max_deviation_percent) + "</td>";
  const auto opt = [&](double store::IndividualsChart::*field) {
    return chart ? std::optional<double>{(*chart).*field} : std::nullopt;
  };
  html += "<td class=\"num\">" + parts::fixed(opt(&store::IndividualsChart::mean_moving_range), 2) +
          "</td><td class=\"num\">" + parts::signed_percent(opt(&store::IndividualsChart::lower_limit)) +
          "</td><td class=\"num\">" + parts::signed_percent(opt(&store::IndividualsChart::upper_limit)) +
          "</td>";
  return html + "</tr></tbody></table>";
}

std::string points_table(const std::vector<TrendPoint>& points,
                         const std::optional<store::IndividualsChart>& chart) {
  std::string html =
      "<details><summary>The points as a table</summary><table class=\"points\"><thead><tr><th>Checked</th>"
      "<th>Check</th><th>Beam</th><th class=\"num\">Difference (%)</th><th class=\"num\">Tolerance "
      "(&#177;%)</th>"
      "<th>Verdict</th><th>Beyond control limits</th></tr></thead><tbody>";
  for (const auto& p : points) {
    html += "<tr><td>" + parts::time_text(p.checked_at_utc) + "</td><td><a href=\"/checks/" +
            std::to_string(p.check_id) + "\">#" + std::to_string(p.check_id) + "</a></td><td>" +
            std::to_string(p.beam_number) + " " + parts::esc(p.beam_name) + "</td><td class=\"num\">" +
            parts::signed_percent(p.deviation_percent) + "</td><td class=\"num\">" +
            parts::fixed(p.tolerance_percent, 1) + "</td><td>" +
            parts::badge(p.outside_tolerance ? store::BeamVerdict::outside_tolerance
                                             : store::BeamVerdict::within_tolerance) +
            "</td><td>" + (chart && chart->beyond_limits(p.deviation_percent) ? "yes" : "") + "</td></tr>";
  }
  return html + "</tbody></table></details>";
}

std::string group_section(const std::vector<store::CheckRecord>& checks, const store::TrendGroup& g,
                          const store::CheckFilter& filter) {
  const auto points = points_of(checks, g, filter);
  std::vector<double> values;
  values.reserve(points.size());
  for (const auto& p : points) values.push_back(p.deviation_percent);
  const auto chart = store::individuals_chart(values);
  std::string html = "<section class=\"trend\"><h2>" +
                     parts::esc(g.machine.empty() ? "(no machine name)" : g.machine) + ", " +
                     parts::energy_text(g.energy_mv) + ", " + parts::esc(g.technique) + "</h2>";
  html += statistics_table(g, chart);
  if (points.empty()) return html + "<p class=\"notice\">No beam of this group was checked.</p></section>";
  if (!chart) html += "<p class=\"notice\">Control limits need at least two checked beams.</p>";
  html += trend_chart_svg(points, chart);
  html += points_table(points, chart);
  return html + "</section>";
}

std::string filter_form(const TrendQuery& q) {
  return "<form class=\"filters\" method=\"get\" action=\"/trends\"><label>Machine<input name=\"machine\" "
         "value=\"" +
         parts::esc(q.machine) +
         "\" size=\"14\"></label><label>From (YYYY-MM-DD)<input name=\"since\" value=\"" +
         parts::esc(q.since) + "\" size=\"11\"></label><label>To (YYYY-MM-DD)<input name=\"until\" value=\"" +
         parts::esc(q.until) + "\" size=\"11\"></label><button type=\"submit\">Show</button></form>";
}

constexpr std::string_view explanation =
    "<p>Each point is one checked beam: its difference (independent minus planned dose, in % of planned) on "
    "the date of its check; squares are outside tolerance, a ring marks a point beyond the control limits. "
    "The shaded band is the largest tolerance applied in the group. The solid line is the mean; the dashed "
    "lines are the control limits of an individuals chart, mean &#177; 3&#963; with &#963; estimated from "
    "the "
    "mean moving range of consecutive beams (&#963; = MR&#772; / 1.128, so the limits are mean &#177; 2.66 "
    "MR&#772;; SAS/QC User&#8217;s Guide, SHEWHART procedure, IRCHART statement). Limits from fewer than "
    "about 20 points are provisional (common practice, no source). Not-checked beams have no difference and "
    "are counted apart; AAPM TG-114 (2011) asks a clinic to set its own action levels from such "
    "distributions.</p>";

}  // namespace

TrendQuery trend_query(const QueryParams& params) {
  return TrendQuery{param(params, "machine"), param(params, "since"), param(params, "until")};
}

Expected<store::CheckFilter> trend_filter(const TrendQuery& query) {
  store::CheckFilter filter;
  if (!query.machine.empty()) filter.machine = query.machine;
  if (!query.since.empty()) {
    auto since = store::parse_time_bound(query.since, "from");
    if (!since) return since.error();
    filter.since_utc = since.value();
  }
  if (!query.until.empty()) {
    auto until = store::parse_time_bound(query.until, "to");
    if (!until) return until.error();
    filter.until_utc = until.value();
  }
  return filter;
}

std::string trends_page(const std::vector<store::CheckRecord>& checks, const TrendQuery& query,
                        const Viewer& viewer) {
  auto filter = trend_filter(query);
  std::string body = filter_form(query) + std::string{explanation};
  if (!filter)
    return page("Trends", viewer,
                body + "<p class=\"problem\">" + parts::esc(filter.error().detail) + "</p>");
  const auto groups = store::summarize_trends(checks, filter.value());
  if (groups.empty()) body += "<p class=\"notice\">No beam in the history matches.</p>";
  for (const auto& g : groups) body += group_section(checks, g, filter.value());
  return page("Trends", viewer, body);
}

}  // namespace countersign::web
