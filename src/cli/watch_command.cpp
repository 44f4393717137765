// `countersign watch INBOX --out RESULTS ...`: checks every RT Plan file that arrives in a folder,
// exactly once, until SIGTERM or SIGINT (or, with --once, after one pass over what is there).

#include <countersign/cli/commands.hpp>
#include <countersign/service/check_processor.hpp>
#include <countersign/service/checking_service.hpp>
#include <countersign/service/dcmtk_log.hpp>
#include <countersign/service/stop_signals.hpp>
#include <countersign/util/text.hpp>

#include "service_startup.hpp"
#include "shared_options.hpp"

#include <chrono>
#include <memory>
#include <ostream>
#include <string>
#include <system_error>

namespace countersign::cli {

namespace {

namespace fs = std::filesystem;

struct WatchCommandOptions {
  std::string inbox;
  std::string results;
  std::string quarantine;
  CheckFlags flags;
  IntakeFlags intake;
  FollowUpFlags follow_ups;
  bool once = false;
  bool recursive = false;
};

ExitCode run_watch(const WatchCommandOptions& options, Io& io) {
  try {
    // Before any other thread exists, so that every thread inherits the blocked signals.
    const service::TerminationSignals signals;
    service::ServiceLog log{io.out};
    const service::DcmtkLogRoute dcmtk_log{log};  // DCMTK's own messages in the same log

    service::ServiceSettings settings;
    settings.inbox = options.inbox;
    settings.results = options.results;
    if (!options.quarantine.empty()) settings.quarantine = fs::path{options.quarantine};
    settings.intake = intake_options_from(options.intake);
    settings.studies = study_settings_from(options.intake);
    if (auto applied = apply_follow_up_options(options.follow_ups, settings); !applied) {
      io.err << "countersign watch: " << escape_control_characters(applied.error().message()) << "\n";
      return ExitCode::bad_input;
    }
    settings.watch.subfolders = options.recursive ? dicom::Subfolders::include : dicom::Subfolders::ignore;
    auto opened = open_checking_service(settings, options.flags, log);
    if (!opened) {
      io.err << "countersign watch: " << escape_control_characters(opened.error().message()) << "\n";
      return exit_code_for(opened.error());
    }
    log.line(opened->settings_line + "; " +
             (options.once ? "checking what is there, then stopping" : "stop with SIGTERM or SIGINT"));

    const int stop_fds[] = {signals.fd()};
    const auto summary = opened->service->run(
        options.once ? service::RunUntil::one_pass : service::RunUntil::stopped, stop_fds);
    if (!summary) {
      io.err << "countersign watch: " << escape_control_characters(summary.error().message()) << "\n";
      return exit_code_for(summary.error());
    }
    for (const std::string& file : summary->not_taken) log.line("not taken: " + file);
    // One pass: its alerts and deliveries get their first attempts before it ends; retries wait
    // (marker files, the outbox) for the next run.
    if (options.once) opened->service->wait_for_follow_ups(std::chrono::seconds{60});
    log.line(stopped_line(*summary, signals.take()));
    // One pass: a file left in the inbox or moved to quarantine needs a person.
    if (options.once && (!summary->not_taken.empty() || summary->quarantined > 0)) return ExitCode::bad_input;
    return ExitCode::all_within_tolerance;
  } catch (const std::system_error& e) {
    io.err << "countersign watch: " << escape_control_characters(e.what()) << "\n";
    return ExitCode::bad_input;
  }
}

}  // namespace

void add_watch_command(CLI::App& app, CommandContext& context) {
  auto options = std::make_shared<WatchCommandOptions>();
  auto* command = app.add_subcommand(
      "watch",
      "Check every RT Plan file that arrives in INBOX, exactly once (by SOP Instance UID and content hash). "
      "Each check keeps its own files, never replaced: RESULTS/<SOPInstanceUID>/<check id>.json, .html and "
      ".sr.dcm; history and audit trail: RESULTS/history.sqlite or --db; "
      "checked plan files are kept in RESULTS/plans; files that are not usable plans go to the quarantine "
      "folder with a .reason.txt. Files already waiting are checked first. A file moved into INBOX is read "
      "at "
      "once; one written in place only when unchanged for --quiet-seconds (exporters should write elsewhere "
      "and rename). SIGTERM or SIGINT finishes the plans in hand and stops. The check supports, and does "
      "not replace, the physicist's review.");
  command->add_option("inbox", options->inbox, "folder the planning system exports to")->required();
  command->add_option("--out", options->results, "results folder (created 0750)")->required();
  command->add_option("--quarantine", options->quarantine,
                      "folder for bad files (default: RESULTS/quarantine)");
  add_check_flags(*command, options->flags);
  add_intake_options(*command, options->intake);
  add_follow_up_options(*command, options->follow_ups);
  command->add_flag(
      "--recursive", options->recursive,
      "watch the subfolders of INBOX too (without it, a subfolder is named in the log once and its "
      "files are left alone)");
  command->add_flag("--once", options->once,
                    "one pass over what is in INBOX now, then stop; exit 3 when a file was quarantined or "
                    "could not be taken (each named in the log)");
  command->callback([options, &context] { context.exit_code = run_watch(*options, context.io); });
}

}  // namespace countersign::cli
