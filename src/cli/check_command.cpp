// `countersign check PLAN.dcm|FOLDER ...`: every beam of each plan recomputed from the beam-data
// library and judged against the planned dose; a table on the terminal or JSON (--json).
// The bundled demo library is share/countersign/beamdata beside the program (bundled_data.hpp);
// --beamdata names another.

#include <countersign/beamdata/library.hpp>
#include <countersign/check/check_plan.hpp>
#include <countersign/cli/archive_delivery.hpp>
#include <countersign/cli/commands.hpp>
#include <countersign/dicom/read_plan.hpp>
#include <countersign/dicom/read_study.hpp>
#include <countersign/report/check_json.hpp>
#include <countersign/report/check_text.hpp>
#include <countersign/report/html_pdf.hpp>
#include <countersign/report/html_report.hpp>
#include <countersign/report/json_text.hpp>
#include <countersign/util/assert.hpp>
#include <countersign/util/text.hpp>

#include "bundled_data.hpp"
#include "shared_options.hpp"

#include <algorithm>
#include <chrono>
#include <filesystem>
#include <memory>
#include <optional>
#include <ostream>
#include <set>
#include <string>
#include <vector>

namespace countersign::cli {

namespace {

namespace fs = std::filesystem;

struct CheckCommandOptions {
  std::vector<std::string> paths;
  std::vector<std::string> study;  // --study DIR: where the CT and structure set are (default: the paths)
  CheckFlags flags;
  bool json = false;
  std::string html;                  // --html FILE: the printable record
  std::string pdf;                   // --pdf FILE: the same record as PDF (needs Chromium)
  std::vector<std::string> send_to;  // --send-to AE@HOST:PORT: the results as DICOM to an archive
  std::string outbox;
  std::string calling_ae = "COUNTERSIGN";
  int send_wait_s = 30;
};

// The archive side for --send-to, or null without it; an error for a bad destination or outbox.
Expected<std::unique_ptr<ArchiveDelivery>> archive_delivery_for(const CheckCommandOptions& options,
                                                                const ArchiveDeliveryOpener& open,
                                                                std::ostream& notes) {
  if (options.send_to.empty()) return std::unique_ptr<ArchiveDelivery>{};
  // The checking program hands every --send-to run to the network program before parsing
  // (src/main.cpp); reaching here without the network side is a defect of that hand-over.
  COUNTERSIGN_ASSERT(static_cast<bool>(open));
  return open(ArchiveRequest{options.send_to, options.outbox, options.calling_ae, options.send_wait_s},
              notes);
}

// The record's file for one plan: FILE itself for a single plan, FILE's stem plus the plan's stem
// when several plans are checked in one run.
fs::path record_file(const std::string& requested, const fs::path& plan_file, std::size_t plan_count) {
  if (plan_count <= 1) return requested;
  const fs::path r(requested);
  return r.parent_path() / (r.stem().string() + "-" + plan_file.stem().string() + r.extension().string());
}

// What one run of the command shares: the options, the library, where records go, the results.
struct CheckRun {
  CheckRun(const CheckCommandOptions& command_options, Io& streams, const ArchiveDeliveryOpener& opener)
      : options(command_options), io(streams), open_archive(opener) {}

  const CheckCommandOptions& options;
  Io& io;
  const ArchiveDeliveryOpener& open_archive;
  check::CheckOptions check_options;
  beamdata::Library library;
  std::optional<fs::path> chromium;          // set when a PDF is asked for
  std::unique_ptr<ArchiveDelivery> archive;  // set with --send-to
  std::size_t plan_count = 0;
  ExitCode exit_code = ExitCode::all_within_tolerance;
  std::vector<check::PlanCheck> checks;
  std::vector<std::string> errors;    // one line per file that could not be checked
  std::vector<ExitCode> error_codes;  // and why: bad input, or an internal error
  std::vector<std::string> skipped;   // files in a folder that hold no RT Plan
  dicom::StudyFileIndex study_index;  // the DICOM objects among the study folders (headers only)
  std::set<fs::path> study_files;     // CT and RT Structure Set files: the patient's study, not plans
  std::size_t study_file_count = 0;   // of them, the ones among the files to check

