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
#include <countersign/report/json_text.hpp>
#include <countersign/util/text.hpp>

#include "result_sender.hpp"
#include "shared_options.hpp"

#include <algorithm>
#include <chrono>
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
  std::string beamdata;
  std::string policy;
  engine::MethodChoice method = engine::MethodChoice::by_setup_technique;
  engine::DepthChoice depth = engine::DepthChoice::planned;
  bool json = false;
  std::string html;                  // --html FILE: the printable record
  std::string pdf;                   // --pdf FILE: the same record as PDF (needs Chromium)
  std::vector<std::string> send_to;  // --send-to AE@HOST:PORT: the results as DICOM to an archive
  std::string outbox;
  std::string calling_ae = "COUNTERSIGN";
  int send_wait_s = 30;
};

// The sender for --send-to, or nullopt without it; an error for a bad destination or outbox.
Expected<std::optional<ResultSender>> result_sender_for(const CheckCommandOptions& options,
                                                        std::ostream& notes) {
  if (options.send_to.empty()) return std::optional<ResultSender>{};
  SendSettings settings;
  for (const auto& text : options.send_to) {
    auto destination = net::Destination::parse(text);
    if (!destination) return destination.error();
    settings.destinations.push_back(destination.value());
  }
  if (!net::is_valid_ae_title(options.calling_ae)) {
    return Error{ErrorKind::usage, "", "--calling-ae", "",
                 "\"" + options.calling_ae + "\" is not a valid AE title (1 to 16 printable characters)"};
  }
  settings.outbox = options.outbox;
  settings.scu.calling_ae_title = options.calling_ae;
  settings.wait = std::chrono::seconds{options.send_wait_s};
  auto sender = ResultSender::open(std::move(settings), report::find_chromium(), notes);
  if (!sender) return sender.error();
  return std::optional<ResultSender>{std::move(sender.value())};
}

// Delivers what is queued and says what happened; a rejection by an archive is exit code 4.
ExitCode deliver_results(ResultSender& sender, std::vector<net::DeliveryEvent>& events, std::ostream& out) {
  events = sender.deliver();
  ExitCode code = ExitCode::all_within_tolerance;
  for (const auto& event : events) {
    out << delivery_line(event, sender.outbox_folder()) << "\n";
    if (event.status == net::DeliveryStatus::rejected) code = ExitCode::record_not_written;
  }
  return code;
}

// The record's file for one plan: FILE itself for a single plan, FILE's stem plus the plan's stem
// when several plans are checked in one run.
fs::path record_file(const std::string& requested, const fs::path& plan_file, std::size_t plan_count) {
  if (plan_count <= 1) return requested;
  const fs::path r(requested);
  return r.parent_path() / (r.stem().string() + "-" + plan_file.stem().string() + r.extension().string());
}

// Where the records of one plan go; an empty path: not asked for.
struct RecordTarget {
  fs::path html;
  fs::path pdf;
};

// The records asked for (--html, --pdf) and the DICOM results (--send-to) of one checked plan;
// exit code 4 when one of them could not be made.
ExitCode write_records(const check::PlanCheck& result, const plan::Plan& plan, const RecordTarget& target,
                       const std::optional<fs::path>& chromium, ResultSender* sender,
                       std::vector<MadeObject>& dicom_objects, std::ostream& err) {
  ExitCode code = ExitCode::all_within_tolerance;
  const auto failed = [&](const Error& error, const std::string& what) {
    err << "countersign check: " << what << error.message() << "\n";
    code = ExitCode::record_not_written;
  };
  report::HtmlOptions record_options;
  record_options.plan = &plan;
  if (!target.html.empty()) {
    if (auto written = report::write_html(result, target.html, record_options); !written)
      failed(written.error(), "");
  }
  std::optional<fs::path> pdf;
  if (chromium && !target.pdf.empty()) {
    auto written = report::write_pdf(result, target.pdf, *chromium, record_options);
    if (written) pdf = written.value();
    if (!written) failed(written.error(), "");
  }
  if (sender != nullptr) {
    // The PDF just written is the one sent, when there is one.
    auto queued = sender->queue(result, record_options, pdf);
    if (queued) dicom_objects.insert(dicom_objects.end(), queued->begin(), queued->end());
    if (!queued) failed(queued.error(), "the DICOM results were not queued: ");
  }
  return code;
}

