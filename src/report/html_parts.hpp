#pragma once

// Pieces of the HTML record shared by its source files (private to the report module).

#include <countersign/check/check_plan.hpp>
#include <countersign/report/html_report.hpp>

#include <optional>
#include <string>
#include <string_view>

namespace countersign::report::html {

[[nodiscard]] std::string_view style_sheet();

// "Within tolerance", "Outside tolerance", "Not checked", "Skipped".
[[nodiscard]] std::string_view status_words(check::Status status);
// CSS class for an outcome: "within", "outside", "not-checked", "skipped".
[[nodiscard]] std::string_view status_class(check::Status status);
[[nodiscard]] std::string_view category_words(check::FieldCategory category);

// A number with `decimals` places, or an en dash when absent.
[[nodiscard]] std::string fixed(const std::optional<double>& value, int decimals);
[[nodiscard]] std::string signed_fixed(const std::optional<double>& value, int decimals);
// "Family^Given" -> "Family, Given".
[[nodiscard]] std::string person_name(const std::string& dicom_name);
[[nodiscard]] std::string or_dash(const std::string& text);

// One sentence saying what the outcome of a beam means, with its numbers.
[[nodiscard]] std::string verdict_sentence(const check::BeamCheck& beam);

// The page section for one beam (starts a new printed page).
[[nodiscard]] std::string beam_section(const check::PlanCheck& check, const check::BeamCheck& beam,
                                       std::size_t index, std::size_t count);

}  // namespace countersign::report::html
