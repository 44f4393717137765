#pragma once

// `countersign serve` as a child process on a free loopback port, for the web tests: started with
// --listen 127.0.0.1:0, its URL read from the line it prints, stopped with SIGTERM when the object goes.

#include <sys/types.h>
#include <chrono>
#include <filesystem>
#include <string>
#include <vector>

namespace countersign::test {

class ServeProcess {
 public:
  // Runs `program serve ARGS... --listen 127.0.0.1:0`; output goes to files in `scratch`.
  ServeProcess(const std::filesystem::path& program, const std::vector<std::string>& arguments,
               const std::filesystem::path& scratch);
  ServeProcess(const ServeProcess&) = delete;
  ServeProcess& operator=(const ServeProcess&) = delete;
  ~ServeProcess();

  [[nodiscard]] bool running() const { return port_ > 0; }
  [[nodiscard]] int port() const { return port_; }
  // "http://127.0.0.1:PORT" (or https under TLS), without a final slash.
  [[nodiscard]] std::string url() const { return scheme_ + "://127.0.0.1:" + std::to_string(port_); }
  // What it wrote so far (stdout, then stderr): for failure messages and log checks.
  [[nodiscard]] std::string output() const;
  [[nodiscard]] std::string log() const;

 private:
  pid_t pid_ = -1;
  int port_ = 0;
  std::string scheme_ = "http";
  std::filesystem::path out_;
  std::filesystem::path err_;
};

}  // namespace countersign::test
