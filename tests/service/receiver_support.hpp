#pragma once

// Helpers for tests of the DICOM receiver: a free loopback port, waiting for a condition, and a
// receiver with a checking service behind it, started with settings the test adjusts.

#include <countersign/service/checking_service.hpp>
#include <countersign/service/stop_signals.hpp>
#include <countersign/service/storage_receiver.hpp>

#include "service/dicom_plans.hpp"
#include "support/paths.hpp"

#include <arpa/inet.h>
#include <netinet/in.h>
#include <sys/socket.h>
#include <unistd.h>

#include <atomic>
#include <chrono>
#include <filesystem>
#include <functional>
#include <memory>
#include <sstream>
#include <string>
#include <thread>

namespace countersign::test {

inline std::uint16_t free_loopback_port() {
  const int fd = ::socket(AF_INET, SOCK_STREAM, 0);
  sockaddr_in address{};
  address.sin_family = AF_INET;
  address.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  ::bind(fd, reinterpret_cast<const sockaddr*>(&address), sizeof address);
  socklen_t length = sizeof address;
  ::getsockname(fd, reinterpret_cast<sockaddr*>(&address), &length);
  ::close(fd);
  return ntohs(address.sin_port);
}

inline bool wait_for(const std::function<bool()>& condition, std::chrono::milliseconds timeout) {
  const auto deadline = std::chrono::steady_clock::now() + timeout;
  while (std::chrono::steady_clock::now() < deadline) {
    if (condition()) return true;
    std::this_thread::sleep_for(std::chrono::milliseconds{20});
  }
  return condition();
}

// A raw TCP connection to host:port (no DICOM), or -1.
inline int connect_tcp(const std::string& host, std::uint16_t port) {
  const int fd = ::socket(AF_INET, SOCK_STREAM, 0);
  sockaddr_in address{};
  address.sin_family = AF_INET;
  address.sin_port = htons(port);
  ::inet_pton(AF_INET, host.c_str(), &address.sin_addr);
  if (::connect(fd, reinterpret_cast<const sockaddr*>(&address), sizeof address) != 0) {
    ::close(fd);
    return -1;
  }
  return fd;
}

// The receiver in a temporary folder, with a checking service behind it that counts its checks.
class ReceiverUnderTest {
 public:
  explicit ReceiverUnderTest(const std::string& name)
      : dir_(make_temp_dir(name)), port_(free_loopback_port()) {}
  ReceiverUnderTest(const ReceiverUnderTest&) = delete;
  ReceiverUnderTest& operator=(const ReceiverUnderTest&) = delete;
  ~ReceiverUnderTest() {
    stop();
    std::filesystem::remove_all(dir_);
  }

  // Settings with the defaults of these tests; the caller adjusts them before start().
  [[nodiscard]] service::ReceiverSettings settings() const {
    service::ReceiverSettings settings;
    settings.port = port_;
    settings.ae_title = "FERN-CHECK";
    settings.allowed_senders = {"FERN-TPS"};
    settings.inbox = results() / "incoming";
    return settings;
  }

  // Starts the checking service and the receiver; the error message, or "" when both run.
  std::string start(const service::ReceiverSettings& receiver_settings) {
    service::ServiceSettings settings;
    settings.inbox = receiver_settings.inbox;
    settings.results = results();
    settings.intake.quiet_period = std::chrono::seconds{1};
    auto service = service::CheckingService::open(settings, dicom_identity_processor(calls_), log_);
    if (!service) return service.error().message();
    service_ = std::move(service.value());
    checker_ = std::thread([this] {
      const int fds[] = {stop_.fd()};
      [[maybe_unused]] const auto summary = service_->run(service::RunUntil::stopped, fds);
    });
    auto started = service::StorageReceiver::start(receiver_settings, log_);
    if (!started) return started.error().message();
    receiver_ = std::move(started.value());
    return {};
  }

  void stop() {
    if (receiver_) receiver_->stop();
    stop_.request();
    if (checker_.joinable()) checker_.join();
    service_.reset();
  }

  [[nodiscard]] const std::filesystem::path& dir() const { return dir_; }
  [[nodiscard]] std::filesystem::path results() const { return dir_ / "results"; }
  [[nodiscard]] std::uint16_t port() const { return port_; }
  [[nodiscard]] std::string log() const { return log_stream_.str(); }
  [[nodiscard]] int checks() const { return calls_->load(); }
  [[nodiscard]] bool log_has(const std::string& text) const { return log().find(text) != std::string::npos; }

 private:
  std::filesystem::path dir_;
  std::uint16_t port_;
  std::ostringstream log_stream_;
  service::ServiceLog log_{log_stream_};
  std::shared_ptr<std::atomic<int>> calls_ = std::make_shared<std::atomic<int>>(0);
  std::unique_ptr<service::CheckingService> service_;
  std::unique_ptr<service::StorageReceiver> receiver_;
  service::StopSignal stop_;
  std::thread checker_;
};

}  // namespace countersign::test
