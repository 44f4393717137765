#pragma once

// What the server's request handlers share (private to the web module).

#include <countersign/store/store.hpp>
#include <countersign/web/pages.hpp>
#include <countersign/web/server.hpp>
#include <countersign/web/sessions.hpp>

#include <httplib.h>

#include <memory>
#include <mutex>
#include <optional>
#include <ostream>
#include <string>

namespace countersign::web {

struct WebServer::State {
  ServerOptions options;
  std::ostream* log = nullptr;
  std::mutex log_mutex;
  std::unique_ptr<store::Store> store;
  std::mutex store_mutex;  // one request at a time uses the store connection
  SessionTable sessions;
  LoginThrottle throttle;
  std::unique_ptr<httplib::Server> http;
  bool tls = false;
  int port = 0;

  State(ServerOptions o, std::ostream& l)
      : options(std::move(o)), log(&l), sessions(options.sessions), throttle(options.throttle) {}

  // One line in the log, with the time (UTC).
  void note(const std::string& line);
};

// Registers every route on state.http.
void add_routes(WebServer::State& state);

// The value of one cookie of a request, or empty.
[[nodiscard]] std::string cookie(const httplib::Request& request, const std::string& name);

inline constexpr const char* session_cookie = "countersign_session";
inline constexpr const char* login_cookie = "countersign_login";

}  // namespace countersign::web
