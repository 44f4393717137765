#include <countersign/report/json_text.hpp>

namespace countersign::report {

std::string json_text(const nlohmann::json& document) {
  return document.dump(2, ' ', false, nlohmann::json::error_handler_t::replace) + "\n";
}

}  // namespace countersign::report
