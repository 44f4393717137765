#pragma once

// The verdict words the history keeps, spelled as in the JSON report (DESIGN.md §6), and the
// history fields of one beam. Plain values: the store, the services and the web view share them.

#include <optional>
#include <string>
#include <string_view>

namespace countersign::store {

// The plan-level verdict.
enum class PlanVerdict { within_tolerance, outside_tolerance, not_checked };

// A beam's verdict; setup beams and beams without MU are listed as skipped, never flagged.
enum class BeamVerdict { within_tolerance, outside_tolerance, not_checked, skipped };

[[nodiscard]] std::string_view to_string(PlanVerdict verdict);
[[nodiscard]] std::string_view to_string(BeamVerdict verdict);
[[nodiscard]] std::optional<PlanVerdict> plan_verdict_from_string(std::string_view word);
[[nodiscard]] std::optional<BeamVerdict> beam_verdict_from_string(std::string_view word);

// Outside tolerance or not checked: a physicist has to look at it.
[[nodiscard]] bool is_flagged(PlanVerdict verdict);
[[nodiscard]] bool is_flagged(BeamVerdict verdict);

// The history fields of one beam.
struct BeamOutcome {
  int beam_number = 0;              // Beam Number (300A,00C0)
  std::string beam_name;            // Beam Name (300A,00C2)
  std::string machine;              // Treatment Machine Name (300A,00B2)
  std::optional<double> energy_mv;  // Nominal Beam Energy (300A,0114), absent when the plan lacks it
  std::string technique;            // how the beam was calculated, "<field category>/<formalism>"
  BeamVerdict verdict = BeamVerdict::not_checked;
  std::optional<double> deviation_percent;  // 100 (computed - planned) / planned; absent when not checked
  std::optional<double> tolerance_percent;  // the tolerance that was applied, when one was
  std::string reason;                       // why not checked or skipped (reason code), else empty
};

}  // namespace countersign::store
