#include <countersign/store/verdict.hpp>

#include <array>
#include <utility>

namespace countersign::store {

namespace {
constexpr std::array<std::pair<PlanVerdict, std::string_view>, 3> plan_words{{
    {PlanVerdict::within_tolerance, "within_tolerance"},
    {PlanVerdict::outside_tolerance, "outside_tolerance"},
    {PlanVerdict::not_checked, "not_checked"},
}};
constexpr std::array<std::pair<BeamVerdict, std::string_view>, 4> beam_words{{
    {BeamVerdict::within_tolerance, "within_tolerance"},
    {BeamVerdict::outside_tolerance, "outside_tolerance"},
    {BeamVerdict::not_checked, "not_checked"},
    {BeamVerdict::skipped, "skipped"},
}};
}  // namespace

std::string_view to_string(PlanVerdict verdict) {
  for (const auto& [value, word] : plan_words)
    if (value == verdict) return word;
  return "not_checked";
}

std::string_view to_string(BeamVerdict verdict) {
  for (const auto& [value, word] : beam_words)
    if (value == verdict) return word;
  return "not_checked";
}

std::optional<PlanVerdict> plan_verdict_from_string(std::string_view word) {
  for (const auto& [value, text] : plan_words)
    if (text == word) return value;
  return std::nullopt;
}

std::optional<BeamVerdict> beam_verdict_from_string(std::string_view word) {
  for (const auto& [value, text] : beam_words)
    if (text == word) return value;
  return std::nullopt;
}

bool is_flagged(PlanVerdict verdict) { return verdict != PlanVerdict::within_tolerance; }

bool is_flagged(BeamVerdict verdict) {
  return verdict == BeamVerdict::outside_tolerance || verdict == BeamVerdict::not_checked;
}

}  // namespace countersign::store
