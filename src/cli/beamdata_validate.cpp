// `beamdata validate` and `beamdata report`.

#include "beamdata_subcommands.hpp"

#include <countersign/beamdata/validation.hpp>
#include <countersign/report/beamdata_report.hpp>

#include <memory>

namespace countersign::cli::beamdata_cli {

namespace {

namespace bd = countersign::beamdata;

struct ValidateOptions {
  std::string folder;
  bool every_finding = false;
};

// Counts of what a template still lacks: manifest values and table cells.
void print_incomplete(const bd::ValidationReport& report, std::ostream& out) {
  std::size_t values = 0, cells = 0;
  for (const auto& p : report.problems) {
    if (p.rule == "not filled in yet (template placeholder)") ++values;
    if (p.rule == "missing value") ++cells;
  }
  if (values + cells > 0)
    out << "incomplete: " << values << " manifest value(s) not filled in, " << cells
        << " table cell(s) empty\n";
}

void run_validate(const ValidateOptions& options, CommandContext& context) {
  const bd::ValidationReport report = bd::validate_library(options.folder);
  auto& out = context.io.out;
  if (options.every_finding) {
    for (const auto& problem : report.problems) out << problem.text() << '\n';
  } else {
    for (const auto& group : bd::group_problems(report.problems)) out << group.text() << '\n';
  }
  out << "library SHA-256: " << (report.sha256_hex.empty() ? "not available" : report.sha256_hex) << '\n';
  out << "machines: " << report.readable.machine_listing() << '\n';
  out << report.machine_count << " machine(s), " << report.beam_count
      << " beam(s); PDD/TMR consistency: " << report.consistency_nodes_compared
      << " TMR node(s) compared within " << fixed(bd::consistency_tolerance_percent, 1) << " %, "
      << report.consistency_nodes_skipped << " not compared (would need extrapolation)\n";
  print_incomplete(report, out);
  if (report.clean()) {
    out << "clean: no problems found\n";
    context.exit_code = ExitCode::all_within_tolerance;
  } else {
    out << report.error_count() << " error(s), " << report.warning_count() << " warning(s)\n";
    context.exit_code = ExitCode::bad_input;
  }
}

struct ReportOptions {
  std::string folder;
  std::string html_file;
};

void run_report(const ReportOptions& options, CommandContext& context) {
  const bd::ValidationReport report = bd::validate_library(options.folder);
  const auto written = report::write_beamdata_report(report, options.folder, options.html_file);
  if (!written) {
    context.io.err << written.error().message() << '\n';
    context.exit_code = ExitCode::record_not_written;
    return;
  }
  context.io.out << "wrote " << written->string() << " (library SHA-256 "
                 << (report.sha256_hex.empty() ? "not available" : report.sha256_hex) << "; "
                 << report.error_count() << " error(s), " << report.warning_count() << " warning(s))\n";
  context.exit_code = report.clean() ? ExitCode::all_within_tolerance : ExitCode::bad_input;
}

}  // namespace

void add_validate(CLI::App& beamdata, CommandContext& context) {
  auto options = std::make_shared<ValidateOptions>();
  auto* validate = beamdata.add_subcommand(
      "validate",
      "Check a library folder (or one machine folder) against the beam-data format: every problem of every "
      "beam in one run, repeated problems grouped, suspicious data as warnings; then the library SHA-256. "
      "Exit 0 when clean, 3 otherwise");
  validate->add_option("folder", options->folder, "Library or machine folder")->required();
  validate->add_flag("--all", options->every_finding, "One line per finding instead of grouping repeats");
  validate->callback([options, &context] { run_validate(*options, context); });
}

void add_report(CLI::App& beamdata, CommandContext& context) {
  auto options = std::make_shared<ReportOptions>();
  auto* report = beamdata.add_subcommand(
      "report",
      "Write a self-contained HTML review page of a library: a plot of every table, the PDD-TMR consistency "
      "overlay, the validation findings and the SHA-256, with a sign-off block. Exit 0 when the library is "
      "clean, 3 when it has findings (the page is written either way), 4 when the page cannot be written");
  report->add_option("folder", options->folder, "Library or machine folder")->required();
  report->add_option("--html", options->html_file, "The HTML file to write")->required();
  report->callback([options, &context] { run_report(*options, context); });
}

}  // namespace countersign::cli::beamdata_cli
