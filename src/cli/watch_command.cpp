// `countersign watch INBOX --out RESULTS ...`: checks every RT Plan file that arrives in a folder,
// exactly once, until SIGTERM or SIGINT (or, with --once, until the folder is empty).

#include <countersign/cli/commands.hpp>
#include <countersign/service/check_processor.hpp>
#include <countersign/service/checking_service.hpp>
#include <countersign/service/stop_signals.hpp>

#include "service_startup.hpp"
#include "shared_options.hpp"

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
  double settle_s = 10.0;
  bool once = false;
};

ExitCode run_watch(const WatchCommandOptions& options, Io& io) {
  try {
    // Before any other thread exists, so that every thread inherits the blocked signals.
    const service::TerminationSignals signals;
    service::ServiceLog log{io.out};

    service::ServiceSettings settings;
    settings.inbox = options.inbox;
    settings.results = options.results;
    if (!options.quarantine.empty()) settings.quarantine = fs::path{options.quarantine};
    auto opened = open_checking_service(settings, options.settle_s, options.flags, log);
    if (!opened) {
      io.err << "countersign watch: " << opened.error().message() << "\n";
      return exit_code_for(opened.error());
    }
    log.line(opened->settings_line + "; " +
             (options.once ? "checking what is there, then stopping" : "stop with SIGTERM or SIGINT"));

    const int stop_fds[] = {signals.fd()};
    const auto summary =
        opened->service->run(options.once ? service::RunUntil::idle : service::RunUntil::stopped, stop_fds);
    if (!summary) {
      io.err << "countersign watch: " << summary.error().message() << "\n";
      return exit_code_for(summary.error());
    }
    log.line(stopped_line(*summary, signals.take()));
    return ExitCode::all_within_tolerance;
  } catch (const std::system_error& e) {
    io.err << "countersign watch: " << e.what() << "\n";
    return ExitCode::bad_input;
  }
}

}  // namespace

void add_watch_command(CLI::App& app, CommandContext& context) {
  auto options = std::make_shared<WatchCommandOptions>();
  auto* command = app.add_subcommand(
      "watch",
      "Check every RT Plan file that arrives in INBOX, exactly once (by SOP Instance UID and content hash). "
      "Results: RESULTS/<SOPInstanceUID>.json and .html, written atomically; history: "
      "RESULTS/history.sqlite; "
      "checked plan files are kept in RESULTS/plans; files that are not usable plans go to the quarantine "
      "folder with a .reason.txt. Files already waiting are checked first. SIGTERM or SIGINT finishes the "
      "current plan and stops. The check supports, and does not replace, the physicist's review.");
  command->add_option("inbox", options->inbox, "folder the planning system exports to")->required();
  command->add_option("--out", options->results, "results folder (created 0750)")->required();
  command->add_option("--quarantine", options->quarantine,
                      "folder for bad files (default: RESULTS/quarantine)");
  add_check_flags(*command, options->flags);
  command
      ->add_option("--settle-seconds", options->settle_s,
                   "a file that does not read as a plan is retried until it has been unchanged this long, "
                   "then quarantined (default 10)")
      ->check(CLI::Range(0.1, 3600.0));
  command->add_flag("--once", options->once, "check what is in INBOX now, then stop");
  command->callback([options, &context] { context.exit_code = run_watch(*options, context.io); });
}

}  // namespace countersign::cli
