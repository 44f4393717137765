#pragma once

// DCMTK's own log messages (its network library, its data dictionary...) routed into the service's
// log while an object of this class lives, so that every line of a service's output has the same
// form: one event per line, UTC time first, control characters escaped. DCMTK stays inside the
// implementation.

#include <countersign/service/service_log.hpp>

#include <memory>

namespace countersign::service {

class DcmtkLogRoute {
 public:
  // Replaces DCMTK's console output with `log` for messages of level warning and above. `log` must
  // outlive this object; so must every thread that may still log through DCMTK.
  explicit DcmtkLogRoute(ServiceLog& log);
  DcmtkLogRoute(const DcmtkLogRoute&) = delete;
  DcmtkLogRoute& operator=(const DcmtkLogRoute&) = delete;
  ~DcmtkLogRoute();  // puts DCMTK's previous output back

  struct State;

 private:
  std::unique_ptr<State> state_;
};

}  // namespace countersign::service
