#include "demo_beams.hpp"

#include "support/paths.hpp"

#include <memory>
#include <stdexcept>
#include <vector>

namespace countersign::pencil_test {

namespace {

struct Loaded {
  beamdata::Library library;
  std::vector<std::unique_ptr<pencil_beam::Kernel>> kernels;  // one per beam of the machine
};

const Loaded& loaded() {
  static const Loaded once = [] {
    auto library = beamdata::load_library(test::source_dir() / "beamdata");
    if (!library) throw std::runtime_error("demo library: " + library.error().message());
    Loaded l{std::move(*library), {}};
    for (const auto& beam : l.library.machine("FERN-LINAC-1")->beams)
      l.kernels.push_back(std::make_unique<pencil_beam::Kernel>(pencil_beam::fit_kernel(beam)));
    return l;
  }();
  return once;
}

}  // namespace

FittedDemoBeam demo_beam(const std::string& id) {
  const Loaded& l = loaded();
  const auto& beams = l.library.machine("FERN-LINAC-1")->beams;
  for (std::size_t i = 0; i < beams.size(); ++i) {
    if (beams[i].id == id) return {&beams[i], l.kernels[i].get()};
  }
  throw std::runtime_error("the demo library has no beam " + id);
}

double table_sp_tmr(const beamdata::BeamData& beam, double depth_cm, double side_cm) {
  return beam.sp.at(side_cm).value * beam.tmr.at(depth_cm, side_cm).value;
}

}  // namespace countersign::pencil_test
