#pragma once

// Known errors put into a plan in memory, to show that the check catches them (AAPM TG-114 (2011)
// advises testing a verification program with deliberate errors). Each injection changes one beam
// of one fraction group of a copy of the plan by a stated size, the way a copying or export
// slip would. Whether the change must be flagged is decided by the self-test's rules
// (self_test.hpp), never by the check's verdict.

#include <countersign/beamdata/library.hpp>
#include <countersign/plan/plan.hpp>

#include <array>
#include <optional>
#include <string>
#include <string_view>

namespace countersign::check {

enum class ErrorKind {
  meterset,          // Beam Meterset (300A,0086) x (1 + size/100)
  beam_dose,         // Beam Dose (300A,0084) x (1 + size/100)
  ssd,               // Source to Surface Distance (300A,0130) + size mm at every control point
  depth,             // Beam Dose Point Depth (300A,0088) + size mm (the SSDs kept)
  energy,            // Nominal Beam Energy (300A,0114): the library's nearest other energy (size unused)
  wedge,             // the wedge removed, or the library's first wedge added to an open beam
  tray,              // the block tray removed, or the library's first tray added
  jaw,               // the X2 jaw (300A,011C) opened by size mm at every control point
  point_position,    // the dose point moved size mm along the central axis, away from the source
  patient_position,  // Patient Position (0018,5100) HFS -> HFP (size unused)
};
inline constexpr std::array<ErrorKind, 10> all_error_kinds = {
    ErrorKind::meterset,       ErrorKind::beam_dose,       ErrorKind::ssd,  ErrorKind::depth,
    ErrorKind::energy,         ErrorKind::wedge,           ErrorKind::tray, ErrorKind::jaw,
    ErrorKind::point_position, ErrorKind::patient_position};

// snake_case code, as printed.
[[nodiscard]] std::string_view to_code(ErrorKind kind);
// The unit of the kind's size: "%", "mm" or "" (a discrete change).
[[nodiscard]] std::string_view size_unit(ErrorKind kind);

struct InjectedError {
  ErrorKind kind = ErrorKind::meterset;
  double size = 0.0;  // percent or mm (size_unit); 0 for discrete changes
};

struct Injection {
  plan::Plan plan;          // the copy with the error
  std::string description;  // what was changed, e.g. "Beam Meterset 177.6 -> 186.5 MU"
  // For accessory and energy changes: the library item now in (or no longer in) the beam.
  const beamdata::WedgeData* wedge_added = nullptr;
  const beamdata::WedgeData* wedge_removed = nullptr;
  const beamdata::TrayData* tray_added = nullptr;
  const beamdata::TrayData* tray_removed = nullptr;
  const beamdata::BeamData* energy_to = nullptr;  // nullptr: an energy the library lacks
};

// Applies `error` to beam `beam_number` referenced by fraction group `fraction_group_number` of a
// copy of `plan`. nullopt when the error does not apply to that beam (no SSD, no depth, no X jaw,
// no meterset or beam dose, a patient position other than HFS, no wedge or tray in the library).
[[nodiscard]] std::optional<Injection> inject_error(const plan::Plan& plan, int fraction_group_number,
                                                    int beam_number, const InjectedError& error,
                                                    const beamdata::Library& library);

}  // namespace countersign::check
