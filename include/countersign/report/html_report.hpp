#pragma once

// The printable record of one plan's check: one self-contained HTML page (inline CSS and SVG, no
// external requests), laid out for A4 and readable in black and white. A cover page with the plan's
// identity, the beam data and its SHA-256, the software version, date and time, the tolerance policy,
// the outcome of every beam and dose reference, a sign-off block and the caution; then one page per
// beam with its beam's-eye view to scale, the factors, planned and independent dose and the verdict.

#include <countersign/check/check_plan.hpp>
#include <countersign/plan/plan.hpp>
#include <countersign/util/error.hpp>

#include <filesystem>
#include <string>

namespace countersign::report {

struct HtmlOptions {
  std::string generated_at;  // date and time printed in the header; empty: now, local time
};

// The page as a string (UTF-8).
[[nodiscard]] std::string html_report(const check::PlanCheck& check, const HtmlOptions& options = {});

// Writes the page to `file` (temporary file in the same folder, then rename). Errors name the file.
[[nodiscard]] Expected<std::filesystem::path> write_html(const check::PlanCheck& check,
                                                         const std::filesystem::path& file,
                                                         const HtmlOptions& options = {});

// The current local date and time, "YYYY-MM-DD HH:MM:SS +hhmm".
[[nodiscard]] std::string local_timestamp();

// The caution every record carries (DEVELOPERS.md, "Safety").
[[nodiscard]] std::string_view caution_text();

}  // namespace countersign::report
