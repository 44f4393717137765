#pragma once

// How `history` shows the store's records: terminal tables and JSON (keys documented in the README).

#include <countersign/store/records.hpp>
#include <countersign/store/trend.hpp>

#include <nlohmann/json.hpp>

#include <ostream>
#include <vector>

namespace countersign::cli {

inline constexpr const char* caution_line =
    "These records support, and do not replace, the physicist's review under local regulations and licensed "
    "practice.";

[[nodiscard]] nlohmann::json check_to_json(const store::CheckRecord& record);
[[nodiscard]] nlohmann::json review_to_json(const store::Review& review);
[[nodiscard]] nlohmann::json trend_to_json(const store::TrendGroup& group);
[[nodiscard]] nlohmann::json check_detail_to_json(const store::CheckDetail& detail);

void print_checks(std::ostream& out, const std::vector<store::CheckRecord>& checks);
void print_trends(std::ostream& out, const std::vector<store::TrendGroup>& groups);
void print_check_detail(std::ostream& out, const store::CheckDetail& detail);

}  // namespace countersign::cli
