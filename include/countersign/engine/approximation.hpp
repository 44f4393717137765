#pragma once

// The approximations a calculation made, as facts with their numbers. The check module words them
// for reports (check/calculation_words.hpp); the engine writes no sentences.

#include <cstddef>

namespace countersign::engine {

enum class ApproximationKind {
  bolus_in_plan_depth,          // the plan's depth is taken to include the bolus
  derived_depth,                // the depth was derived (see DepthUsed::source for how)
  ssd_from_spd_minus_depth,     // PDD form without an SSD at control point 0: SSD = SPD - depth
  modulated_sum,                // part_count, mlc_transmission: a sum over parts, equivalent squares
  arc_steps,                    // max_step_deg: arcs split into gantry steps
  mlc_shape_equivalent_square,  // an MLC-shaped static field through 4A/P, not sector integration
  mlc_envelope_as_collimator,   // no jaws for one axis: the MLC envelope stands in for them (Sc)
  blocks_as_outlines,           // blocks modelled by their outlines, sharp edges, uniform transmission
  mayneord_f_factor,            // ssd_cm, table_ssd_cm: PDD at another SSD by the Mayneord F factor
  sector_integration,           // part_count = sectors, max_step_deg = widest sector, beyond_largest_field
  scatter_at_body_outline,      // part_count = parts whose sector rays ended at the body outline (with a CT)
  // Electron beams (BeamDose::electron holds the numbers).
  electron_cutout_size,  // the cutout through 4A/P or the square-root rule, scaled to the tables' plane
  electron_pdd_at_standard_ssd,  // ssd_cm, table_ssd_cm: the PDD of the standard SSD used at another SSD
  electron_bolus_added,          // the library's bolus thickness added to the depth, water-equivalent
  electron_normal_incidence,     // no CT: the surface taken perpendicular to the beam (obliquity unknown)
};

struct Approximation {
  ApproximationKind kind = ApproximationKind::derived_depth;
  std::size_t part_count = 0;         // modulated_sum
  double mlc_transmission = 0.0;      // modulated_sum
  double max_step_deg = 0.0;          // arc_steps
  double ssd_cm = 0.0;                // mayneord_f_factor: the SSD of the calculation
  double table_ssd_cm = 0.0;          // mayneord_f_factor: the SSD of the PDD table
  bool beyond_largest_field = false;  // sector_integration: a ray ran past the largest tabulated field
};

}  // namespace countersign::engine
