// `countersign selftest [PLAN.dcm|FOLDER ...]`: the deliberate-error self-test (AAPM TG-114 (2011)
// advises testing a check with known errors). Reads the demo plans, checks each as it stands and
// with each injected error, and prints one table row per case.

#include <countersign/beamdata/library.hpp>
#include <countersign/check/self_test.hpp>
#include <countersign/cli/commands.hpp>
#include <countersign/dicom/read_plan.hpp>

#include "bundled_data.hpp"
#include "shared_options.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <filesystem>
#include <memory>
#include <ostream>
#include <string>
#include <vector>

namespace countersign::cli {

namespace {

namespace fs = std::filesystem;

struct SelfTestOptions {
  std::vector<std::string> paths;  // empty: the bundled demo plans
  std::string beamdata;            // empty: the bundled library
};

std::string percent_or_dash(const std::optional<double>& value) {
  return value ? fmt::format("{:+.2f}", *value) : "-";
}

void print_report(const check::SelfTestReport& report, std::ostream& out) {
  out << fmt::format("{:<26} {:>4} {:<10} {:<26} {:<18} {:>8} {:>8} {:>6} {:<5} {}\n", "Plan", "Beam", "Name",
                     "Injected error", "Status", "Dev %", "Expect %", "Tol %", "Must", "Result");
  for (const check::SelfTestRow& row : report.rows) {
    const std::string plan_name = fs::path(row.plan_file).filename().string();
    const std::string error = row.error ? std::string{check::to_code(*row.error)} : "none (unmodified plan)";
    out << fmt::format("{:<26} {:>4} {:<10} {:<26} {:<18} {:>8} {:>8} {:>6} {:<5} {}{}\n", plan_name,
                       row.error ? std::to_string(row.beam_number) : "-", row.error ? row.beam_name : "-",
                       error, check::to_code(row.status), percent_or_dash(row.deviation_percent),
                       percent_or_dash(row.expected_deviation_percent),
                       row.tolerance_percent ? fmt::format("{:.1f}", *row.tolerance_percent) : "-",
                       row.error ? (row.must_flag ? "flag" : "pass") : "pass",
                       row.excluded ? "" : (row.passed ? "ok: " : "FAIL: "), row.verdict);
    if (row.error) out << fmt::format("{:<31} change: {}; check: {}\n", "", row.change, row.reason);
  }
  const auto injected = std::count_if(report.rows.begin(), report.rows.end(),
                                      [](const check::SelfTestRow& r) { return r.error.has_value(); });
  const auto caught = std::count_if(report.rows.begin(), report.rows.end(), [](const check::SelfTestRow& r) {
    return r.error && r.must_flag && r.passed;
  });
  out << fmt::format(
      "\n{} case(s): {} unmodified plan(s), {} injected error(s) of which {} beyond tolerance and "
      "caught; {} failure(s).\n",
      report.rows.size(), report.rows.size() - static_cast<std::size_t>(injected), injected, caught,
      report.failures);
  out << (report.passed() ? "Self-test passed.\n" : "Self-test FAILED.\n");
  out << "The self-test shows the check catches these known errors; it supports, and does not replace, the\n"
         "physicist's review under local regulations and licensed practice.\n";
}

void run_selftest(const SelfTestOptions& options, CommandContext& context) {
  use_bundled_reader_dictionary();
  const auto library = beamdata::load_library(beamdata_folder(options.beamdata));
  if (!library) {
    context.io.err << library.error().message() << '\n';
    context.exit_code = ExitCode::bad_input;
    return;
  }
  std::vector<plan::Plan> plans;
  const PlanFileCandidates candidates = plan_file_candidates(
      options.paths.empty() ? std::vector<std::string>{bundled_demo_plans().string()} : options.paths);
  for (const PlanFileCandidate& candidate : candidates.files) {
    auto plan = dicom::read_plan_file(candidate.file);
    if (!plan && is_skipped_non_plan(candidate, plan.error())) continue;  // the rule of `check FOLDER`
    if (!plan) {
      context.io.err << plan.error().message() << '\n';
      context.exit_code = ExitCode::bad_input;
      return;
    }
    plans.push_back(std::move(plan).value());
  }
  if (plans.empty()) {
    context.io.err << "selftest: no RT Plan file found\n";
    context.exit_code = ExitCode::bad_input;
    return;
  }
  const check::SelfTestReport report = check::run_self_test(plans, *library, check::CheckOptions{});
  print_report(report, context.io.out);
  // A self-test that misses an error is a failed check: exit as "outside tolerance".
  context.exit_code = report.passed() ? ExitCode::all_within_tolerance : ExitCode::outside_tolerance;
}

}  // namespace

void add_selftest_command(CLI::App& app, CommandContext& context) {
  auto options = std::make_shared<SelfTestOptions>();
  auto* command = app.add_subcommand(
      "selftest",
      "Deliberate-error self-test: check the demo plans as they stand (each must pass) and with known "
      "errors\n"
      "injected in memory (MU +/-5 %, wrong energy, SSD +2 cm, wedge removed, X jaws swapped, beam dose +10 "
      "%);\n"
      "each error that takes a beam beyond its tolerance must be flagged. Exit 0 when every case behaves.");
  command->add_option("plans", options->paths,
                      "RT Plan files or folders holding them (default: the bundled demo plans, " +
                          bundled_demo_plans().string() + ")");
  add_beamdata_option(*command, options->beamdata);
  command->callback([options, &context] { run_selftest(*options, context); });
}

}  // namespace countersign::cli
