#pragma once

// Deadlines of connections that are still negotiating (internal to the DICOM receiver). DCMTK reads
// an association request with a timeout per read, so a peer that trickles a byte now and then would
// hold its connection for ever; the listener calls expire() a few times a second and shuts down the
// socket of every connection whose whole negotiation took longer than the ACSE timeout.
//
// A socket is shut down (never closed) here, and only while it is registered: its thread closes it
// only after finish(), so a descriptor number is never reused under the watch.

#include <countersign/service/service_log.hpp>

#include <chrono>
#include <cstdint>
#include <map>
#include <mutex>
#include <string>

namespace countersign::service::detail {

class NegotiationWatch {
 public:
  using Clock = std::chrono::steady_clock;

  // Starts watching `socket_fd`; returns the token for finish().
  std::uint64_t watch(int socket_fd, Clock::time_point deadline, std::string peer_text);
  // Stops watching; returns true when the deadline had already expired (the socket was shut down).
  bool finish(std::uint64_t token);
  // Shuts down every socket past its deadline and logs each once.
  void expire(Clock::time_point now, ServiceLog& log, std::chrono::seconds timeout);
  // Shuts down every watched socket (the receiver is stopping).
  void shut_down_all();

 private:
  struct Entry {
    int socket_fd = -1;
    Clock::time_point deadline;
    std::string peer_text;
    bool expired = false;
  };
  std::mutex mutex_;
  std::map<std::uint64_t, Entry> entries_;
  std::uint64_t next_token_ = 1;
};

}  // namespace countersign::service::detail
