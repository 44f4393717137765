#include <countersign/service/service_log.hpp>
#include <countersign/store/store.hpp>
#include <countersign/util/text.hpp>

namespace countersign::service {

void ServiceLog::line(std::string_view text) {
  // Escaped here, once for every caller: no value (a file name, a Patient ID, an AE title, a DCMTK
  // message) can end the line early and forge another event.
  const std::string safe = escape_control_characters(text);
  const std::string stamp = store::utc_timestamp_now();
  const std::scoped_lock lock{mutex_};
  out_ << stamp << ' ' << safe << '\n';
  out_.flush();
}

}  // namespace countersign::service
