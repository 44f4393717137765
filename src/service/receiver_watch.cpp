#include "receiver_watch.hpp"

#include <sys/socket.h>

namespace countersign::service::detail {

std::uint64_t NegotiationWatch::watch(int socket_fd, Clock::time_point deadline, std::string peer_text) {
  const std::lock_guard lock{mutex_};
  const std::uint64_t token = next_token_++;
  entries_.emplace(token, Entry{socket_fd, deadline, std::move(peer_text), false});
  return token;
}

bool NegotiationWatch::finish(std::uint64_t token) {
  const std::lock_guard lock{mutex_};
  const auto found = entries_.find(token);
  if (found == entries_.end()) return false;
  const bool expired = found->second.expired;
  entries_.erase(found);
  return expired;
}

void NegotiationWatch::expire(Clock::time_point now, ServiceLog& log, std::chrono::seconds timeout) {
  const std::lock_guard lock{mutex_};
  for (auto& [token, entry] : entries_) {
    if (entry.expired || now < entry.deadline) continue;
    entry.expired = true;
    ::shutdown(entry.socket_fd, SHUT_RDWR);
    log.line("dropped connection from " + entry.peer_text + ": no complete association request within " +
             std::to_string(timeout.count()) + " s (ACSE timeout)");
  }
}

void NegotiationWatch::shut_down_all() {
  const std::lock_guard lock{mutex_};
  for (auto& [token, entry] : entries_) {
    entry.expired = true;
    ::shutdown(entry.socket_fd, SHUT_RDWR);
  }
}

}  // namespace countersign::service::detail
