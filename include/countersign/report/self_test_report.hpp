#pragma once

// The self-test's results for people: the terminal table and an HTML page for the record, both
// drawn from check::SelfTestReport (the sensitivity of each error kind first, then every case).

#include <countersign/check/self_test.hpp>

#include <string>

namespace countersign::report {

// Terminal text: one line per case, then the sensitivity and the outcome.
[[nodiscard]] std::string self_test_text(const check::SelfTestReport& report,
                                         const std::string& policy_source);

// A self-contained HTML page (UTF-8, no scripts) with the same content.
[[nodiscard]] std::string self_test_html(const check::SelfTestReport& report,
                                         const std::string& policy_source);

}  // namespace countersign::report
