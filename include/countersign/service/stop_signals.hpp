#pragma once

// Ways to ask a running service to stop, each a file descriptor the checking loop polls, so that
// no global flag or signal handler is needed: the current plan is finished, then the loop returns.

#include <csignal>
#include <optional>

namespace countersign::service {

// A stop request from inside the program (another thread, a test). Move-only.
class StopSignal {
 public:
  StopSignal();  // throws std::system_error when no eventfd can be made
  StopSignal(StopSignal&& other) noexcept;
  StopSignal& operator=(StopSignal&& other) noexcept;
  StopSignal(const StopSignal&) = delete;
  StopSignal& operator=(const StopSignal&) = delete;
  ~StopSignal();

  void request() const;  // thread-safe
  [[nodiscard]] int fd() const { return fd_; }

 private:
  int fd_ = -1;
};

// SIGTERM and SIGINT delivered as a readable descriptor (signalfd) while this object lives; SIGPIPE
// is blocked too, so a peer that drops a connection gives an error return instead of killing the
// process. Create it in the main thread before starting any other thread: threads inherit the mask.
class TerminationSignals {
 public:
  TerminationSignals();  // throws std::system_error when the signals cannot be redirected
  TerminationSignals(const TerminationSignals&) = delete;
  TerminationSignals& operator=(const TerminationSignals&) = delete;
  ~TerminationSignals();  // restores the previous mask

  [[nodiscard]] int fd() const { return fd_; }
  // The signal number waiting on the descriptor, consumed; nullopt when none.
  [[nodiscard]] std::optional<int> take() const;

 private:
  int fd_ = -1;
  sigset_t previous_mask_{};
};

// Blocks SIGTERM, SIGINT and SIGPIPE in the calling thread (for threads started by libraries).
void block_termination_signals_in_this_thread();

}  // namespace countersign::service
