#include <countersign/service/history.hpp>
#include <countersign/service/service_log.hpp>

namespace countersign::service {

void ServiceLog::line(std::string_view text) {
  const std::string stamp = utc_timestamp_now();
  const std::scoped_lock lock{mutex_};
  out_ << stamp << ' ' << text << '\n';
  out_.flush();
}

}  // namespace countersign::service
