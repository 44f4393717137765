#pragma once

// One line per table quantity saying what its axes are, written into the comments of the tables
// that `beamdata new` and `beamdata import` write.

#include <string>

namespace countersign::beamdata::detail {

[[nodiscard]] inline std::string table_axes_note(const std::string& quantity) {
  if (quantity == "pdd")
    return "percent depth dose at the beam's pdd_ssd_cm; columns: square field side at the surface (cm)";
  if (quantity == "tmr") return "tissue-maximum ratio; columns: square field side at depth (cm)";
  if (quantity == "oar")
    return "in-field off-axis ratio; columns: off-axis distance in the isocentre plane (cm)";
  if (quantity == "sc") return "collimator scatter factor vs collimator field side at the isocentre (cm)";
  if (quantity == "sp") return "phantom scatter factor vs field side in the phantom (cm)";
  if (quantity == "wedge_factor")
    return "wedge factor; columns: equivalent square of the irradiated field at the isocentre plane (cm)";
  if (quantity == "wedge_oar")
    return "wedged off-axis ratio; columns: signed distance along the wedge gradient at the isocentre plane "
           "(cm), "
           "thin end negative";
  if (quantity == "relative_electron_density") return "relative electron density vs CT number (HU)";
  return quantity;
}

}  // namespace countersign::beamdata::detail
