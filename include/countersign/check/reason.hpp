#pragma once

// Why a beam got the status it got: the verdict's reason codes, which only the check module sets.
// The snake_case codes appear in JSON and are documented in the README: changing one is a breaking
// change. Each outcome carries a code and one sentence.

#include <string>
#include <string_view>

namespace countersign::check {

enum class Reason {
  // Verdicts.
  deviation_within_tolerance,
  deviation_within_tolerance_of_point_total,  // a small contributor judged against its point's total
  deviation_exceeds_tolerance,
  // Listed and skipped, never judged.
  setup_beam,   // Treatment Delivery Type is not TREATMENT
  no_meterset,  // no Beam Meterset, or zero MU
  // Not checked.
  unknown_machine,
  unknown_energy,
  unsupported_radiation,  // electrons, protons, ... (or the library has no such beams)
  unsupported_technique,  // e.g. Primary Dosimeter Unit MINUTE
  unsupported_patient_position,
  unsupported_accessory,  // compensator, applicator, bolus with a derived depth, ...
  unknown_accessory,      // a wedge or tray the library does not have
  unsupported_geometry,   // MLCY, point at or behind the source, wedge with an off-axis point, ...
  sad_mismatch,           // the plan's Source-Axis Distance differs from the machine's
  missing_plan_data,      // an input the dose depends on is absent from the plan
  missing_beam_data,      // an optional table the calculation needs is absent (OAR, MLC transmission)
  no_dose_point,
  no_planned_dose,
  planned_dose_not_beam_level,  // Beam Dose Meaning FRACTION_LEVEL: no beam dose to compare with
  point_outside_field,
  point_near_field_edge,
  point_near_segment_edges,  // modulated: too much of the meterset with the point near a segment's edge
  table_extrapolated,
  inconsistent_depth,  // the plan's depth and SPD - SSD disagree beyond the policy limit
  // Verdict honesty (issue 12).
  geometry_inconsistent,  // outside: depth + dose point SSD vs ray, or SSD vs SPD - depth, beyond the limit
  small_beam_deviation,   // outside: a small contributor's own deviation beyond the policy limit
  point_in_buildup,       // not checked: point shallower than dmax + the policy margin
  small_field,            // not checked: equivalent square below the policy minimum or the tables
  ssd_out_of_range,       // not checked: SSD outside the library's ssd_range_cm
  extended_distance,      // not checked: no ssd_range_cm and the SSD far from the PDD table's SSD
  beam_data_inconsistent_here,  // not checked: TMR and PDD forms disagree beyond the policy limit
  study_unusable,             // the CT / structure set could not be used (never a fall-back to water)
  patient_geometry_unusable,  // the ray through the CT: point outside the body or CT, ray leaves the CT, ...
  missing_tissue,             // too much of the field at the point's depth lies outside the body
  plan_geometry_differs_from_ct,  // outside tolerance: the plan's SSD or depth disagrees with the CT
  // Electron beams (issue 19).
  point_beyond_eighty_percent_depth,         // not checked: the point lies deeper than the depth of 80 % dose
  cutout_below_table,       // not checked: the cutout is smaller than the tables' smallest field
  oblique_incidence,        // not checked: the beam meets the surface beyond the policy's angle
  bolus_thickness_unknown,  // not checked: the library has no thickness for the plan's Bolus ID
  // Plan level.
  nothing_to_check,  // no beam of the plan could be judged (all skipped)
};

// The snake_case code used in JSON and text output.
[[nodiscard]] std::string_view reason_code(Reason reason);

// Whether the reason means "listed and skipped".
[[nodiscard]] bool is_skip(Reason reason);

// A reason with its sentence.
struct Finding {
  Reason reason = Reason::missing_plan_data;
  std::string sentence;
};

}  // namespace countersign::check