  void fail(const std::string& message, ExitCode code) {
    io.err << escape_control_characters(message) << "\n";
    errors.push_back(message);
    error_codes.push_back(code);
    exit_code = worst(exit_code, code);
  }
};

// The check options, the library and the archive side (--send-to), before any plan is read.
Expected<void> prepare(CheckRun& run) {
  TRY_ASSIGN(run.check_options, check_options_from(run.options.flags));
  TRY_ASSIGN(run.library, beamdata::load_library(beamdata_folder(run.options.flags.beamdata)));
  TRY_ASSIGN(run.archive, archive_delivery_for(run.options, run.open_archive, run.io.err));
  return {};
}

// The printable records asked for (--html, --pdf) and the DICOM results (--send-to) of one plan;
// exit code 4 when one of them could not be made.
void write_records(CheckRun& run, const check::PlanCheck& result, const fs::path& file) {
  const auto note = [&run](const Error& error, const std::string& what) {
    run.io.err << "countersign check: " << what << escape_control_characters(error.message()) << "\n";
    run.exit_code = worst(run.exit_code, ExitCode::record_not_written);
  };
  const report::HtmlOptions record_options;
  if (!run.options.html.empty()) {
    auto written =
        report::write_html(result, record_file(run.options.html, file, run.plan_count), record_options);
    if (!written) note(written.error(), "");
  }
  std::optional<fs::path> pdf;
  if (run.chromium) {
    auto written = report::write_pdf(result, record_file(run.options.pdf, file, run.plan_count),
                                     *run.chromium, record_options);
    if (written) pdf = written.value();
    if (!written) note(written.error(), "");
  }
  if (run.archive) {
    // The PDF just written is the one sent, when there is one.
    if (auto queued = run.archive->queue(result, record_options, pdf); !queued)
      note(queued.error(), "the DICOM results were not queued: ");
  }
}

// The study a plan was made on, among the study files: none (water, the plan's depths) when the plan
// names no structure set, or when it is not among the command's own paths and --study was not given;
// otherwise the loaded study or the problem that makes every beam not checked.
check::PatientStudy study_for_plan(const CheckRun& run, const plan::Plan& plan) {
  const auto& refs = plan.referenced_structure_set_uids;
  if (refs.empty()) {
    return check::PatientStudy::none(
        "the plan names no structure set (Referenced Structure Set Sequence (300C,0060)): homogeneous water "
        "with the plan's depths");
  }
  const bool found =
      std::any_of(run.study_index.files.begin(), run.study_index.files.end(),
                  [&refs](const dicom::StudyFile& f) { return f.sop_instance_uid == refs.front(); });
  if (!found && run.options.study.empty()) {
    return check::PatientStudy::none(
        "the plan's structure set and CT were not among the files given (--study DIR names them): "
        "homogeneous "
        "water with the plan's depths");
  }
  std::vector<fs::path> paths;
  if (refs.size() != 1 || !found) {
    for (const auto& p : run.options.study) paths.emplace_back(p);
    return check::PatientStudy::from(dicom::load_study_for_plan(plan, paths), run.library);
  }
  return check::PatientStudy::from(
      dicom::load_study(run.study_index, refs.front(), plan.frame_of_reference_uid), run.library);
}

// Reads and checks one file; a bad file, or a defect met while checking it, does not stop the others.
void check_file(CheckRun& run, const PlanFileCandidate& candidate) {
  const fs::path& file = candidate.file;
  if (run.study_files.count(file.lexically_normal()) != 0) {
    // Read as the patient's study: listed with the files that hold no plan, never an error.
    run.skipped.push_back(file.string() +
                          ": CT image or RT Structure Set: read as the patient's study, not a plan");
    ++run.study_file_count;
    return;
  }
  auto plan = dicom::read_plan_file(file);
  if (!plan && is_skipped_non_plan(candidate, plan.error())) {
    // Not a plan file (the rule the watcher uses): listed, not an error.
    const std::string message = plan.error().message();
    if (!run.options.json)
      run.io.err << "skipped, no RT Plan: " << escape_control_characters(message) << "\n";
    run.skipped.push_back(message);
    return;
  }
  if (!plan) return run.fail(plan.error().message(), exit_code_for(plan.error()));
  try {
    const check::PatientStudy study = study_for_plan(run, plan.value());
    check::CheckOptions options = run.check_options;
    check::use_study(options, study);
    check::PlanCheck result = check::check_plan(plan.value(), run.library, options);
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

// The summary of several plans, the delivery of DICOM results, and the JSON document or the caution.
void finish(CheckRun& run) {
  std::ostream& out = run.io.out;
  if (!run.options.json && run.checks.size() + run.errors.size() > 1) {
    out << "Summary of " << run.checks.size() + run.errors.size() << " plan file(s):\n";
    for (const check::PlanCheck& c : run.checks) report::write_plan_summary_line(out, c);
    for (std::size_t i = 0; i < run.errors.size(); ++i) {
      out << (run.error_codes[i] == ExitCode::internal_error ? "internal error      "
                                                             : "bad input           ")
          << escape_control_characters(run.errors[i]) << "\n";
    }
    if (run.skipped.size() > run.study_file_count) {
      out << run.skipped.size() - run.study_file_count << " other file(s) skipped: no RT Plan in them\n";
    }
    if (run.study_file_count > 0)
      out << run.study_file_count << " CT / structure-set file(s): the patients' studies\n";
    out << "\n";
  }
  if (run.archive) {
    run.exit_code = worst(run.exit_code, run.archive->deliver(run.options.json ? run.io.err : out));
  }
  if (run.options.json) {
    auto document =
        report::check_run_to_json(run.checks, run.errors, static_cast<int>(run.exit_code), run.skipped);
    if (run.archive) document["dicom_results"] = run.archive->to_json();
    out << report::json_text(document);
  } else {
    out << report::caution_text() << "\n";
  }
}

ExitCode run_check(const CheckCommandOptions& options, Io& io, const ArchiveDeliveryOpener& open_archive) {
  use_bundled_reader_dictionary();
  CheckRun run{options, io, open_archive};
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
  const PlanFileCandidates candidates = plan_file_candidates(options.paths);
  for (const fs::path& folder : candidates.ignored_subfolders) {
    io.err << "countersign check: subfolder " << escape_control_characters(folder.string())
           << " not entered (only the files of the folders named are checked)\n";
  }
  if (candidates.files.empty()) {
    io.err << "countersign check: no file found in the folders given\n";
    return ExitCode::bad_input;
  }
  // The study files: from --study, else among the paths given (so `check STUDY_FOLDER/` just works).
  {
    std::vector<fs::path> study_paths;
    for (const auto& p : options.study.empty() ? options.paths : options.study) study_paths.emplace_back(p);
    run.study_index = dicom::index_study_files(study_paths);
    for (const dicom::StudyFile& f : run.study_index.files) {
      if (f.sop_class_uid == dicom::ct_image_storage_uid ||
          f.sop_class_uid == dicom::rt_structure_set_storage_uid)
        run.study_files.insert(f.path.lexically_normal());
    }
  }
  run.plan_count = static_cast<std::size_t>(std::count_if(
      candidates.files.begin(), candidates.files.end(),
      [&run](const PlanFileCandidate& c) { return run.study_files.count(c.file.lexically_normal()) == 0; }));
  // A progress line only when a person is watching: both streams on a terminal, several plans.
  const bool show_progress = io.out_is_terminal && io.err_is_terminal && run.plan_count > 1 && !options.json;
  std::size_t done = 0;
  for (const PlanFileCandidate& candidate : candidates.files) {
    if (show_progress) {
      io.err << "\r\x1b[K[" << ++done << "/" << run.plan_count << "] "
             << escape_control_characters(candidate.file.filename().string()) << std::flush;
    }
    check_file(run, candidate);
  }
  if (show_progress) io.err << "\r\x1b[K" << std::flush;
  if (run.checks.empty() && run.errors.empty()) {
    io.err << "countersign check: no RT Plan file found in the folders given\n";
    run.exit_code = ExitCode::bad_input;
  }
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
  command
      ->add_option("plans", options->paths,
                   "RT Plan files, or folders: every file in a folder that holds an RT Plan is checked, "
                   "whatever its name (hidden and temporary files are passed over, as by `watch`)")
      ->required();
  add_check_flags(*command, options->flags);
  command->add_option(
      "--study", options->study,
      "folder(s) or files with the plan's CT series and RT Structure Set (default: the plans' own "
      "paths, so `check STUDY_FOLDER/` finds them); depths and SSD then come from the CT");
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
  command->callback([options, &context] {
    context.exit_code = run_check(*options, context.io, context.open_archive_delivery);
  });
}

}  // namespace countersign::cli
