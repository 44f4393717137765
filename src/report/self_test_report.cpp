#include <countersign/report/self_test_report.hpp>

#include <countersign/report/html_escape.hpp>
#include <countersign/report/html_report.hpp>

#include <fmt/format.h>

namespace countersign::report {

namespace {

std::string signed_or_dash(const std::optional<double>& v) { return v ? fmt::format("{:+.2f}", *v) : "-"; }

std::string error_text(const check::SelfTestRow& row) {
  if (!row.error) return "none (clean plan)";
  const std::string_view unit = check::size_unit(row.error->kind);
  if (unit.empty()) return std::string(check::to_code(row.error->kind));
  return fmt::format("{} {:+g} {}", check::to_code(row.error->kind), row.error->size, unit);
}

std::string sensitivity_text(const check::Sensitivity& s) {
  const std::string_view unit = check::size_unit(s.kind);
  if (s.injected == 0) return "not injected (no case it applies to)";
  std::string text = fmt::format("{} of {} flagged", s.flagged, s.injected);
  if (!unit.empty()) {
    text += s.smallest_flagged ? fmt::format("; smallest flagged {:g} {}", *s.smallest_flagged, unit)
                               : std::string{"; none flagged"};
    if (s.largest_missed) text += fmt::format("; largest not flagged {:g} {}", *s.largest_missed, unit);
  }
  return text;
}

std::string outcome(const check::SelfTestReport& report) {
  return fmt::format("{} clean plan(s) passed, {} error(s) injected, {} failure(s): self-test {}",
                     report.clean_plans, report.injected, report.failures,
                     report.passed() ? "passed" : "FAILED");
}

}  // namespace

std::string self_test_text(const check::SelfTestReport& report, const std::string& policy_source) {
  std::string out = fmt::format("Self-test with beam data {} (SHA-256 {})\nTolerance policy: {}\n\n",
                                report.library_root, report.library_sha256, policy_source);
  out += fmt::format("{:<44} {:<26} {:<18} {:>8} {:>8} {:>6} {:<5} {}\n", "Case", "Injected error", "Status",
                     "Dev %", "Expect %", "Tol %", "Must", "Result");
  for (const check::SelfTestRow& row : report.rows) {
    out += fmt::format("{:<44.44} {:<26} {:<18} {:>8} {:>8} {:>6} {:<5} {}{}\n", row.case_name,
                       error_text(row), check::to_code(row.status), signed_or_dash(row.deviation_percent),
                       signed_or_dash(row.expected_deviation_percent),
                       row.tolerance_percent ? fmt::format("{:.1f}", *row.tolerance_percent) : "-",
                       row.error ? (row.must_flag ? "flag" : "-") : "pass",
                       row.excluded ? "" : (row.passed ? "ok: " : "FAIL: "), row.verdict);
    if (row.error)
      out += fmt::format("{:<45}change: {}; rule: {}; check: {} ({})\n", "", row.change, row.rule, row.reason,
                         row.reason_code);
  }
  out += "\nSensitivity (the smallest injected error of each kind the check flagged):\n";
  for (const check::Sensitivity& s : report.sensitivity)
    out += fmt::format("  {:<18} {}\n", check::to_code(s.kind), sensitivity_text(s));
  out += "\n" + outcome(report) + ".\n";
  out += std::string(caution_text()) + "\n";
  return out;
}

std::string self_test_html(const check::SelfTestReport& report, const std::string& policy_source) {
  std::string out =
      "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\"><title>countersign self-test</title>"
      "<style>body{font-family:sans-serif;margin:2em}table{border-collapse:collapse}td,th{border:1px solid "
      "#999;"
      "padding:2px 6px;text-align:left}.fail{background:#fdd}.caution{border:2px solid "
      "#b00;padding:.5em}</style>"
      "</head><body>\n<h1>Deliberate-error self-test</h1>\n";
  out += fmt::format("<p class=\"caution\">{}</p>\n", html_escape(caution_text()));
  out += fmt::format("<p>Beam data {} (SHA-256 {})<br>Tolerance policy: {}</p>\n",
                     html_escape(report.library_root), html_escape(report.library_sha256),
                     html_escape(policy_source));
  out += fmt::format("<p><strong>{}</strong></p>\n", html_escape(outcome(report)));
  out += "<h2>Sensitivity</h2>\n<table><thead><tr><th>Error kind</th><th>Flagged</th></tr></thead><tbody>\n";
  for (const check::Sensitivity& s : report.sensitivity)
    out += fmt::format("<tr><td>{}</td><td>{}</td></tr>\n", check::to_code(s.kind),
                       html_escape(sensitivity_text(s)));
  out +=
      "</tbody></table>\n<h2>Cases</h2>\n<table><thead><tr><th>Case</th><th>Injected "
      "error</th><th>Change</th>"
      "<th>Rule</th><th>Status</th><th>Reason</th><th>Result</th></tr></thead><tbody>\n";
  for (const check::SelfTestRow& row : report.rows) {
    out += fmt::format(
        "<tr{}><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td></tr>\n",
        row.passed || row.excluded ? "" : " class=\"fail\"", html_escape(row.case_name),
        html_escape(error_text(row)), html_escape(row.change), html_escape(row.rule),
        check::to_code(row.status), html_escape(row.reason_code), html_escape(row.verdict));
  }
  out += "</tbody></table>\n</body></html>\n";
  return out;
}

}  // namespace countersign::report
