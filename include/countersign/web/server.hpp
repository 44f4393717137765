#pragma once

// The department web view's HTTP server (cpp-httplib from Debian; the HTTP library stays inside this
// module). It reads the history store, serves the pages of pages.hpp to logged-in users, and records
// reviews of reviewers through the store's own add_review (the same audit trail as `countersign review`,
// reviewer kind web_user).

#include <countersign/store/store.hpp>
#include <countersign/util/error.hpp>
#include <countersign/web/sessions.hpp>

#include <filesystem>
#include <iosfwd>
#include <memory>
#include <optional>
#include <string>

namespace countersign::web {

struct ServerOptions {
  store::StoreLocation store;
  std::optional<std::filesystem::path> results_folder;  // where record files are found (this host)
  std::filesystem::path users_file;
  std::filesystem::path beamdata_folder;
  std::string host = "127.0.0.1";
  int port = 8470;                 // 0: any free port
  std::filesystem::path tls_cert;  // both or neither
  std::filesystem::path tls_key;
  SessionLimits sessions{};
  ThrottleLimits throttle{};
};

// "127.0.0.1:8470", "[::1]:8470" or "0.0.0.0:8470" into host and port; an error (kind usage) otherwise.
[[nodiscard]] Expected<std::pair<std::string, int>> parse_listen(const std::string& text);
// 127.0.0.0/8, ::1 and "localhost".
[[nodiscard]] bool is_loopback(const std::string& host);
// The warning logged when the server listens beyond loopback without TLS; nullopt otherwise.
[[nodiscard]] std::optional<std::string> exposure_warning(const std::string& host, bool tls);

class WebServer {
 public:
  // Opens the store and the users file, and binds the port. Errors name the file, store or address.
  [[nodiscard]] static Expected<std::unique_ptr<WebServer>> start(const ServerOptions& options,
                                                                  std::ostream& log);
  WebServer(const WebServer&) = delete;
  WebServer& operator=(const WebServer&) = delete;
  ~WebServer();

  [[nodiscard]] int port() const;
  [[nodiscard]] std::string url() const;
  // Answers requests until stop() (from another thread).
  void run();
  void stop();

  struct State;

 private:
  explicit WebServer(std::unique_ptr<State> state);
  std::unique_ptr<State> state_;
};

}  // namespace countersign::web
