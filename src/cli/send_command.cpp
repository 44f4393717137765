// `countersign send CHECK_ID --to AE@HOST:PORT`: sends the results of a recorded check again to an
// archive: the structured result (SR) kept with the check, as it was made (the same instance), and
// its record as an Encapsulated PDF (made from the record kept, with Chromium, and kept beside it
// so that a later send sends the same instance). Files that differ from the SHA-256 the audit
// trail recorded are never sent. Through the same durable outbox as `check --send-to`.

#include <countersign/cli/commands.hpp>
#include <countersign/net/outbox.hpp>
#include <countersign/report/html_pdf.hpp>
#include <countersign/service/record_objects.hpp>
#include <countersign/util/text.hpp>

#include "result_sender.hpp"
#include "store_options.hpp"

#include <stdlib.h>  // mkdtemp

#include <memory>
#include <ostream>
#include <string>
#include <vector>

namespace countersign::cli {

namespace {

namespace fs = std::filesystem;

struct SendCommandOptions {
  StoreFlags store;
  std::int64_t check_id = 0;
  std::vector<std::string> to;
  std::string outbox;
  std::string calling_ae = "COUNTERSIGN";
  int send_wait_s = 30;
};

class TemporaryFolder {
 public:
  TemporaryFolder() {
    std::string pattern = (fs::temp_directory_path() / "countersign-send-XXXXXX").string();
    if (::mkdtemp(pattern.data()) != nullptr) path_ = pattern;
  }
  TemporaryFolder(const TemporaryFolder&) = delete;
  TemporaryFolder& operator=(const TemporaryFolder&) = delete;
  ~TemporaryFolder() {
    std::error_code ec;
    if (!path_.empty()) fs::remove_all(path_, ec);
  }
  [[nodiscard]] const fs::path& path() const { return path_; }

 private:
  fs::path path_;
};

Expected<std::vector<net::Destination>> destinations_from(const SendCommandOptions& options) {
  std::vector<net::Destination> destinations;
  for (const std::string& text : options.to) {
    auto destination = net::Destination::parse(text);
    if (!destination) return destination.error();
    destinations.push_back(std::move(destination.value()));
  }
  if (!net::is_valid_ae_title(options.calling_ae)) {
    return Error{ErrorKind::usage, "", "--calling-ae", "",
                 "\"" + options.calling_ae + "\" is not a valid AE title (1 to 16 printable characters)"};
  }
  return destinations;
}

// The check and where its files are from here: --results when named, else the folder it was recorded in.
Expected<std::pair<store::CheckRecord, fs::path>> find_check(const SendCommandOptions& options) {
  auto history = open_store(options.store, store::Access::read_only);
  if (!history) return history.error();
  auto found = history.value()->get_checks({options.check_id});
  if (!found) return found.error();
  if (found->empty()) {
    return Error{ErrorKind::usage, "", "CHECK_ID", "",
                 "there is no check #" + std::to_string(options.check_id) + " in " +
                     history.value()->location().describe()};
  }
  const fs::path results = options.store.results.empty() ? fs::path{found->front().results_folder}
                                                         : fs::path{options.store.results};
  return std::pair{found->front(), results};
}

ExitCode queue_and_deliver(const std::vector<service::RecordObject>& objects,
                           const std::vector<net::Destination>& destinations,
                           const SendCommandOptions& options, Io& io) {
  const fs::path folder = options.outbox.empty() ? default_outbox_folder() : fs::path{options.outbox};
  auto outbox =
      net::Outbox::open(folder, net::RetryPolicy{std::chrono::seconds{2}, std::chrono::minutes{10}});
  if (!outbox) {
    io.err << "countersign send: " << escape_control_characters(outbox.error().message()) << "\n";
    return ExitCode::bad_input;
  }
  for (const auto& object : objects) {
    for (const auto& destination : destinations) {
      auto queued = outbox->enqueue(object.file, destination, object.sop_instance_uid, object.description);
      if (!queued) {
        io.err << "countersign send: " << escape_control_characters(queued.error().message()) << "\n";
        return ExitCode::record_not_written;
      }
    }
  }
  net::ScuSettings scu;
  scu.calling_ae_title = options.calling_ae;
  const net::Sender sender = [scu](const net::Destination& destination, const fs::path& file) {
    return net::send_file(destination, file, scu);
  };
  const auto events = outbox->deliver_until(
      sender, std::chrono::steady_clock::now() + std::chrono::seconds{options.send_wait_s});
  ExitCode code = ExitCode::all_within_tolerance;
  for (const auto& event : events) {
    io.out << escape_control_characters(delivery_line(event, outbox->folder())) << "\n";
    if (event.status == net::DeliveryStatus::rejected) code = ExitCode::record_not_written;
  }
  return code;
}

ExitCode run_send(const SendCommandOptions& options, Io& io) {
  auto destinations = destinations_from(options);
  if (!destinations) {
    io.err << "countersign send: " << escape_control_characters(destinations.error().message()) << "\n";
    return ExitCode::bad_input;
  }
  auto found = find_check(options);
  if (!found) {
    io.err << "countersign send: " << escape_control_characters(found.error().message()) << "\n";
    return ExitCode::bad_input;
  }
  const auto& [check, results] = found.value();
  const TemporaryFolder work;
  if (work.path().empty()) {
    io.err << "countersign send: cannot create a temporary folder\n";
    return ExitCode::record_not_written;
  }
  auto objects =
      service::record_objects(check, results, report::find_chromium(), work.path(), service::KeepPdf::yes);
  if (!objects) {
    io.err << "countersign send: " << escape_control_characters(objects.error().message()) << "\n";
    return ExitCode::record_not_written;
  }
  for (const auto& note : objects->notes)
    io.err << "countersign send: " << escape_control_characters(note) << "\n";
  return queue_and_deliver(objects->objects, destinations.value(), options, io);
}

}  // namespace

void add_send_command(CLI::App& app, CommandContext& context) {
  auto options = std::make_shared<SendCommandOptions>();
  auto* command = app.add_subcommand(
      "send",
      "Send the results of a recorded check again to an archive: its structured result (SR) as it was made, "
      "and "
      "its record as an Encapsulated PDF (needs Chromium; without it the SR alone is sent and the reason is "
      "printed). Files that differ from the SHA-256 recorded in the audit trail are not sent. Undelivered "
      "objects wait in the outbox for the next run. Exit 0 sent or queued, 3 usage or unknown check, 4 the "
      "objects could not be made or an archive rejected them.");
  command->add_option("check_id", options->check_id, "the check (its number in `countersign history`)")
      ->required()
      ->check(CLI::PositiveNumber);
  command->add_option("--to", options->to, "an archive, AE@HOST:PORT; repeat for several")->required();
  add_store_options(*command, options->store);
  command->add_option("--outbox", options->outbox,
                      "the durable outbox (default $XDG_STATE_HOME/countersign/outbox or "
                      "~/.local/state/countersign/outbox)");
  command->add_option("--calling-ae", options->calling_ae, "AE title to send with (default COUNTERSIGN)");
  command
      ->add_option("--send-wait", options->send_wait_s,
                   "seconds to keep trying before leaving objects queued")
      ->check(CLI::Range(0, 3600));
  command->callback([options, &context] { context.exit_code = run_send(*options, context.io); });
}

}  // namespace countersign::cli
