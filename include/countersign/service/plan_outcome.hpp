#pragma once

// What the automatic services need from the checking pipeline, and nothing more: a processor turns
// the bytes of one complete plan file into an outcome (verdict, report texts, history fields) or an
// Error. The watcher, the receiver and the history are written and tested against this seam, so
// they depend on no engine internals.

#include <countersign/util/error.hpp>

#include <cstddef>
#include <filesystem>
#include <functional>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <vector>

namespace countersign::service {

// The plan-level verdict, spelled as in the JSON report (README, "Exit codes").
enum class PlanVerdict { within_tolerance, outside_tolerance, not_checked };

// A beam's verdict; setup beams and beams without MU are listed as skipped, never flagged.
enum class BeamVerdict { within_tolerance, outside_tolerance, not_checked, skipped };

[[nodiscard]] std::string_view to_string(PlanVerdict verdict);
[[nodiscard]] std::string_view to_string(BeamVerdict verdict);
[[nodiscard]] std::optional<PlanVerdict> plan_verdict_from_string(std::string_view word);
[[nodiscard]] std::optional<BeamVerdict> beam_verdict_from_string(std::string_view word);

// The history fields of one beam.
struct BeamOutcome {
  int beam_number = 0;              // Beam Number (300A,00C0)
  std::string beam_name;            // Beam Name (300A,00C2)
  std::string machine;              // Treatment Machine Name (300A,00B2)
  std::optional<double> energy_mv;  // Nominal Beam Energy (300A,0114), absent when the plan lacks it
  std::string technique;            // how the beam was calculated, the pipeline's own words
  BeamVerdict verdict = BeamVerdict::not_checked;
  std::optional<double> deviation_percent;  // 100 (computed - planned) / planned; absent when not checked
  std::optional<double> tolerance_percent;  // the tolerance that was applied, when one was
  std::string reason;                       // why not checked or skipped (reason code), else empty
};

// Everything the services keep about one checked plan.
struct PlanOutcome {
  std::string sop_instance_uid;  // SOP Instance UID (0008,0018); names the result files
  std::string patient_id;        // Patient ID (0010,0020)
  std::string plan_label;        // RT Plan Label (300A,0002)
  PlanVerdict verdict = PlanVerdict::not_checked;
  std::string json_text;                 // the machine-readable report, written as <UID>.json
  std::optional<std::string> html_text;  // the printable record, written as <UID>.html when present
  std::vector<BeamOutcome> beams;
  std::string beamdata_sha256;  // hash of the beam-data library used
};

// Turns one complete plan file into an outcome. `file` names it for messages; `bytes` is its whole
// content as read once by the caller. An Error means the file cannot be checked as it stands; the
// caller decides whether it is still being written (retry) or bad (quarantine). Must be safe to call
// from one thread at a time; it is never called concurrently.
using PlanProcessor =
    std::function<Expected<PlanOutcome>(const std::filesystem::path& file, std::span<const std::byte> bytes)>;

}  // namespace countersign::service
