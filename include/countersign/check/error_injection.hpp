#pragma once

// Known errors put into a plan in memory, to show that the check catches them (AAPM TG-114 (2011)
// advises testing a verification program with deliberate errors). Each injection changes one beam
// of one fraction group of a copy of the plan, the way a transcription or export slip would.

#include <countersign/beamdata/library.hpp>
#include <countersign/plan/plan.hpp>

#include <array>
#include <optional>
#include <string>
#include <string_view>

namespace countersign::check {

enum class InjectedError {
  meterset_plus_5_percent,    // Beam Meterset (300A,0086) x 1.05
  meterset_minus_5_percent,   // Beam Meterset (300A,0086) x 0.95
  wrong_energy,               // Nominal Beam Energy (300A,0114): another energy of the machine in the library
  ssd_plus_20_mm,             // Source to Surface Distance (300A,0130) + 20 mm at every control point
  wedge_removed,              // Wedge Sequence (300A,00D1) and Wedge Position Sequence (300A,0116) removed
  jaws_swapped,               // the two X jaw positions (300A,011C) exchanged at every control point
  beam_dose_plus_10_percent,  // the fraction group's Beam Dose (300A,0084) x 1.10
};

inline constexpr std::array<InjectedError, 7> all_injected_errors = {
    InjectedError::meterset_plus_5_percent,
    InjectedError::meterset_minus_5_percent,
    InjectedError::wrong_energy,
    InjectedError::ssd_plus_20_mm,
    InjectedError::wedge_removed,
    InjectedError::jaws_swapped,
    InjectedError::beam_dose_plus_10_percent};

// snake_case code, as printed in the self-test table.
[[nodiscard]] std::string_view to_code(InjectedError error);

// The relative change of the computed-to-planned dose ratio the error causes by definition (dose is
// proportional to MU; the ratio is inversely proportional to the planned dose), or nullopt when its
// size depends on the beam data and the geometry.
[[nodiscard]] std::optional<double> known_ratio_change(InjectedError error);

struct Injection {
  plan::Plan plan;          // the copy with the error
  std::string description;  // what was changed, e.g. "Beam Meterset 177.6 -> 186.5 MU"
};

// Applies `error` to beam `beam_number` referenced by fraction group `fraction_group_number` of a
// copy of `plan`. nullopt when the error does not apply to that beam (no wedge to remove, no SSD,
// no X jaws, no meterset or beam dose to change).
[[nodiscard]] std::optional<Injection> inject_error(const plan::Plan& plan, int fraction_group_number,
                                                    int beam_number, InjectedError error,
                                                    const beamdata::Library& library);

}  // namespace countersign::check
