#pragma once

// The demo planning system's model for MLC-shaped, blocked and modulated beams: the pencil-beam
// convolution of tools/pencil_beam/, its kernel fitted to the bundled demo tables
// (beamdata/FERN-LINAC-1). Open beams keep the hand-calculation forms of planner.cpp. INVENTED demo
// only; not for clinical use.

#include "plan_spec.hpp"

#include <pencil_beam/pencil_beam.hpp>

#include <countersign/beamdata/library.hpp>

#include <array>
#include <filesystem>
#include <vector>

namespace make_demo_plans {

// The one shielding block a beam with a tray carries (demo plans): a corner of the field at the
// isocentre plane (mm), outside the dose point's neighbourhood, and its Block Transmission.
[[nodiscard]] std::vector<std::array<double, 2>> corner_block_outline_mm(const BeamSpec& beam);
inline constexpr double corner_block_transmission = 0.05;

// Whether the demo planning system computes this beam with the pencil-beam model.
[[nodiscard]] bool uses_pencil_beam(const BeamSpec& beam);

// The demo library and a kernel fitted to each of its photon beams.
class PencilPlanner {
 public:
  // Loads the library (throws std::runtime_error naming the folder when it cannot be read).
  explicit PencilPlanner(const std::filesystem::path& library_folder);
  PencilPlanner(const PencilPlanner&) = delete;  // holds pointers into its own library
  PencilPlanner& operator=(const PencilPlanner&) = delete;
  // Dose per MU (cGy/MU) at the beam's dose point through one aperture (leaf positions, bank A then
  // bank B; empty without MLC).
  [[nodiscard]] double dose_per_mu_cgy(const BeamSpec& beam, const std::vector<double>& mlc_mm) const;

 private:
  struct FittedBeam {
    const countersign::beamdata::BeamData* data = nullptr;
    pencil_beam::Kernel kernel;
  };
  [[nodiscard]] const FittedBeam& fitted(double energy_mv) const;
  countersign::beamdata::Library library_;
  const countersign::beamdata::Machine* machine_ = nullptr;
  std::vector<FittedBeam> beams_;
};

// The bundled demo library's folder, as the build placed it (beamdata/ of the source tree).
[[nodiscard]] std::filesystem::path demo_library_folder();

}  // namespace make_demo_plans
