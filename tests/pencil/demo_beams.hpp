#pragma once

// The bundled demo library (INVENTED, beamdata/FERN-LINAC-1) and a pencil-beam kernel fitted to
// each of its photon beams, loaded once per test program.

#include <pencil_beam/pencil_beam.hpp>

#include <countersign/beamdata/library.hpp>

#include <string>

namespace countersign::pencil_test {

struct FittedDemoBeam {
  const beamdata::BeamData* data = nullptr;
  const pencil_beam::Kernel* kernel = nullptr;
};

// "6X" or "10X" of FERN-LINAC-1; fails the test program (throws) when the library cannot be read.
[[nodiscard]] FittedDemoBeam demo_beam(const std::string& id);

// Sp(s) TMR(d, s) of a square field from the tables, interpolated as the product's engine does.
[[nodiscard]] double table_sp_tmr(const beamdata::BeamData& beam, double depth_cm, double side_cm);

}  // namespace countersign::pencil_test
