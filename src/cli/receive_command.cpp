// `countersign receive --port N --ae-title T --allow-ae A ... --out RESULTS`: a DICOM storage
// receiver for RT Plans; each received plan is stored atomically and checked through the same path
// as the folder watcher, until SIGTERM or SIGINT.

#include <countersign/cli/commands.hpp>
#include <countersign/service/check_processor.hpp>
#include <countersign/service/checking_service.hpp>
#include <countersign/service/stop_signals.hpp>

#include <countersign/service/storage_receiver.hpp>
#include "service_startup.hpp"
#include "shared_options.hpp"

#include <memory>
#include <ostream>
#include <string>
#include <system_error>
#include <vector>

namespace countersign::cli {

namespace {

namespace fs = std::filesystem;

struct ReceiveCommandOptions {
  int port = 0;
  std::string ae_title;
  std::vector<std::string> allowed;
  std::string results;
  std::string inbox;
  CheckFlags flags;
  int max_associations = 4;
  double settle_s = 10.0;
};

ExitCode run_receive(const ReceiveCommandOptions& options, Io& io) {
  try {
    // Before any other thread exists, so that every thread (DCMTK's included) inherits the mask.
    const service::TerminationSignals signals;
    service::ServiceLog log{io.out};

    service::ServiceSettings settings;
    settings.results = options.results;
    settings.inbox = options.inbox.empty() ? settings.results / "incoming" : fs::path{options.inbox};
    auto opened = open_checking_service(settings, options.settle_s, options.flags, log);
    if (!opened) {
      io.err << "countersign receive: " << opened.error().message() << "\n";
      return exit_code_for(opened.error());
    }

    service::ReceiverSettings receiver_settings;
    receiver_settings.port = static_cast<std::uint16_t>(options.port);
    receiver_settings.ae_title = options.ae_title;
    receiver_settings.allowed_calling_ae_titles = options.allowed;
    receiver_settings.inbox = settings.inbox;
    receiver_settings.max_associations = static_cast<std::uint16_t>(options.max_associations);
    auto receiver = service::StorageReceiver::start(receiver_settings, log);
    if (!receiver) {
      io.err << "countersign receive: " << receiver.error().message() << "\n";
      return exit_code_for(receiver.error());
    }
    log.line(opened->settings_line + "; stop with SIGTERM or SIGINT");

    const int stop_fds[] = {signals.fd()};
    const auto summary = opened->service->run(service::RunUntil::stopped, stop_fds);
    // Plans received from here on wait in the inbox and are checked at the next start.
    receiver.value()->stop();
    if (!summary) {
      io.err << "countersign receive: " << summary.error().message() << "\n";
      return exit_code_for(summary.error());
    }
    log.line(stopped_line(*summary, signals.take()));
    return ExitCode::all_within_tolerance;
  } catch (const std::system_error& e) {
    io.err << "countersign receive: " << e.what() << "\n";
    return ExitCode::bad_input;
  }
}

}  // namespace

void add_receive_command(CLI::App& app, CommandContext& context) {
  auto options = std::make_shared<ReceiveCommandOptions>();
  auto* command = app.add_subcommand(
      "receive",
      "Receive RT Plans over the DICOM network (C-STORE; C-ECHO answered) from the allowed calling AE titles "
      "only, store each atomically in the inbox (default RESULTS/incoming) and check it exactly once, as "
      "`watch` does. Other SOP classes and unknown senders are refused. SIGTERM or SIGINT stops after the "
      "current plan. The check supports, and does not replace, the physicist's review.");
  command->add_option("--port", options->port, "TCP port to listen on")
      ->required()
      ->check(CLI::Range(1, 65535));
  command->add_option("--ae-title", options->ae_title, "this receiver's AE title (the sender's called AE)")
      ->required();
  command
      ->add_option("--allow-ae", options->allowed, "a calling AE title allowed to send; repeat for several")
      ->required();
  command->add_option("--out", options->results, "results folder (created 0750)")->required();
  command->add_option("--inbox", options->inbox,
                      "where received plans are stored and checked from "
                      "(default: RESULTS/incoming)");
  add_check_flags(*command, options->flags);
  command
      ->add_option("--max-associations", options->max_associations, "associations served at once (default 4)")
      ->check(CLI::Range(1, 64));
  command
      ->add_option(
          "--settle-seconds", options->settle_s,
          "how long an unreadable file in the inbox must be unchanged before it is quarantined (default 10)")
      ->check(CLI::Range(0.1, 3600.0));
  command->callback([options, &context] { context.exit_code = run_receive(*options, context.io); });
}

}  // namespace countersign::cli
