#include "pencil_planner.hpp"

#include "planner.hpp"

#include <demo_linac/model.hpp>

#include <cmath>
#include <stdexcept>

namespace make_demo_plans {

std::vector<std::array<double, 2>> corner_block_outline_mm(const BeamSpec& beam) {
  const double x2 = beam.jaws_mm[1];
  const double y2 = beam.jaws_mm[3];
  return {{x2 - 20.0, y2 - 40.0}, {x2 + 5.0, y2 - 40.0}, {x2 + 5.0, y2 + 5.0}, {x2 - 20.0, y2 + 5.0}};
}

bool uses_pencil_beam(const BeamSpec& beam) {
  return beam.delivery_type == "TREATMENT" && (beam.has_mlc || !beam.tray_id.empty());
}

std::filesystem::path demo_library_folder() { return DEMO_BEAMDATA_DIR; }

PencilPlanner::PencilPlanner(const std::filesystem::path& library_folder) {
  auto loaded = countersign::beamdata::load_library(library_folder);
  if (!loaded) throw std::runtime_error("cannot load the demo library: " + loaded.error().message());
  library_ = std::move(*loaded);
  machine_ = library_.machine(demo_linac::machine_name);
  if (machine_ == nullptr)
    throw std::runtime_error("the demo library has no " + std::string(demo_linac::machine_name));
  for (const auto& data : machine_->beams) beams_.push_back({&data, pencil_beam::fit_kernel(data)});
}

const PencilPlanner::FittedBeam& PencilPlanner::fitted(double energy_mv) const {
  for (const auto& beam : beams_) {
    if (std::abs(beam.data->energy_mv - energy_mv) < 0.01) return beam;
  }
  throw std::runtime_error("the demo library has no " + std::to_string(energy_mv) + " MV beam");
}

double PencilPlanner::dose_per_mu_cgy(const BeamSpec& beam, const std::vector<double>& mlc_mm) const {
  const FittedBeam& fit = fitted(beam.energy_mv);
  const auto& data = *fit.data;
  pencil_beam::Opening opening;
  opening.jaws_mm = beam.jaws_mm;
  if (!mlc_mm.empty()) {
    opening.leaf_boundaries_mm = leaf_boundaries_mm();
    opening.leaf_positions_mm = mlc_mm;
    opening.leaf_transmission = data.mlc_transmission.value_or(0.0);
    opening.leaf_end_offset_mm = data.mlc_leaf_end_offset_mm.value_or(0.0);
  }
  pencil_beam::Accessories accessories;
  // This planning system models the leaves as shaping part of the head-scatter source too (Sc
  // halfway, geometrically, between that of the jaws and that of jaws and leaves; an invented share),
  // where the demo library tells the check that the jaws alone set Sc: the main, deliberate, source
  // of their difference for MLC-shaped fields.
  if (!mlc_mm.empty()) {
    accessories.head_scatter_field_cm = aperture_equivalent_square_cm(beam.jaws_mm, mlc_mm);
    accessories.head_scatter_share = 0.5;
  }
  if (!beam.tray_id.empty()) {
    opening.blocks.push_back({corner_block_outline_mm(beam), false, corner_block_transmission});
    const auto* tray = data.tray(beam.tray_id);
    if (tray == nullptr) throw std::runtime_error("the demo library has no tray " + beam.tray_id);
    accessories.tray_factor = tray->factor;
  }
  if (!beam.wedge_id.empty()) {
    const auto* wedge = data.wedge(beam.wedge_id);
    if (wedge == nullptr || !wedge->factor)
      throw std::runtime_error("the demo library has no wedge factor for " + beam.wedge_id);
    accessories.wedge_factor = *wedge->factor;
  }
  const pencil_beam::PointGeometry point{beam.off_axis_mm, 0.0, beam.depth_mm / 10.0,
                                         (beam.ssd_mm + beam.depth_mm) / 10.0};
  return pencil_beam::dose_per_mu_cgy(data, fit.kernel, opening, point, machine_->sad_cm, accessories);
}

}  // namespace make_demo_plans
