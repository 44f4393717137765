#pragma once

// The stand-in "planning system" of the INVENTED demo: computes each beam's dose per MU at its dose
// point, then the MU for the planned dose. MLC-shaped, blocked and modulated beams go through the
// pencil-beam convolution fitted to the demo tables (pencil_planner.hpp, tools/pencil_beam/); open
// beams through the invented FERN-LINAC-1 model (tools/demo_linac/model.hpp) by the hand-calculation
// forms (AAPM TG-71, 2014, the isocentric TMR form and the SSD/PDD form):
//   isocentric: D/MU = output Sc(s_c) Sp(s_d) TMR(d, s_d) WF TF OAR(d, r) ((SSDcal + dmax)/SPD)^2
//   fixed SSD:  D/MU = output Sc(s_c) Sp(s_d0) PDD(d, s_s, SSD)/100 WF TF OAR ((SSDcal + dmax)/(SSD +
//   dmax))^2
// with equivalent squares by Sterling's 4A/P; an MLC aperture's area and perimeter are those of
// the union of its open leaf pairs within the jaws.

#include "plan_spec.hpp"

#include <vector>

namespace make_demo_plans {

// FERN-LINAC-1's invented MLC: 72 leaf pairs of 5 mm, from -180 to 180 mm (73 boundaries).
[[nodiscard]] std::vector<double> leaf_boundaries_mm();

// Equivalent square (cm) of the aperture at the isocentre plane: jaws, and the MLC if given.
[[nodiscard]] double aperture_equivalent_square_cm(const std::array<double, 4>& jaws_mm,
                                                   const std::vector<double>& mlc_mm);

// Fills meterset_mu, beam_dose_gy, cumulative weights and dose fractions of every beam.
void plan_doses(PlanSpec& plan);

}  // namespace make_demo_plans
