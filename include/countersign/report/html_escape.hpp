#pragma once

// Text placed in HTML or SVG: the five characters with a meaning in markup are replaced.

#include <string>
#include <string_view>

namespace countersign::report {

[[nodiscard]] std::string html_escape(std::string_view text);

}  // namespace countersign::report
