// `countersign check PLAN.dcm|FOLDER ...`: every beam of each plan recomputed from the beam-data
// library and judged against the planned dose; a table on the terminal or JSON (--json).
// The bundled demo library is share/countersign/beamdata beside the program (bundled_data.hpp);
// --beamdata names another.

#include <countersign/beamdata/library.hpp>
#include <countersign/check/check_plan.hpp>
#include <countersign/cli/commands.hpp>
#include <countersign/dicom/read_plan.hpp>
#include <countersign/report/check_json.hpp>
#include <countersign/report/check_text.hpp>
#include <countersign/report/html_pdf.hpp>
#include <countersign/report/html_report.hpp>
#include <countersign/util/assert.hpp>

#include "bundled_data.hpp"
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

// What one run of the command shares: the options, the library, where records go, the results.
struct CheckRun {
  CheckRun(const CheckCommandOptions& command_options, Io& streams) : options(command_options), io(streams) {}

  const CheckCommandOptions& options;
  Io& io;
  check::CheckOptions check_options;
  beamdata::Library library;
  std::optional<fs::path> chromium;  // set when a PDF is asked for
  std::size_t plan_count = 0;
  ExitCode exit_code = ExitCode::all_within_tolerance;
  std::vector<check::PlanCheck> checks;
  std::vector<std::string> errors;    // one line per file that could not be checked
  std::vector<ExitCode> error_codes;  // and why: bad input, or an internal error

  void fail(const std::string& message, ExitCode code) {
    io.err << message << "\n";
    errors.push_back(message);
    error_codes.push_back(code);
    exit_code = worst(exit_code, code);
  }
};

// The check options, the library and Chromium (when a PDF is asked for), before any plan is read.
Expected<void> prepare(CheckRun& run) {
  TRY_ASSIGN(run.check_options, check_options_from(run.options.flags));
  TRY_ASSIGN(run.library, beamdata::load_library(beamdata_folder(run.options.flags.beamdata)));
  return {};
}

// The printable records asked for (--html, --pdf) of one plan.
void write_records(CheckRun& run, const check::PlanCheck& result, const fs::path& file) {
  const auto note = [&run](const Error& error) {
    run.io.err << "countersign check: " << error.message() << "\n";
    run.exit_code = worst(run.exit_code, ExitCode::record_not_written);
  };
  if (!run.options.html.empty()) {
    auto written = report::write_html(result, record_file(run.options.html, file, run.plan_count));
    if (!written) note(written.error());
  }
  if (run.chromium) {
    auto written =
        report::write_pdf(result, record_file(run.options.pdf, file, run.plan_count), *run.chromium);
    if (!written) note(written.error());
  }
}

// Reads and checks one file; a bad file, or a defect met while checking it, does not stop the others.
void check_file(CheckRun& run, const fs::path& file) {
  auto plan = dicom::read_plan_file(file);
  if (!plan) return run.fail(plan.error().message(), exit_code_for(plan.error()));
  try {
    check::PlanCheck result = check::check_plan(plan.value(), run.library, run.check_options);
    run.exit_code = worst(run.exit_code, result.exit_code());
    write_records(run, result, file);
    if (!run.options.json) {
      report::write_check_text(run.io.out, result);
      run.io.out << "\n";
    }
    run.checks.push_back(std::move(result));
  } catch (const util::InternalError& e) {
    run.fail(file.string() + ": " + e.error().message(), ExitCode::internal_error);
  }
}

// The summary of several plans and the JSON document or the caution.
void finish(CheckRun& run) {
  std::ostream& out = run.io.out;
  if (!run.options.json && run.plan_count > 1) {
    out << "Summary of " << run.plan_count << " plan file(s):\n";
    for (const check::PlanCheck& c : run.checks) report::write_plan_summary_line(out, c);
    for (std::size_t i = 0; i < run.errors.size(); ++i) {
      out << (run.error_codes[i] == ExitCode::internal_error ? "internal error      "
                                                             : "bad input           ")
          << run.errors[i] << "\n";
    }
    out << "\n";
  }
  if (run.options.json) {
    out << report::check_run_to_json(run.checks, run.errors, static_cast<int>(run.exit_code)).dump(2) << "\n";
  } else {
    out << report::caution_text() << "\n";
  }
}

ExitCode run_check(const CheckCommandOptions& options, Io& io) {
  use_bundled_reader_dictionary();
  CheckRun run{options, io};
  if (auto prepared = prepare(run); !prepared) {
    io.err << "countersign check: " << prepared.error().message() << "\n";
    return exit_code_for(prepared.error());
  }
  // Fail before checking when a PDF is asked for and cannot be made.
  if (!options.pdf.empty()) {
    run.chromium = report::find_chromium();
    if (!run.chromium) {
      io.err << "countersign check: " << report::no_chromium_message(options.pdf) << "\n";
      return ExitCode::record_not_written;
    }
  }
  const std::vector<fs::path> files = plan_files(options.paths);
  if (files.empty()) {
    io.err << "countersign check: no .dcm file found in the folders given\n";
    return ExitCode::bad_input;
  }
  run.plan_count = files.size();
  // A progress line only when a person is watching: both streams on a terminal, several plans.
  const bool show_progress = io.out_is_terminal && io.err_is_terminal && files.size() > 1 && !options.json;
  std::size_t done = 0;
  for (const fs::path& file : files) {
    if (show_progress) {
      io.err << "\r\x1b[K[" << ++done << "/" << files.size() << "] " << file.filename().string()
             << std::flush;
    }
    check_file(run, file);
  }
  if (show_progress) io.err << "\r\x1b[K" << std::flush;
  finish(run);
  return run.exit_code;
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
