// `countersign serve [--results DIR | --db URL] [--listen 127.0.0.1:8470] [--users FILE] [--beamdata DIR]
// [--tls-cert FILE --tls-key FILE]`: the department web view over the history store, until SIGTERM or
// SIGINT. Loopback by default; beyond loopback only with TLS or behind a TLS reverse proxy (logged).

#include <countersign/cli/commands.hpp>
#include <countersign/service/stop_signals.hpp>
#include <countersign/util/text.hpp>
#include <countersign/web/server.hpp>
#include <countersign/web/users.hpp>

#include "shared_options.hpp"
#include "store_options.hpp"

#include <poll.h>

#include <memory>
#include <ostream>
#include <thread>

namespace countersign::cli {

namespace {

struct ServeCommandOptions {
  StoreFlags store;
  std::string listen = "127.0.0.1:8470";
  std::string users;
  std::string beamdata;
  std::string tls_cert;
  std::string tls_key;
};

Expected<web::ServerOptions> server_options(const ServeCommandOptions& options) {
  auto listen = web::parse_listen(options.listen);
  if (!listen) return listen.error();
  web::ServerOptions server;
  server.store = store_location_from(options.store);
  server.results_folder = results_folder_from(options.store);
  if (!options.users.empty()) {
    server.users_file = options.users;
  } else if (server.results_folder) {
    server.users_file = web::default_users_file(*server.results_folder);
  } else {
    return Error{ErrorKind::usage, "", "--users", "",
                 "with a PostgreSQL --db and no --results, name the users file"};
  }
  server.beamdata_folder = beamdata_folder(options.beamdata);
  server.host = listen->first;
  server.port = listen->second;
  server.tls_cert = options.tls_cert;
  server.tls_key = options.tls_key;
  return server;
}

ExitCode run_serve(const ServeCommandOptions& options, Io& io) {
  auto settings = server_options(options);
  if (!settings) {
    io.err << "countersign serve: " << escape_control_characters(settings.error().message()) << "\n";
    return ExitCode::bad_input;
  }
  // Before any thread starts: the server's threads inherit the blocked signals.
  const service::TerminationSignals signals;
  auto server = web::WebServer::start(settings.value(), io.err);
  if (!server) {
    io.err << "countersign serve: " << escape_control_characters(server.error().message()) << "\n";
    return ExitCode::bad_input;
  }
  io.out << "countersign serve: listening on " << server.value()->url() << " (history "
         << settings->store.describe() << ", users " << settings->users_file.string() << ")" << std::endl;
  std::thread http([&server] { server.value()->run(); });
  pollfd wait{signals.fd(), POLLIN, 0};
  while (::poll(&wait, 1, -1) < 0 || !signals.take()) {
  }
  io.out << "countersign serve: stopping" << std::endl;
  server.value()->stop();
  http.join();
  return ExitCode::all_within_tolerance;
}

}  // namespace

void add_serve_command(CLI::App& app, CommandContext& context) {
  auto options = std::make_shared<ServeCommandOptions>();
  auto* command = app.add_subcommand(
      "serve",
      "The department web view of the history: today's checks with the flagged and unreviewed ones first, "
      "each "
      "check's record, reviews and audit entry, trends with control limits per machine, and the beam-data "
      "library. Users log in (`countersign user add`); reviewers record decisions in the same audit trail as "
      "`countersign review`. Listens on loopback unless --listen says otherwise; beyond loopback use TLS "
      "(--tls-cert/--tls-key) or a TLS reverse proxy. Runs until SIGTERM or SIGINT.");
  add_store_options(*command, options->store);
  command->add_option("--listen", options->listen,
                      "HOST:PORT to listen on (default 127.0.0.1:8470; port 0: any free port)");
  command->add_option("--users", options->users,
                      "the users file (default: web-users.txt in the results folder)");
  command->add_option("--beamdata", options->beamdata,
                      "the beam-data library shown on the library page (default: bundled)");
  auto* cert = command->add_option("--tls-cert", options->tls_cert, "PEM certificate: serve HTTPS");
  auto* key = command->add_option("--tls-key", options->tls_key, "PEM private key of --tls-cert");
  cert->needs(key);
  key->needs(cert);
  command->callback([options, &context] { context.exit_code = run_serve(*options, context.io); });
}

}  // namespace countersign::cli
