#include <countersign/report/check_json.hpp>

#include "patient_json.hpp"

#include <countersign/report/html_report.hpp>
#include <countersign/util/units.hpp>

namespace countersign::report {

using nlohmann::json;

namespace {

template <class T>
json optional_json(const std::optional<T>& value) {
  return value ? json(*value) : json(nullptr);
}

json optional_mm_to_cm(const std::optional<double>& mm) {
  return mm ? json(util::mm_to_cm(*mm)) : json(nullptr);
}

json factor_value(const engine::Factor& f) { return f.value; }

json factor_provenance(const engine::Factor& f) {
  json j{{"value", f.value}, {"basis", std::string(engine::to_code(f.basis))}};
  j["lookup"] = f.lookup ? lookup_to_json(*f.lookup) : json(nullptr);
  return j;
}

json factors_json(const engine::PointDose& d) {
  const engine::DoseFactors& f = d.factors;
  const bool tmr = d.method == engine::Method::tmr;
  return json{
      {"output_cgy_per_mu", f.output_cgy_per_mu},
              {"calibration_depth", factor_value(f.calibration_depth)},
              {"calibration_sc", factor_value(f.calibration_sc)},
              {"calibration_sp", factor_value(f.calibration_sp)},
              {"sc", factor_value(f.sc)},
              {"sp", factor_value(f.sp)},
              {"tmr", tmr ? factor_value(f.tmr) : json(nullptr)},
              {"pdd_percent", tmr ? json(nullptr) : json(f.pdd.value * 100.0)},
              {"mayneord_f", tmr ? json(nullptr) : factor_value(f.mayneord_f)},
              {"oar", factor_value(f.oar)},
              {"wedge", factor_value(f.wedge)},
              {"wedge_profile", factor_value(f.wedge_profile)},
              {"tray", factor_value(f.tray)},
              {"transmission", factor_value(f.transmission)},
              {"inverse_square", factor_value(f.inverse_square)},
      {"applicator", d.method == engine::Method::electron ? factor_value(f.applicator) : json(nullptr)},
      {"cutout", d.method == engine::Method::electron ? factor_value(f.cutout) : json(nullptr)},
              {"dose_per_mu_cgy", d.dose_per_mu_cgy}};
}

json provenance_json(const engine::PointDose& d) {
  const engine::DoseFactors& f = d.factors;
  const bool tmr = d.method == engine::Method::tmr;
  json j{{"calibration_depth", factor_provenance(f.calibration_depth)},
         {"calibration_sc", factor_provenance(f.calibration_sc)},
         {"calibration_sp", factor_provenance(f.calibration_sp)},
         {"sc", factor_provenance(f.sc)},
         {"sp", factor_provenance(f.sp)},
         {"oar", factor_provenance(f.oar)},
         {"wedge", factor_provenance(f.wedge)},
         {"wedge_profile", factor_provenance(f.wedge_profile)},
         {"tray", factor_provenance(f.tray)},
         {"transmission", factor_provenance(f.transmission)},
         {"inverse_square", factor_provenance(f.inverse_square)}};
  if (tmr) {
    j["tmr"] = factor_provenance(f.tmr);
  } else if (d.method == engine::Method::electron) {
    j["pdd"] = factor_provenance(f.pdd);
    j["applicator"] = factor_provenance(f.applicator);
    j["cutout"] = factor_provenance(f.cutout);
  } else {
    j["pdd"] = factor_provenance(f.pdd);
    j["mayneord_f"] = factor_provenance(f.mayneord_f);
  }
  return j;
}

json fields_json(const engine::PointDose& d, const geometry::JawOpening& jaws, double open_area_mm2,
                 bool mlc) {
  return json{{"jaw_x1_cm", util::mm_to_cm(jaws.x1_mm)},
              {"jaw_x2_cm", util::mm_to_cm(jaws.x2_mm)},
              {"jaw_y1_cm", util::mm_to_cm(jaws.y1_mm)},
              {"jaw_y2_cm", util::mm_to_cm(jaws.y2_mm)},
              {"open_area_cm2", util::mm2_to_cm2(open_area_mm2)},
              {"shaped_by_mlc", mlc},
              {"collimator_cm", d.fields.collimator_cm},
              {"isocentre_cm", d.fields.isocentre_cm},
              {"surface_cm", d.fields.surface_cm},
              {"point_cm", d.fields.point_cm},
              {"normalisation_depth_cm", d.fields.normalisation_depth_cm}};
}

// How phantom scatter was obtained for one part, and the equivalent-square dose beside it.
void add_scatter(json& j, const engine::Segment& s) {
  const bool sectors = s.sectors.has_value();
  j["scatter_method"] = std::string(engine::to_code(s.scatter_method));
  j["sectors"] = sectors ? json(s.sectors->sectors) : json(nullptr);
  j["smr"] = sectors ? json(s.sectors->smr) : json(nullptr);
  j["primary"] = sectors ? json(s.primary) : json(nullptr);
  j["scatter_truncated_at_body"] = sectors && s.sectors->rays_ended_at_body > 0;
  j["transmission"] = s.inputs.transmission;
  j["equivalent_square_dose_gy"] = util::cgy_to_gy(s.equivalent_square_dose_cgy);
  j["edge_distance_cm"] = util::mm_to_cm(s.edge_distance_mm);
}

json segment_json(const engine::Segment& s) {
  json j{{"from_control_point", s.from_control_point},
         {"meterset_mu", s.meterset_mu},
         {"gantry_deg", s.angles.gantry_deg},
         {"collimator_deg", s.angles.collimator_deg},
         {"couch_deg", s.angles.couch_deg},
         {"depth_cm", util::mm_to_cm(s.depth_mm)},
         {"spd_cm", util::mm_to_cm(s.point.spd_mm)},
         {"ssd_cm", util::mm_to_cm(s.ssd_mm)},
         {"off_axis_cm", util::mm_to_cm(s.point.off_axis_mm)},
         {"point_in_opening", s.point_in_opening},
         {"point_in_jaws", s.point_in_jaws},
         {"fields", fields_json(s.dose, s.jaws, s.open_area_mm2, s.open_area_mm2 > 0.0)},
         {"factors", factors_json(s.dose)},
         {"dose_gy", util::cgy_to_gy(s.dose.dose_cgy)},
         {"patient", segment_patient_json(s)}};
  add_scatter(j, s);
  return j;
}

// Electron beams: the applicator, the cutout's size and method, the bolus, depths and distances.
json electron_json(const engine::ElectronFacts& e) {
  const engine::CutoutSize& cut = e.cutout;
  const bool rule = cut.method == engine::CutoutMethod::square_root_rule;
  return json{{"applicator_id", e.applicator_id},
              {"applicator_type", e.applicator_type.empty() ? json(nullptr) : json(e.applicator_type)},
              {"applicator_field_cm", e.applicator_field_cm},
              {"effective_ssd_cm", e.effective_ssd_cm},
              {"standard_ssd_cm", e.standard_ssd_cm},
              {"cutout_method", std::string(engine::to_code(cut.method))},
              {"cutout_equivalent_square_cm", cut.equivalent_square_cm},
              {"cutout_area_cm2", cut.area_cm2},
              {"cutout_perimeter_cm", cut.perimeter_cm},
              {"cutout_side_x_cm", rule ? json(cut.side_x_cm) : json(nullptr)},
              {"cutout_side_y_cm", rule ? json(cut.side_y_cm) : json(nullptr)},
              {"smallest_table_cutout_cm", e.smallest_table_cutout_cm},
              {"bolus_id", e.bolus_id.empty() ? json(nullptr) : json(e.bolus_id)},
              {"bolus_thickness_cm", optional_json(e.bolus_thickness_cm)},
              {"skin_depth_cm", e.skin_depth_cm},
              {"depth_cm", e.depth_cm},
              {"entrance_ssd_cm", e.entrance_ssd_cm},
              {"air_gap_cm", e.air_gap_cm},
              {"r80_cm", optional_json(e.r80_cm)},
              {"obliquity_deg", optional_json(e.obliquity_deg)}};
}

void add_calculation(json& j, const engine::BeamDose& c, const check::CalculationWords& words) {
  j["machine"] = c.machine != nullptr ? json(c.machine->name) : json(nullptr);
  if (c.electron_data != nullptr) {
    j["beam_data_id"] = c.electron_data->id;
    j["energy_mv"] = c.electron_data->energy_mev;  // MeV for electrons, as the manifest's energy_mv
  } else {
  j["beam_data_id"] = c.beam_data != nullptr ? json(c.beam_data->id) : json(nullptr);
  j["energy_mv"] = c.beam_data != nullptr ? json(c.beam_data->energy_mv) : json(nullptr);
  }
  j["electron"] = c.electron ? electron_json(*c.electron) : json(nullptr);
  j["dose_point"] = json{{"source", std::string(engine::to_code(c.dose_point.source))},
                         {"dose_reference_number", optional_json(c.dose_point.dose_reference_number)},
                         {"x_mm", c.dose_point.point_mm[0]},
                         {"y_mm", c.dose_point.point_mm[1]},
                         {"z_mm", c.dose_point.point_mm[2]}};
  if (!c.dose_computed) return;
  j["method"] = std::string(engine::to_code(c.method));
  j["method_reason"] = words.method_reason;
  j["patient_position"] =
      c.patient_position ? json(std::string(geometry::to_code(*c.patient_position))) : json(nullptr);
  j["gantry_deg"] = c.angles.gantry_deg;
  j["collimator_deg"] = c.angles.collimator_deg;
  j["couch_deg"] = c.angles.couch_deg;
  j["depth_cm"] = util::mm_to_cm(c.depth.depth_mm);
  j["depth_source"] = std::string(engine::to_code(c.depth.source));
  j["depth_kind"] = std::string(engine::to_code(c.depth.kind));
  j["depth_description"] = words.depth_description;
  j["plan_depth_cm"] = optional_mm_to_cm(c.depth.plan_depth_mm);
  j["plan_equivalent_depth_cm"] = optional_mm_to_cm(c.depth.plan_equivalent_depth_mm);
  j["spd_minus_ssd_cm"] = optional_mm_to_cm(c.depth.spd_minus_ssd_mm);
  j["spd_cm"] = util::mm_to_cm(c.point.spd_mm);
  j["ssd_cm"] = optional_mm_to_cm(c.ssd_mm);
  j["sad_cm"] = util::mm_to_cm(c.sad_mm);
  j["off_axis_cm"] = util::mm_to_cm(c.point.off_axis_mm);
  j["point_in_field"] = c.point_in_field;
  j["edge_distance_cm"] = util::mm_to_cm(c.edge_distance_mm);
  j["modulated"] = c.features.modulated;
  j["wedge_profile"] = std::string(engine::to_code(c.features.wedge_profile));
  j["segment_count"] = c.segments.size();
  add_scatter(j, c.segments.front());  // static beam: its one part; modulated: see segments
  j["scatter_truncated_at_body"] = c.scatter_truncated_at_body();  // in any part
  j["equivalent_square_dose_gy"] = c.equivalent_square_dose_gy;
  j["sector_vs_equivalent_square_percent"] = c.sector_vs_equivalent_square_percent;
  j["edge_meterset_share"] = c.edge_meterset_share;
  j["fields"] = fields_json(c.dose, c.aperture.jaws(), c.aperture.area_mm2(), c.aperture.shaped_by_mlc());
  if (c.features.modulated) {
    j["factors"] = nullptr;
    j["provenance"] = nullptr;
    json segments = json::array();
    for (const engine::Segment& s : c.segments) segments.push_back(segment_json(s));
    j["segments"] = std::move(segments);
  } else {
    j["factors"] = factors_json(c.dose);
    j["provenance"] = provenance_json(c.dose);
    j["segments"] = json::array();
  }
  j["approximations"] = words.approximations;
  j["homogeneous_dose_gy"] = c.homogeneous_dose_gy ? json(*c.homogeneous_dose_gy) : json(nullptr);
}

}  // namespace

json lookup_to_json(const beamdata::Lookup& lookup) {
  json axes = json::array();
  for (const beamdata::AxisBracket& a : lookup.axes) {
    axes.push_back(json{{"axis", a.axis},
                        {"query", a.query},
                        {"lower_index", a.lower_index},
                        {"upper_index", a.upper_index},
                        {"lower_node", a.lower_node},
                        {"upper_node", a.upper_node},
                        {"upper_weight", a.upper_weight},
                        {"extrapolated", a.extrapolated}});
  }
  return json{{"table_file", lookup.table_file},
              {"quantity", lookup.quantity},
              {"value", lookup.value},
              {"extrapolated", lookup.extrapolated()},
              {"axes", std::move(axes)}};
}

json beam_check_to_json(const check::BeamCheck& b) {
  json j{{"fraction_group_number", b.fraction_group_number},
         {"beam_number", b.beam_number},
         {"beam_name", b.beam_name},
         {"status", std::string(check::to_code(b.status))},
         {"reason", std::string(check::reason_code(b.reason.reason))},
         {"explanation", b.reason.sentence},
         {"planned_dose_gy", optional_json(b.planned_dose_gy)},
         {"computed_dose_gy", optional_json(b.computed_dose_gy)},
         {"deviation_percent", optional_json(b.deviation_percent)},
         {"calc_uncertainty_percent", optional_json(b.calc_uncertainty_percent)},
         {"tolerance_percent", optional_json(b.tolerance_percent)},
         {"meterset_mu", optional_json(b.meterset_mu)},
         {"independent_mu", optional_json(b.independent_mu)},
         {"category", b.category ? json(std::string(check::to_code(*b.category))) : json(nullptr)},
         {"medium", std::string(check::to_code(b.medium))},
         {"medium_description", b.words.medium.empty() ? json(nullptr) : json(b.words.medium)},
         {"point_total_planned_dose_gy", optional_json(b.point_total_planned_dose_gy)}};
  // Keys of the calculation are always present (null when there was none).
  for (const char* key : {"machine",
                          "beam_data_id",
                          "energy_mv",
                          "dose_point",
                          "method",
                          "method_reason",
                          "patient_position",
                          "gantry_deg",
                          "collimator_deg",
                          "couch_deg",
                          "depth_cm",
                          "depth_source",
                          "depth_kind",
                          "depth_description",
                          "plan_depth_cm",
                          "plan_equivalent_depth_cm",
                          "spd_minus_ssd_cm",
                          "spd_cm",
                          "ssd_cm",
                          "sad_cm",
                          "off_axis_cm",
                          "point_in_field",
                          "edge_distance_cm",
                          "modulated",
                          "wedge_profile",
                          "segment_count",
                          "fields",
                          "factors",
                          "provenance",
                          "segments",
                          "approximations",
                          "scatter_method",
                          "sectors",
                          "smr",
                          "primary",
                          "scatter_truncated_at_body",
                          "transmission",
                          "equivalent_square_dose_gy",
                          "sector_vs_equivalent_square_percent",
                          "edge_meterset_share",
                          "homogeneous_dose_gy"}) {
    j[key] = nullptr;
  }
  if (b.calculation) add_calculation(j, *b.calculation, b.words);
  return j;
}

json check_to_json(const check::PlanCheck& c) {
  json beams = json::array();
  for (const check::BeamCheck& b : c.beams) {
    json beam = beam_check_to_json(b);
    beam["patient"] = beam_patient_json(b, c.options.study);
    beams.push_back(std::move(beam));
  }
  json references = json::array();
  for (const check::DoseReferenceCheck& r : c.dose_references) {
    json contributions = json::array();
    for (const check::Contribution& p : r.contributions) {
      contributions.push_back(json{
          {"beam_number", p.beam_number},
          {"coefficient", p.coefficient},
          {"planned_dose_gy", p.planned_dose_gy},
          {"computed_dose_gy", optional_json(p.computed_dose_gy)},
          {"reason", p.problem ? json(std::string(check::reason_code(p.problem->reason))) : json(nullptr)},
          {"explanation", p.problem ? json(p.problem->sentence) : json(nullptr)}});
    }
    references.push_back(json{{"fraction_group_number", r.fraction_group_number},
                              {"number", r.number},
                              {"description", r.description},
                              {"point_mm", optional_json(r.point_mm)},
                              {"planned_dose_gy", r.planned_dose_gy},
                              {"computed_dose_gy", optional_json(r.computed_dose_gy)},
                              {"deviation_percent", optional_json(r.deviation_percent)},
                              {"note", r.note},
                              {"contributions", std::move(contributions)}});
  }
  const check::TolerancePolicy& p = c.options.policy;
  const json policy{
      {"source", p.source},
      {"simple_percent", p.simple_percent},
      {"complex_percent", p.complex_percent},
      {"modulated_percent", p.modulated_percent},
      {"simple_heterogeneous_percent", p.simple_heterogeneous_percent},
      {"complex_heterogeneous_percent", p.complex_heterogeneous_percent},
      {"modulated_heterogeneous_percent", p.modulated_heterogeneous_percent},
      {"min_edge_distance_cm", p.min_edge_distance_cm},
      {"small_share_fraction", p.small_share_fraction},
      {"patient_max_ssd_difference_mm", p.patient_max_ssd_difference_mm},
      {"patient_max_depth_difference_mm", p.patient_max_depth_difference_mm},
      {"patient_max_radiological_depth_difference_percent",
       p.patient_max_radiological_depth_difference_percent},
      {"patient_heterogeneous_density_difference", p.patient_heterogeneous_density_difference},
      {"patient_heterogeneous_min_path_mm", p.patient_heterogeneous_min_path_mm},
      {"patient_max_missing_tissue_fraction", p.patient_max_missing_tissue_fraction},
      {"patient_max_missing_tissue_fraction_sectors", p.patient_max_missing_tissue_fraction_sectors},
      {"patient_plan_equivalent_depth_switch_percent", p.patient_plan_equivalent_depth_switch_percent}};
  std::string method = "by_setup_technique";
  if (c.options.engine.method == engine::MethodChoice::tmr) method = "tmr";
  if (c.options.engine.method == engine::MethodChoice::pdd) method = "pdd";
  return json{{"source_file", c.source_file},
              {"sop_instance_uid", c.sop_instance_uid},
              {"patient_id", c.patient_id},
              {"patient_name", c.patient_name},
              {"plan_label", c.plan_label},
              {"approval_status", c.approval_status},
              {"warnings", c.warnings},
              {"status", std::string(check::to_code(c.status))},
              {"reason", std::string(check::reason_code(c.reason.reason))},
              {"explanation", c.reason.sentence},
              {"exit_code", static_cast<int>(c.exit_code())},
              {"beams", std::move(beams)},
              {"dose_references", std::move(references)},
              {"beamdata_root", c.beamdata_root},
              {"beamdata_sha256", c.beamdata_sha256},
              {"method_choice", method},
              {"depth_choice", std::string(engine::to_code(c.options.engine.depth))},
              {"heterogeneity_choice", std::string(engine::to_code(c.options.engine.heterogeneity))},
              {"patient_study", study_json(c.options.study)},
              {"tolerance_policy", policy}};
}

json check_run_to_json(const std::vector<check::PlanCheck>& checks, const std::vector<std::string>& errors,
                       int exit_code, const std::vector<std::string>& skipped_files) {
  json plans = json::array();
  for (const check::PlanCheck& c : checks) plans.push_back(check_to_json(c));
  return json{{"plans", std::move(plans)},
              {"errors", errors},
              {"skipped_files", skipped_files},
              {"exit_code", exit_code},
              {"caution", std::string(caution_text())}};
}

}  // namespace countersign::report
