#pragma once

// The DICOM receiver's accepting thread (internal to service). It owns the listening socket, takes
// every connection at once (non-blocking accept), drops those from hosts no allow-list entry names,
// and gives each other connection a thread of its own, so that no peer, however slow, delays
// another. Beyond max_associations a connection is refused (its request read and rejected on a
// short-lived thread, or simply closed when even those are busy), and logged.

#include "receiver_association.hpp"

#include <countersign/service/unique_fd.hpp>
#include <countersign/util/error.hpp>

#include <atomic>
#include <list>
#include <memory>
#include <string>
#include <thread>

namespace countersign::service::detail {

// A listening TCP socket on `address` (IPv4 or IPv6 literal) and `port`. Errors are of kind usage.
[[nodiscard]] Expected<UniqueFd> open_listening_socket(const std::string& address, std::uint16_t port);

class ConnectionListener {
 public:
  ConnectionListener(UniqueFd listening_socket, AssociationContext context, std::size_t max_associations);
  ConnectionListener(const ConnectionListener&) = delete;
  ConnectionListener& operator=(const ConnectionListener&) = delete;
  ~ConnectionListener();

  // Starts the accepting thread; false when it cannot be started.
  [[nodiscard]] bool start();
  // Stops accepting, drops connections still negotiating, and waits for every connection's thread.
  void stop();

 private:
  struct Connection {
    std::thread thread;
    std::shared_ptr<std::atomic<bool>> done;
    bool counted = true;  // false for a connection refused over the limit
  };

  void run();
  void accept_waiting();
  void dispatch(PeerConnection peer);
  void join_finished();
  [[nodiscard]] std::size_t count(bool counted) const;

  UniqueFd listening_socket_;
  UniqueFd wake_read_;
  UniqueFd wake_write_;
  AssociationContext context_;
  std::size_t max_associations_;
  std::atomic<bool> stopping_{false};
  std::thread thread_;
  std::list<Connection> connections_;  // touched by the accepting thread only (and by stop() after it)
};

}  // namespace countersign::service::detail
