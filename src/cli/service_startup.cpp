#include "service_startup.hpp"

#include <countersign/net/destination.hpp>
#include <countersign/report/html_pdf.hpp>
#include <countersign/service/check_processor.hpp>
#include <countersign/service/program_runner.hpp>

#include <chrono>

namespace countersign::cli {

void add_intake_options(CLI::App& command, IntakeFlags& flags) {
  command
      .add_option("--quiet-seconds,--settle-seconds", flags.quiet_s,
                  "a file written in the inbox in place (not moved in whole) is read only after it has been "
                  "unchanged this long (default 2; --settle-seconds is the older name)")
      ->check(CLI::Range(0.0, 3600.0));
  command
      .add_option("--retry-limit", flags.retry_limit,
                  "a file that cannot be read is retried with growing waits (1 s, 2 s, 4 s ...) and moved to "
                  "quarantine with the reason at this attempt (default 5)")
      ->check(CLI::Range(1, 1000));
  command
      .add_option("--study-wait", flags.study_wait_s,
                  "a plan that names a structure set waits this long (seconds from its arrival, default "
                  "120) for the structure set and its CT images; then it is checked without a CT, and the "
                  "result and the log say so")
      ->check(CLI::Range(0, 86400));
  command
      .add_option("--study-keep-days", flags.study_keep_days,
                  "CT images and structure sets received are kept in RESULTS/studies for this many days "
                  "from their arrival (default 30), then removed")
      ->check(CLI::Range(1, 3650));
}

service::StudyStoreSettings study_settings_from(const IntakeFlags& flags) {
  service::StudyStoreSettings settings;
  settings.wait = std::chrono::seconds{flags.study_wait_s};
  settings.keep = std::chrono::hours{24 * flags.study_keep_days};
  return settings;
}

service::IntakeOptions intake_options_from(const IntakeFlags& flags) {
  service::IntakeOptions options;
  options.quiet_period = std::chrono::milliseconds{static_cast<long long>(flags.quiet_s * 1000.0)};
  options.read_attempts = flags.retry_limit;
  return options;
}

void add_follow_up_options(CLI::App& command, FollowUpFlags& flags) {
  command.add_option(
      "--db", flags.db,
      "history store: an SQLite file (default RESULTS/history.sqlite) or a PostgreSQL connection URI "
      "(postgresql://USER@HOST/DATABASE) shared by services on several machines");
  command.add_option(
      "--on-flag", flags.on_flag,
      "run this program for each plan outside tolerance or not checked, with the result file's path "
      "as its last argument (words split as a shell would, but no shell runs it); a failure is "
      "logged and retried, never holding up checking");
  command.add_option(
      "--send-to", flags.send_to,
      "send each check's structured result (SR) and record (Encapsulated PDF, with Chromium) to "
      "this archive, AE@HOST:PORT; repeat for several; undelivered objects wait in the outbox");
  command.add_option("--outbox", flags.outbox, "the durable outbox for --send-to (default RESULTS/outbox)");
  command.add_option("--calling-ae", flags.calling_ae,
                     "AE title this service sends with (default COUNTERSIGN)");
}

Expected<bool> apply_follow_up_options(const FollowUpFlags& flags, service::ServiceSettings& settings) {
  if (!flags.db.empty()) settings.store = flags.db;
  if (!flags.on_flag.empty()) {
    auto words = service::split_command_words(flags.on_flag, "--on-flag");
    if (!words) return words.error();
    auto program = service::find_program(words->front(), "--on-flag");
    if (!program) return program.error();
    words->front() = program.value();
    service::AlertSettings alerts;
    alerts.command = std::move(words.value());
    settings.follow_ups.alerts = std::move(alerts);
  }
  if (!flags.send_to.empty()) {
    service::DeliverySettings delivery;
    for (const std::string& text : flags.send_to) {
      auto destination = net::Destination::parse(text);
      if (!destination) return destination.error();
      delivery.destinations.push_back(std::move(destination.value()));
    }
    if (!net::is_valid_ae_title(flags.calling_ae)) {
      return Error{ErrorKind::usage, "", "--calling-ae", "",
                   "\"" + flags.calling_ae + "\" is not a valid AE title (1 to 16 printable characters)"};
    }
    delivery.scu.calling_ae_title = flags.calling_ae;
    delivery.outbox = flags.outbox;
    delivery.chromium = report::find_chromium();
    settings.follow_ups.delivery = std::move(delivery);
  } else if (!flags.outbox.empty()) {
    return Error{ErrorKind::usage, "", "--outbox", "", "--outbox is for --send-to, which is not given"};
  }
  return true;
}

Expected<OpenedService> open_checking_service(service::ServiceSettings settings, const CheckFlags& flags,
                                              service::ServiceLog& log) {
  OpenedService opened;
  opened.beamdata_dir = beamdata_folder(flags.beamdata);
  check::CheckOptions options;
  TRY_ASSIGN(options, check_options_from(flags));
  opened.settings_line = "beam data " + opened.beamdata_dir.string() + ", method " +
                         std::string{flag_text(flags.method)} + ", depth " +
                         std::string{engine::to_code(flags.depth)} + ", policy " + options.policy.source;
  service::PlanProcessor processor;
  TRY_ASSIGN(processor, service::load_check_processor(opened.beamdata_dir, std::move(options)));
  TRY_ASSIGN(opened.service, service::CheckingService::open(settings, std::move(processor), log));
  if (settings.follow_ups.delivery && !settings.follow_ups.delivery->chromium) {
    log.line(
        "no Chromium found: the structured result (SR) of each check is sent alone; the PDF record needs "
        "Chromium (Debian package chromium, or set COUNTERSIGN_CHROMIUM)");
  }
  return opened;
}

std::string stopped_line(const service::WatchSummary& summary, std::optional<int> signal) {
  return std::string{"stopped"} + (signal ? " on signal " + std::to_string(*signal) : std::string{}) + ": " +
         std::to_string(summary.checked) + " checked, " + std::to_string(summary.duplicates) +
         " already checked, " + std::to_string(summary.quarantined) + " quarantined, " +
         std::to_string(summary.failures) + " failed attempts";
}

}  // namespace countersign::cli
