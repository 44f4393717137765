#pragma once

// The one way JSON documents become text, for every command and service.

#include <nlohmann/json.hpp>

#include <string>

namespace countersign::report {

// `document` indented by two spaces, followed by a newline. Any string that is not well-formed
// UTF-8 (a file name, a value the reader could not decode) is written with U+FFFD in place of the
// bad bytes: JSON output never stops on what the input contained.
[[nodiscard]] std::string json_text(const nlohmann::json& document);

}  // namespace countersign::report
