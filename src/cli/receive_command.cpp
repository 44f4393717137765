// `countersign receive --port N --ae-title T --allow-ae A ... --out RESULTS`: a DICOM storage
// receiver for RT Plans; each received plan is stored atomically and checked through the same path
// as the folder watcher, until SIGTERM or SIGINT.

#include <countersign/cli/commands.hpp>
#include <countersign/service/check_processor.hpp>
#include <countersign/service/checking_service.hpp>
#include <countersign/service/dcmtk_log.hpp>
#include <countersign/service/stop_signals.hpp>
#include <countersign/util/text.hpp>

#include <countersign/service/storage_receiver.hpp>
#include "service_startup.hpp"
#include "shared_options.hpp"

#include <chrono>
#include <memory>
#include <ostream>
#include <string>
#include <system_error>
#include <vector>

namespace countersign::cli {

namespace {

namespace fs = std::filesystem;

struct ReceiveCommandOptions {
  std::string bind = "127.0.0.1";
  int port = 0;
  std::string ae_title;
  std::vector<std::string> allowed;
  int acse_timeout_s = 30;
  int dimse_timeout_s = 30;
  int max_object_mb = 256;
  std::string tls_cert;
  std::string tls_key;
  std::string tls_ca;
  std::string results;
  std::string inbox;
  CheckFlags flags;
  int max_associations = 4;
  IntakeFlags intake;
  FollowUpFlags follow_ups;
};

service::ReceiverSettings receiver_settings_from(const ReceiveCommandOptions& options,
                                                 const fs::path& inbox) {
  service::ReceiverSettings settings;
  settings.bind_address = options.bind;
  settings.port = static_cast<std::uint16_t>(options.port);
  settings.ae_title = options.ae_title;
  settings.allowed_senders = options.allowed;
  settings.inbox = inbox;
  settings.max_associations = static_cast<std::uint16_t>(options.max_associations);
  settings.acse_timeout = std::chrono::seconds{options.acse_timeout_s};
  settings.dimse_timeout = std::chrono::seconds{options.dimse_timeout_s};
  settings.max_object_bytes = static_cast<std::uint64_t>(options.max_object_mb) << 20;
  if (!options.tls_cert.empty())
    settings.tls = service::ReceiverTls{options.tls_cert, options.tls_key, options.tls_ca};
  return settings;
}

ExitCode run_receive(const ReceiveCommandOptions& options, Io& io) {
  try {
    // Before any other thread exists, so that every thread (DCMTK's included) inherits the mask.
    const service::TerminationSignals signals;
    service::ServiceLog log{io.out};
    const service::DcmtkLogRoute dcmtk_log{log};  // DCMTK's network messages in the same log

    service::ServiceSettings settings;
    settings.results = options.results;
    settings.inbox = options.inbox.empty() ? settings.results / "incoming" : fs::path{options.inbox};
    settings.intake = intake_options_from(options.intake);
    settings.studies = study_settings_from(options.intake);
    if (auto applied = apply_follow_up_options(options.follow_ups, settings); !applied) {
      io.err << "countersign receive: " << escape_control_characters(applied.error().message()) << "\n";
      return ExitCode::bad_input;
    }
    auto opened = open_checking_service(settings, options.flags, log);
    if (!opened) {
      io.err << "countersign receive: " << escape_control_characters(opened.error().message()) << "\n";
      return exit_code_for(opened.error());
    }

    auto receiver = service::StorageReceiver::start(receiver_settings_from(options, settings.inbox), log);
    if (!receiver) {
      io.err << "countersign receive: " << escape_control_characters(receiver.error().message()) << "\n";
      return exit_code_for(receiver.error());
    }
    log.line(opened->settings_line + "; stop with SIGTERM or SIGINT");

    const int stop_fds[] = {signals.fd()};
    const auto summary = opened->service->run(service::RunUntil::stopped, stop_fds);
    // Plans received from here on wait in the inbox and are checked at the next start.
    receiver.value()->stop();
    if (!summary) {
      io.err << "countersign receive: " << escape_control_characters(summary.error().message()) << "\n";
      return exit_code_for(summary.error());
    }
    log.line(stopped_line(*summary, signals.take()));
    return ExitCode::all_within_tolerance;
  } catch (const std::system_error& e) {
    io.err << "countersign receive: " << escape_control_characters(e.what()) << "\n";
    return ExitCode::bad_input;
  }
}

}  // namespace

void add_receive_command(CLI::App& app, CommandContext& context) {
  auto options = std::make_shared<ReceiveCommandOptions>();
  auto* command = app.add_subcommand(
      "receive",
      "Receive RT Plans over the DICOM network (C-STORE; C-ECHO answered) from the allowed senders only, "
      "store each atomically in the inbox (default RESULTS/incoming) and check it exactly once, as `watch` "
      "does. Listens on 127.0.0.1 unless --bind names another address. Other SOP classes, unknown senders, "
      "objects over --max-object-mb and associations beyond --max-associations are refused and logged. "
      "SIGTERM or SIGINT stops after the current plan. The check supports, and does not replace, the "
      "physicist's review.");
  command->add_option("--bind", options->bind,
                      "address to listen on (default 127.0.0.1; 0.0.0.0 or :: for every interface)");
  command->add_option("--port", options->port, "TCP port to listen on")
      ->required()
      ->check(CLI::Range(1, 65535));
  command->add_option("--ae-title", options->ae_title, "this receiver's AE title (the sender's called AE)")
      ->required();
  command
      ->add_option(
          "--allow-ae", options->allowed,
          "an allowed sender: AE (from any host), AE@HOST (a host name or address) or AE@ADDRESS/BITS "
          "(a network); repeat for several")
      ->required();
  command
      ->add_option("--acse-timeout", options->acse_timeout_s,
                   "seconds a connection has to complete its association request, TLS handshake included "
                   "(default 30)")
      ->check(CLI::Range(1, 3600));
  command
      ->add_option("--dimse-timeout", options->dimse_timeout_s,
                   "seconds to wait for each message or data once the association is up (default 30)")
      ->check(CLI::Range(1, 3600));
  command
      ->add_option(
          "--max-object-mb", options->max_object_mb,
          "largest object accepted, in MiB; larger ones are refused with a failure status (default 256)")
      ->check(CLI::Range(1, 65536));
  auto* cert = command->add_option("--tls-cert", options->tls_cert, "TLS: this receiver's certificate (PEM)");
  auto* key = command->add_option("--tls-key", options->tls_key, "TLS: its private key (PEM, no passphrase)");
  auto* ca =
      command->add_option("--tls-ca", options->tls_ca,
                          "TLS: CA certificate(s) (PEM) that senders' certificates must verify against");
  cert->needs(key)->needs(ca);
  key->needs(cert);
  ca->needs(cert);
  command->add_option("--out", options->results, "results folder (created 0750)")->required();
  command->add_option("--inbox", options->inbox,
                      "where received plans are stored and checked from "
                      "(default: RESULTS/incoming)");
  add_check_flags(*command, options->flags);
  command
      ->add_option("--max-associations", options->max_associations, "associations served at once (default 4)")
      ->check(CLI::Range(1, 64));
  add_intake_options(*command, options->intake);
  add_follow_up_options(*command, options->follow_ups);
  command->callback([options, &context] { context.exit_code = run_receive(*options, context.io); });
}

}  // namespace countersign::cli
