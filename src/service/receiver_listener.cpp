#include "receiver_listener.hpp"

#include <countersign/service/stop_signals.hpp>

#include <arpa/inet.h>
#include <fcntl.h>
#include <netinet/in.h>
#include <poll.h>
#include <sys/socket.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <cstring>

namespace countersign::service::detail {

namespace {

// Connections refused over the limit that may still have their request read and rejected properly.
constexpr std::size_t max_refusing_threads = 2;
constexpr int poll_interval_ms = 200;  // also how often negotiation deadlines are checked

Error usage(const std::string& option, const std::string& detail) {
  return Error{ErrorKind::usage, "", option, "", detail};
}

// Reads and writes on an accepted socket give up after `timeout` (TLS handshake included).
void set_socket_timeouts(int fd, std::chrono::seconds timeout) {
  timeval tv{};
  tv.tv_sec = static_cast<time_t>(timeout.count());
  ::setsockopt(fd, SOL_SOCKET, SO_RCVTIMEO, &tv, sizeof tv);
  ::setsockopt(fd, SOL_SOCKET, SO_SNDTIMEO, &tv, sizeof tv);
}

}  // namespace

Expected<UniqueFd> open_listening_socket(const std::string& address, std::uint16_t port) {
  const auto ip = IpAddress::parse(address);
  if (!ip) return usage("--bind", "\"" + address + "\" is not an IPv4 or IPv6 address");
  sockaddr_storage storage{};
  socklen_t length = 0;
  if (ip->is_v4()) {
    auto& v4 = reinterpret_cast<sockaddr_in&>(storage);
    v4.sin_family = AF_INET;
    v4.sin_port = htons(port);
    ::inet_pton(AF_INET, address.c_str(), &v4.sin_addr);
    length = sizeof v4;
  } else {
    auto& v6 = reinterpret_cast<sockaddr_in6&>(storage);
    v6.sin6_family = AF_INET6;
    v6.sin6_port = htons(port);
    ::inet_pton(AF_INET6, address.c_str(), &v6.sin6_addr);
    length = sizeof v6;
  }
  UniqueFd fd{::socket(storage.ss_family, SOCK_STREAM | SOCK_CLOEXEC | SOCK_NONBLOCK, 0)};
  if (!fd.valid()) return usage("--bind", std::string{"cannot open a socket: "} + std::strerror(errno));
  const int yes = 1;
  ::setsockopt(fd.get(), SOL_SOCKET, SO_REUSEADDR, &yes, sizeof yes);
  if (::bind(fd.get(), reinterpret_cast<const sockaddr*>(&storage), length) != 0 ||
      ::listen(fd.get(), 64) != 0) {
    return usage("--port", "cannot listen on " + address + " port " + std::to_string(port) + ": " +
                               std::strerror(errno));
  }
  return fd;
}

ConnectionListener::ConnectionListener(UniqueFd listening_socket, AssociationContext context,
                                       std::size_t max_associations)
    : listening_socket_(std::move(listening_socket)),
      context_(context),
      max_associations_(max_associations) {}

ConnectionListener::~ConnectionListener() { stop(); }

bool ConnectionListener::start() {
  int fds[2] = {-1, -1};
  if (::pipe2(fds, O_CLOEXEC | O_NONBLOCK) != 0) return false;
  wake_read_ = UniqueFd{fds[0]};
  wake_write_ = UniqueFd{fds[1]};
  thread_ = std::thread([this] {
    block_termination_signals_in_this_thread();  // connection threads inherit this mask
    run();
  });
  return true;
}

void ConnectionListener::stop() {
  if (!thread_.joinable()) return;
  stopping_ = true;
  const char wake = 1;
  [[maybe_unused]] const auto written = ::write(wake_write_.get(), &wake, 1);
  thread_.join();
  listening_socket_.reset();
  // Connections still negotiating are dropped; transfers in progress finish (bounded by the timeouts).
  context_.watch->shut_down_all();
  for (auto& connection : connections_) {
    if (connection.thread.joinable()) connection.thread.join();
  }
  connections_.clear();
}

void ConnectionListener::run() {
  while (!stopping_) {
    pollfd fds[2] = {{listening_socket_.get(), POLLIN, 0}, {wake_read_.get(), POLLIN, 0}};
    const int ready = ::poll(fds, 2, poll_interval_ms);
    if (ready < 0 && errno != EINTR) {
      context_.log->line(std::string{"receiver: waiting for connections failed: "} + std::strerror(errno));
      std::this_thread::sleep_for(std::chrono::milliseconds{poll_interval_ms});
    }
    if (ready > 0 && (fds[0].revents & POLLIN) != 0 && !stopping_) accept_waiting();
    context_.watch->expire(NegotiationWatch::Clock::now(), *context_.log, context_.settings->acse_timeout);
    join_finished();
  }
}

void ConnectionListener::accept_waiting() {
  for (;;) {
    sockaddr_storage from{};
    socklen_t length = sizeof from;
    UniqueFd accepted{
        ::accept4(listening_socket_.get(), reinterpret_cast<sockaddr*>(&from), &length, SOCK_CLOEXEC)};
    if (!accepted.valid()) {
      if (errno == EMFILE || errno == ENFILE) {
        context_.log->line(std::string{"receiver: cannot accept a connection: "} + std::strerror(errno));
      }
      return;  // EAGAIN: nothing more waiting
    }
    PeerConnection peer;
    peer.socket = std::move(accepted);
    peer.address =
        IpAddress::from_socket_address(reinterpret_cast<const sockaddr&>(from)).value_or(IpAddress{});
    peer.port = ntohs(from.ss_family == AF_INET6 ? reinterpret_cast<const sockaddr_in6&>(from).sin6_port
                                                 : reinterpret_cast<const sockaddr_in&>(from).sin_port);
    dispatch(std::move(peer));
  }
}

void ConnectionListener::dispatch(PeerConnection peer) {
  if (!context_.allow_list->host_may_connect(peer.address)) {
    context_.log->line("refused connection from " + peer.text() +
                       ": no allowed sender on this host (--allow-ae); connection closed");
    return;
  }
  set_socket_timeouts(peer.socket.get(),
                      std::max(context_.settings->acse_timeout, context_.settings->dimse_timeout));
  const std::size_t in_progress = count(true);
  const bool over_limit = in_progress >= max_associations_;
  if (over_limit && count(false) >= max_refusing_threads) {
    context_.log->line("refused connection from " + peer.text() + ": over --max-associations (" +
                       std::to_string(in_progress) + " in progress); connection closed");
    return;
  }
  auto done = std::make_shared<std::atomic<bool>>(false);
  Connection connection;
  connection.done = done;
  connection.counted = !over_limit;
  const AssociationContext* context = &context_;
  connection.thread = std::thread([peer = std::move(peer), context, done, over_limit, in_progress]() mutable {
    if (over_limit) {
      refuse_over_limit(std::move(peer), *context, in_progress);
    } else {
      serve_connection(std::move(peer), *context);
    }
    *done = true;
  });
  connections_.push_back(std::move(connection));
}

void ConnectionListener::join_finished() {
  for (auto it = connections_.begin(); it != connections_.end();) {
    if (*it->done) {
      it->thread.join();
      it = connections_.erase(it);
    } else {
      ++it;
    }
  }
}

std::size_t ConnectionListener::count(bool counted) const {
  return static_cast<std::size_t>(
      std::count_if(connections_.begin(), connections_.end(),
                    [&](const Connection& c) { return c.counted == counted && !*c.done; }));
}

}  // namespace countersign::service::detail