ExitCode run_check(const CheckCommandOptions& options, Io& io) {
  auto configured = check_options_from(options.method, options.depth, options.policy);
  if (!configured) {
    io.err << "countersign check: " << configured.error().message() << "\n";
    return ExitCode::bad_input;
  }
  const check::CheckOptions& check_options = configured.value();
  const fs::path library_dir = beamdata_folder(options.beamdata);
  auto library = beamdata::load_library(library_dir);
  if (!library) {
    io.err << "countersign check: " << library.error().message() << "\n";
    return ExitCode::bad_input;
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

  auto sender = result_sender_for(options, io.err);
  if (!sender) {
    io.err << "countersign check: " << sender.error().message() << "\n";
    return ExitCode::bad_input;
  }
  std::vector<MadeObject> dicom_objects;

  ExitCode exit_code = ExitCode::all_within_tolerance;
  std::vector<check::PlanCheck> checks;
  std::vector<std::string> errors;
  std::vector<std::string> skipped;
  const PlanFileCandidates candidates = plan_file_candidates(options.paths);
  for (const fs::path& folder : candidates.ignored_subfolders) {
    io.err << "countersign check: subfolder " << escape_control_characters(folder.string())
           << " not entered (only the files of the folders named are checked)\n";
  }
  if (candidates.files.empty()) {
    io.err << "countersign check: no file found in the folders given\n";
    return ExitCode::bad_input;
  }
  const std::size_t file_count = candidates.files.size();
  // A progress line only when a person is watching: both streams on a terminal, several plans.
  const bool show_progress =
      io.out_is_terminal && io.err_is_terminal && file_count > 1 && options.json == false;
  std::size_t done = 0;
  for (const PlanFileCandidate& candidate : candidates.files) {
    const fs::path& file = candidate.file;
    if (show_progress)
      io.err << "\r\x1b[K[" << ++done << "/" << file_count << "] "
             << escape_control_characters(file.filename().string()) << std::flush;
    auto plan = dicom::read_plan_file(file);
    if (!plan && is_skipped_non_plan(candidate, plan.error())) {
      // Not a plan file (the rule the watcher uses): listed, not an error.
      const std::string message = plan.error().message();
      if (!options.json) io.err << "skipped, no RT Plan: " << escape_control_characters(message) << "\n";
      skipped.push_back(message);
      continue;
    }
    if (!plan) {
      // One bad file does not stop the others.
      const std::string message = plan.error().message();
      io.err << escape_control_characters(message) << "\n";
      errors.push_back(message);
      exit_code = worst(exit_code, ExitCode::bad_input);
      continue;
    }
    check::PlanCheck result = check::check_plan(plan.value(), library.value(), check_options);
    exit_code = worst(exit_code, result.exit_code());
    const RecordTarget target{
        options.html.empty() ? fs::path{} : record_file(options.html, file, file_count),
        options.pdf.empty() ? fs::path{} : record_file(options.pdf, file, file_count)};
    exit_code =
        worst(exit_code, write_records(result, plan.value(), target, chromium,
                                       sender->has_value() ? &**sender : nullptr, dicom_objects, io.err));
    if (!options.json) {
      report::write_check_text(io.out, result);
      io.out << "\n";
    }
    checks.push_back(std::move(result));
  }
  if (show_progress) io.err << "\r\x1b[K" << std::flush;
  if (checks.empty() && errors.empty()) {
    io.err << "countersign check: no RT Plan file found in the folders given\n";
    exit_code = ExitCode::bad_input;
  }
  if (!options.json && checks.size() + errors.size() > 1) {
    io.out << "Summary of " << checks.size() + errors.size() << " plan file(s):\n";
    for (const check::PlanCheck& c : checks) report::write_plan_summary_line(io.out, c);
    for (const std::string& e : errors)
      io.out << "bad input           " << escape_control_characters(e) << "\n";
    if (!skipped.empty()) io.out << skipped.size() << " other file(s) skipped: no RT Plan in them\n";
    io.out << "\n";
  }
  std::vector<net::DeliveryEvent> deliveries;
  if (sender->has_value()) {
    exit_code = worst(exit_code, deliver_results(**sender, deliveries, options.json ? io.err : io.out));
  }
  if (options.json) {
    auto document = report::check_run_to_json(checks, errors, static_cast<int>(exit_code), skipped);
    if (sender->has_value()) document["dicom_results"] = dicom_results_to_json(dicom_objects, deliveries);
    io.out << report::json_text(document);
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
  command
      ->add_option("plans", options->paths,
                   "RT Plan files, or folders: every file in a folder that holds an RT Plan is checked, "
                   "whatever its name (hidden and temporary files are passed over, as by `watch`)")
      ->required();
  add_beamdata_option(*command, options->beamdata);
  add_policy_option(*command, options->policy);
  add_method_option(*command, options->method,
                    "formalism: auto (FIXED_SSD setups pdd, others tmr; the default), tmr or pdd");
  add_depth_option(*command, options->depth,
                   "depth: planned (the plan's geometric depth, else SPD - SSD; the default) or equivalent "
                   "(the plan's radiological depth)");
  command->add_flag("--json", options->json, "write JSON instead of the table");
  command->add_option(
      "--html", options->html,
      "also write the printable record (self-contained HTML) to FILE; with several plans, one file "
      "each, named FILE's stem plus the plan's");
  command->add_option(
      "--pdf", options->pdf,
      "also write the record as PDF (needs Chromium; without it nothing is checked and the exit code is 4)");
  command->add_option(
      "--send-to", options->send_to,
      "also send the results as DICOM to an archive, AE@HOST:PORT (repeat for several): a "
      "structured report (SR) and, when Chromium is installed, the record as an Encapsulated PDF, "
      "in the plan's study; queued in the outbox first, so nothing is lost when the archive is down");
  command->add_option(
      "--outbox", options->outbox,
      "the durable outbox folder for --send-to (default $XDG_STATE_HOME/countersign/outbox or "
      "~/.local/state/countersign/outbox)");
  command->add_option("--calling-ae", options->calling_ae, "our AE title when sending (default COUNTERSIGN)");
  command
      ->add_option("--send-wait", options->send_wait_s,
                   "seconds to keep retrying delivery before leaving the rest in the outbox for the next run "
                   "(default 30)")
      ->check(CLI::Range(0, 3600));
  command->callback([options, &context] { context.exit_code = run_check(*options, context.io); });
}

}  // namespace countersign::cli
