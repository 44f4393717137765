#pragma once

// The services' log: one line per event, prefixed with the UTC time ("2026-12-02T08:15:00Z"), safe
// to call from the receiver's threads and the checking loop at once. Under systemd the lines go to
// the journal. Control characters in the text are escaped (escape_control_characters), so a value
// from outside can never start a line of its own.

#include <mutex>
#include <ostream>
#include <string_view>

namespace countersign::service {

class ServiceLog {
 public:
  explicit ServiceLog(std::ostream& out) : out_(out) {}
  ServiceLog(const ServiceLog&) = delete;
  ServiceLog& operator=(const ServiceLog&) = delete;

  // Writes "<UTC time> <text, escaped>" and flushes.
  void line(std::string_view text);

 private:
  std::mutex mutex_;
  std::ostream& out_;
};

}  // namespace countersign::service
