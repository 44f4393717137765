#include <countersign/web/server.hpp>

#include "server_state.hpp"

#include <charconv>
#include <ostream>

namespace countersign::web {

namespace fs = std::filesystem;

void WebServer::State::note(const std::string& line) {
  const std::scoped_lock lock(log_mutex);
  *log << store::utc_timestamp_now() << " web: " << line << std::endl;
}

Expected<std::pair<std::string, int>> parse_listen(const std::string& text) {
  const auto colon = text.rfind(':');
  const auto bad = [&] {
    return Error{ErrorKind::usage, "", "--listen", "",
                 "\"" + text + "\" is not HOST:PORT (e.g. 127.0.0.1:8470, [::1]:8470, 0.0.0.0:8470)"};
  };
  if (colon == std::string::npos || colon == 0) return bad();
  std::string host = text.substr(0, colon);
  if (host.front() == '[') {
    if (host.back() != ']') return bad();
    host = host.substr(1, host.size() - 2);
  }
  int port = -1;
  const std::string digits = text.substr(colon + 1);
  const auto [end, ec] = std::from_chars(digits.data(), digits.data() + digits.size(), port);
  if (ec != std::errc{} || end != digits.data() + digits.size() || port < 0 || port > 65535 || host.empty())
    return bad();
  return std::pair{host, port};
}

bool is_loopback(const std::string& host) {
  return host == "localhost" || host == "::1" || host.rfind("127.", 0) == 0;
}

std::optional<std::string> exposure_warning(const std::string& host, bool tls) {
  if (tls || is_loopback(host)) return std::nullopt;
  return "WARNING: listening on " + host +
         " beyond loopback without TLS: passwords and records would cross the network in clear; a TLS "
         "reverse "
         "proxy in front of this server is required (or give --tls-cert and --tls-key)";
}

WebServer::WebServer(std::unique_ptr<State> state) : state_(std::move(state)) {}
WebServer::~WebServer() = default;

int WebServer::port() const { return state_->port; }

std::string WebServer::url() const {
  const std::string host = state_->options.host.find(':') != std::string::npos
                               ? "[" + state_->options.host + "]"
                               : state_->options.host;
  return std::string{state_->tls ? "https" : "http"} + "://" + host + ":" + std::to_string(state_->port) +
         "/";
}

void WebServer::run() { state_->http->listen_after_bind(); }
void WebServer::stop() { state_->http->stop(); }

namespace {

Expected<std::unique_ptr<httplib::Server>> make_http(const ServerOptions& options) {
  if (options.tls_cert.empty() != options.tls_key.empty()) {
    return Error{ErrorKind::usage, "", "--tls-cert/--tls-key", "", "give both the certificate and its key"};
  }
  if (options.tls_cert.empty()) return std::make_unique<httplib::Server>();
  for (const auto& file : {options.tls_cert, options.tls_key}) {
    if (!fs::is_regular_file(file)) return Error{ErrorKind::io, file.string(), "", "", "no such file"};
  }
  auto server = std::make_unique<httplib::SSLServer>(options.tls_cert.c_str(), options.tls_key.c_str());
  if (!server->is_valid()) {
    return Error{ErrorKind::io, options.tls_cert.string(), "", "",
                 "the certificate and key (" + options.tls_key.string() + ") cannot be used for TLS"};
  }
  return std::unique_ptr<httplib::Server>{std::move(server)};
}

}  // namespace

Expected<std::unique_ptr<WebServer>> WebServer::start(const ServerOptions& options, std::ostream& log) {
  auto state = std::make_unique<State>(options, log);
  // The users file is read now to refuse a readable one before anyone can log in.
  auto users = UserList::load(options.users_file);
  if (!users) return users.error();
  if (users->users().empty()) {
    state->note("no user in " + options.users_file.string() +
                ": add one with `countersign user add NAME --role reviewer`");
  }
  auto opened = store::Store::open(options.store, store::Access::read_write);
  if (!opened) return opened.error();
  state->store = std::move(opened.value());
  auto http = make_http(options);
  if (!http) return http.error();
  state->http = std::move(http.value());
  state->tls = !options.tls_cert.empty();
  state->http->set_payload_max_length(std::size_t{64} * 1024);  // forms only: a reason is a few lines
  add_routes(*state);

  if (options.port == 0) {
    state->port = state->http->bind_to_any_port(options.host);
  } else if (state->http->bind_to_port(options.host, options.port)) {
    state->port = options.port;
  } else {
    state->port = -1;
  }
  if (state->port <= 0) {
    return Error{ErrorKind::io, "", "--listen", "",
                 "cannot listen on " + options.host + ":" + std::to_string(options.port) +
                     " (in use, or not an address of this host)"};
  }
  if (const auto warning = exposure_warning(options.host, state->tls)) state->note(*warning);
  return std::unique_ptr<WebServer>{new WebServer(std::move(state))};
}

}  // namespace countersign::web
