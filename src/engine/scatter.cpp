// Stage 5, scatter: the field sizes the scatter factors (Sc, Sp) and the TMR/PDD column are looked
// up with. Today equivalent squares; sector integration would replace open_field_cm here.

#include "stages.hpp"

#include <countersign/beamdata/conversions.hpp>
#include <countersign/util/units.hpp>

namespace countersign::engine::stages {

ScatterInputs scatter_inputs(const geometry::Aperture& aperture) {
  const geometry::JawOpening& jaws = aperture.jaws();
  ScatterInputs scatter;
  // Sterling's rule for the jaw rectangle (head scatter follows the collimator opening).
  scatter.collimator_field_cm =
      beamdata::equivalent_square_cm(util::mm_to_cm(jaws.width_mm()), util::mm_to_cm(jaws.length_mm()));
  // 4A/P of the opening, jaws intersected with the MLC (phantom scatter follows the irradiated field).
  scatter.open_field_cm = util::mm_to_cm(aperture.equivalent_square_mm());
  return scatter;
}

}  // namespace countersign::engine::stages
