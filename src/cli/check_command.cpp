// `countersign check PLAN.dcm|FOLDER ...`: every beam of each plan recomputed from the beam-data
// library and judged against the planned dose; a table on the terminal or JSON (--json).
// The bundled library is the source tree's beamdata/ (its path is compiled in as
// COUNTERSIGN_BUNDLED_BEAMDATA); --beamdata names another.

#include <countersign/beamdata/library.hpp>
#include <countersign/check/check_plan.hpp>
#include <countersign/cli/commands.hpp>
#include <countersign/dicom/read_plan.hpp>
#include <countersign/report/check_json.hpp>
#include <countersign/report/check_text.hpp>
#include <countersign/report/html_pdf.hpp>
#include <countersign/report/html_report.hpp>

#include "shared_options.hpp"

#include <algorithm>
#include <filesystem>
#include <memory>
#include <optional>
#include <ostream>
#include <string>
#include <vector>

namespace countersign::cli {

namespace {

namespace fs = std::filesystem;

struct CheckCommandOptions {
  std::vector<std::string> paths;
  CheckFlags flags;
  bool json = false;
  std::string html;  // --html FILE: the printable record
  std::string pdf;   // --pdf FILE: the same record as PDF (needs Chromium)
};

// The record's file for one plan: FILE itself for a single plan, FILE's stem plus the plan's stem
// when several plans are checked in one run.
fs::path record_file(const std::string& requested, const fs::path& plan_file, std::size_t plan_count) {
  if (plan_count <= 1) return requested;
  const fs::path r(requested);
  return r.parent_path() / (r.stem().string() + "-" + plan_file.stem().string() + r.extension().string());
}

ExitCode run_check(const CheckCommandOptions& options, Io& io) {
  auto configured = check_options_from(options.flags);
  if (!configured) {
    io.err << "countersign check: " << configured.error().message() << "\n";
    return exit_code_for(configured.error());
  }
  const check::CheckOptions& check_options = configured.value();
  const fs::path library_dir = beamdata_folder(options.flags.beamdata);
  auto library = beamdata::load_library(library_dir);
  if (!library) {
    io.err << "countersign check: " << library.error().message() << "\n";
    return exit_code_for(library.error());
  }

  // Fail before checking when a PDF is asked for and cannot be made.
  std::optional<fs::path> chromium;
  if (!options.pdf.empty()) {
    chromium = report::find_chromium();
    if (!chromium) {
      io.err << "countersign check: " << report::no_chromium_message(options.pdf) << "\n";
      return ExitCode::record_not_written;
    }
  }

  ExitCode exit_code = ExitCode::all_within_tolerance;
  std::vector<check::PlanCheck> checks;
  std::vector<std::string> errors;
  const std::vector<fs::path> files = plan_files(options.paths);
  if (files.empty()) {
    io.err << "countersign check: no .dcm file found in the folders given\n";
    return ExitCode::bad_input;
  }
  // A progress line only when a person is watching: both streams on a terminal, several plans.
  const bool show_progress =
      io.out_is_terminal && io.err_is_terminal && files.size() > 1 && options.json == false;
  std::size_t done = 0;
  for (const fs::path& file : files) {
    if (show_progress)
      io.err << "\r\x1b[K[" << ++done << "/" << files.size() << "] " << file.filename().string()
             << std::flush;
    auto plan = dicom::read_plan_file(file);
    if (!plan) {
      // One bad file does not stop the others.
      const std::string message = plan.error().message();
      io.err << message << "\n";
      errors.push_back(message);
      exit_code = worst(exit_code, ExitCode::bad_input);
      continue;
    }
    check::PlanCheck result = check::check_plan(plan.value(), library.value(), check_options);
    exit_code = worst(exit_code, result.exit_code());
    report::HtmlOptions record_options;
    if (!options.html.empty()) {
      auto written =
          report::write_html(result, record_file(options.html, file, files.size()), record_options);
      if (!written) {
        io.err << "countersign check: " << written.error().message() << "\n";
        exit_code = worst(exit_code, ExitCode::record_not_written);
      }
    }
    if (chromium) {
      auto written =
          report::write_pdf(result, record_file(options.pdf, file, files.size()), *chromium, record_options);
      if (!written) {
        io.err << "countersign check: " << written.error().message() << "\n";
        exit_code = worst(exit_code, ExitCode::record_not_written);
      }
    }
    if (!options.json) {
      report::write_check_text(io.out, result);
      io.out << "\n";
    }
    checks.push_back(std::move(result));
  }
  if (show_progress) io.err << "\r\x1b[K" << std::flush;
  if (!options.json && files.size() > 1) {
    io.out << "Summary of " << files.size() << " plan file(s):\n";
    for (const check::PlanCheck& c : checks) report::write_plan_summary_line(io.out, c);
    for (const std::string& e : errors) io.out << "bad input           " << e << "\n";
    io.out << "\n";
  }
  if (options.json) {
    io.out << report::check_run_to_json(checks, errors, static_cast<int>(exit_code)).dump(2) << "\n";
  } else {
    io.out << report::caution_text() << "\n";
  }
  return exit_code;
}

}  // namespace

void add_check_command(CLI::App& app, CommandContext& context) {
  auto options = std::make_shared<CheckCommandOptions>();
  auto* command = app.add_subcommand(
      "check",
      "Recompute the dose of every beam at its dose point from the beam-data library and judge it against "
      "the "
      "planned dose. Exit 0: all within tolerance; 1: a beam outside tolerance; 2: a beam or plan not "
      "checked; "
      "3: bad input or usage; 4: a record asked for with --html or --pdf could not be written.");
  command->add_option("plans", options->paths, "RT Plan files, or folders of .dcm files")->required();
  add_check_flags(*command, options->flags);
  command->add_flag("--json", options->json, "write JSON instead of the table");
  command->add_option(
      "--html", options->html,
      "also write the printable record (self-contained HTML) to FILE; with several plans, one file "
      "each, named FILE's stem plus the plan's");
  command->add_option(
      "--pdf", options->pdf,
      "also write the record as PDF (needs Chromium; without it nothing is checked and the exit code is 4)");
  command->callback([options, &context] { context.exit_code = run_check(*options, context.io); });
}

}  // namespace countersign::cli
