#include <countersign/service/stop_signals.hpp>

#include <pthread.h>
#include <sys/eventfd.h>
#include <sys/signalfd.h>
#include <unistd.h>

#include <cerrno>
#include <cstdint>
#include <system_error>
#include <utility>

namespace countersign::service {

namespace {
sigset_t termination_set() {
  sigset_t set;
  sigemptyset(&set);
  sigaddset(&set, SIGTERM);
  sigaddset(&set, SIGINT);
  return set;
}
}  // namespace

StopSignal::StopSignal() : fd_(::eventfd(0, EFD_CLOEXEC | EFD_NONBLOCK)) {
  if (fd_ < 0) throw std::system_error(errno, std::generic_category(), "eventfd");
}
StopSignal::StopSignal(StopSignal&& other) noexcept : fd_(std::exchange(other.fd_, -1)) {}
StopSignal& StopSignal::operator=(StopSignal&& other) noexcept {
  if (this != &other) {
    if (fd_ >= 0) ::close(fd_);
    fd_ = std::exchange(other.fd_, -1);
  }
  return *this;
}
StopSignal::~StopSignal() {
  if (fd_ >= 0) ::close(fd_);
}

void StopSignal::request() const {
  const std::uint64_t one = 1;
  // The counter only has to become non-zero; a full counter already is.
  [[maybe_unused]] const auto written = ::write(fd_, &one, sizeof one);
}

TerminationSignals::TerminationSignals() {
  sigset_t blocked = termination_set();
  sigaddset(&blocked, SIGPIPE);
  if (const int rc = ::pthread_sigmask(SIG_BLOCK, &blocked, &previous_mask_); rc != 0) {
    throw std::system_error(rc, std::generic_category(), "pthread_sigmask");
  }
  const sigset_t wanted = termination_set();
  fd_ = ::signalfd(-1, &wanted, SFD_CLOEXEC | SFD_NONBLOCK);
  if (fd_ < 0) {
    const int saved = errno;
    ::pthread_sigmask(SIG_SETMASK, &previous_mask_, nullptr);
    throw std::system_error(saved, std::generic_category(), "signalfd");
  }
}

TerminationSignals::~TerminationSignals() {
  ::close(fd_);
  ::pthread_sigmask(SIG_SETMASK, &previous_mask_, nullptr);
}

std::optional<int> TerminationSignals::take() const {
  signalfd_siginfo info{};
  if (::read(fd_, &info, sizeof info) != static_cast<ssize_t>(sizeof info)) return std::nullopt;
  return static_cast<int>(info.ssi_signo);
}

void block_termination_signals_in_this_thread() {
  sigset_t blocked = termination_set();
  sigaddset(&blocked, SIGPIPE);
  ::pthread_sigmask(SIG_BLOCK, &blocked, nullptr);
}

}  // namespace countersign::service
