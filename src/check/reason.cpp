#include <countersign/check/reason.hpp>

namespace countersign::check {

std::string_view reason_code(Reason reason) {
  switch (reason) {
    case Reason::deviation_within_tolerance:
      return "deviation_within_tolerance";
    case Reason::deviation_within_tolerance_of_point_total:
      return "deviation_within_tolerance_of_point_total";
    case Reason::deviation_exceeds_tolerance:
      return "deviation_exceeds_tolerance";
    case Reason::setup_beam:
      return "setup_beam";
    case Reason::no_meterset:
      return "no_meterset";
    case Reason::unknown_machine:
      return "unknown_machine";
    case Reason::unknown_energy:
      return "unknown_energy";
    case Reason::unsupported_radiation:
      return "unsupported_radiation";
    case Reason::unsupported_technique:
      return "unsupported_technique";
    case Reason::unsupported_patient_position:
      return "unsupported_patient_position";
    case Reason::unsupported_accessory:
      return "unsupported_accessory";
    case Reason::unknown_accessory:
      return "unknown_accessory";
    case Reason::unsupported_geometry:
      return "unsupported_geometry";
    case Reason::sad_mismatch:
      return "sad_mismatch";
    case Reason::missing_plan_data:
      return "missing_plan_data";
    case Reason::missing_beam_data:
      return "missing_beam_data";
    case Reason::no_dose_point:
      return "no_dose_point";
    case Reason::no_planned_dose:
      return "no_planned_dose";
    case Reason::planned_dose_not_beam_level:
      return "planned_dose_not_beam_level";
    case Reason::point_outside_field:
      return "point_outside_field";
    case Reason::point_near_field_edge:
      return "point_near_field_edge";
    case Reason::point_near_segment_edges:
      return "point_near_segment_edges";
    case Reason::table_extrapolated:
      return "table_extrapolated";
    case Reason::inconsistent_depth:
      return "inconsistent_depth";
    case Reason::geometry_inconsistent:
      return "geometry_inconsistent";
    case Reason::small_beam_deviation:
      return "small_beam_deviation";
    case Reason::point_in_buildup:
      return "point_in_buildup";
    case Reason::small_field:
      return "small_field";
    case Reason::ssd_out_of_range:
      return "ssd_out_of_range";
    case Reason::extended_distance:
      return "extended_distance";
    case Reason::beam_data_inconsistent_here:
      return "beam_data_inconsistent_here";
    case Reason::study_unusable:
      return "study_unusable";
    case Reason::patient_geometry_unusable:
      return "patient_geometry_unusable";
    case Reason::missing_tissue:
      return "missing_tissue";
    case Reason::plan_geometry_differs_from_ct:
      return "plan_geometry_differs_from_ct";
    case Reason::point_beyond_eighty_percent_depth:
      return "point_beyond_eighty_percent_depth";
    case Reason::cutout_below_table:
      return "cutout_below_table";
    case Reason::oblique_incidence:
      return "oblique_incidence";
    case Reason::bolus_thickness_unknown:
      return "bolus_thickness_unknown";
    case Reason::nothing_to_check:
      return "nothing_to_check";
  }
  return "unknown_reason";
}

bool is_skip(Reason reason) { return reason == Reason::setup_beam || reason == Reason::no_meterset; }

}  // namespace countersign::check
