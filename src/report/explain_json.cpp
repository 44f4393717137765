#include <countersign/report/explain_report.hpp>

#include <countersign/geometry/patient_position.hpp>

#include <countersign/report/factor_rows.hpp>
#include <countersign/report/html_report.hpp>
#include <countersign/report/scatter_comparison.hpp>
#include <countersign/util/units.hpp>
#include "patient_json.hpp"

namespace countersign::report {

namespace {

using nlohmann::json;

template <class T>
json optional_json(const std::optional<T>& value) {
  return value ? json(*value) : json(nullptr);
}

json point_json(const plan::PointMm& p) { return json::array({p[0], p[1], p[2]}); }

json lookup_json(const beamdata::Lookup& lookup) {
  json axes = json::array();
  for (const beamdata::AxisBracket& a : lookup.axes) {
    axes.push_back({{"axis", a.axis},
                    {"query", a.query},
                    {"lower_index", a.lower_index},
                    {"upper_index", a.upper_index},
                    {"lower_node", a.lower_node},
                    {"upper_node", a.upper_node},
                    {"lower_weight", 1.0 - a.upper_weight},
                    {"upper_weight", a.upper_weight},
                    {"extrapolated", a.extrapolated}});
  }
  return axes;
}

json factors_json(const engine::PointDose& dose) {
  json out = json::array();
  for (const FactorRow& row : factor_rows(dose)) {
    const engine::Factor& f = *row.factor;
    out.push_back({{"key", row.key},
                   {"name", row.name},
                   {"role", row.role},
                   {"value", f.value},
                   {"basis", engine::to_code(f.basis)},
                   {"table_file", f.lookup ? json(f.lookup->table_file) : json(nullptr)},
                   {"quantity", f.lookup ? json(f.lookup->quantity) : json(nullptr)},
                   {"extrapolated", f.extrapolated()},
                   {"axes", f.lookup ? lookup_json(*f.lookup) : json::array()}});
  }
  return out;
}

json fields_json(const engine::FieldSizes& s) {
  return {{"collimator_cm", s.collimator_cm},
          {"isocentre_cm", s.isocentre_cm},
          {"surface_cm", s.surface_cm},
          {"point_cm", s.point_cm},
          {"normalisation_depth_cm", s.normalisation_depth_cm}};
}

json formalism_json(const FormalismDose& f) {
  return {{"method", engine::to_code(f.method)},
          {"dose_gy", util::cgy_to_gy(f.dose_cgy)},
          {"first_part_dose_per_mu_cgy", f.first_part.dose_per_mu_cgy},
          {"first_part_factors", factors_json(f.first_part)}};
}

json geometry_json(const engine::BeamDose& c, const check::CalculationWords& words) {
  json g;
  g["patient_position"] = c.patient_position ? json(geometry::to_code(*c.patient_position)) : json(nullptr);
  if (c.patient_position) {
    const Eigen::Matrix3d m = geometry::patient_to_table_top(*c.patient_position);
    g["patient_to_table_top"] =
        json::array({json::array({m(0, 0), m(0, 1), m(0, 2)}), json::array({m(1, 0), m(1, 1), m(1, 2)}),
                     json::array({m(2, 0), m(2, 1), m(2, 2)})});
  } else {
    g["patient_to_table_top"] = nullptr;
  }
  g["gantry_deg"] = c.angles.gantry_deg;
  g["collimator_deg"] = c.angles.collimator_deg;
  g["couch_deg"] = c.angles.couch_deg;
  g["isocenter_mm"] = point_json(c.isocenter_mm);
  g["sad_mm"] = c.sad_mm;
  g["dose_point_mm"] = point_json(c.dose_point.point_mm);
  g["dose_point_source"] = engine::to_code(c.dose_point.source);
  g["dose_reference_number"] = optional_json(c.dose_point.dose_reference_number);
  const auto& p = c.point.collimator_mm;
  g["point_in_collimator_mm"] = json::array({p.x(), p.y(), p.z()});
  g["spd_mm"] = c.point.spd_mm;
  g["ray_length_mm"] = c.point.ray_length_mm;
  g["ssd_mm"] = optional_json(c.ssd_mm);
  g["depth_mm"] = c.depth.depth_mm;
  g["depth_kind"] = engine::to_code(c.depth.kind);
  g["depth_source"] = engine::to_code(c.depth.source);
  g["depth_description"] = words.depth_description;
  g["plan_depth_mm"] = optional_json(c.depth.plan_depth_mm);
  g["plan_equivalent_depth_mm"] = optional_json(c.depth.plan_equivalent_depth_mm);
  g["spd_minus_ssd_mm"] = optional_json(c.depth.spd_minus_ssd_mm);
  g["iso_plane_x_mm"] = c.point.iso_plane_x_mm;
  g["iso_plane_y_mm"] = c.point.iso_plane_y_mm;
  g["off_axis_mm"] = c.point.off_axis_mm;
  g["point_in_field"] = c.point_in_field;
  g["edge_distance_mm"] = c.edge_distance_mm;
  const auto& j = c.aperture.jaws();
  g["jaws"] = {{"x1_mm", j.x1_mm},
               {"x2_mm", j.x2_mm},
               {"y1_mm", j.y1_mm},
               {"y2_mm", j.y2_mm},
               {"x_from_mlc_envelope", j.x_source == geometry::JawSource::mlc_envelope},
               {"y_from_mlc_envelope", j.y_source == geometry::JawSource::mlc_envelope}};
  g["aperture_area_cm2"] = util::mm2_to_cm2(c.aperture.area_mm2());
  g["aperture_perimeter_cm"] = util::mm_to_cm(c.aperture.perimeter_mm());
  g["shaped_by_mlc"] = c.aperture.shaped_by_mlc();
  g["field_sizes"] = c.dose_computed ? fields_json(c.dose.fields) : json(nullptr);
  return g;
}

json beam_data_json(const check::PlanCheck& check, const engine::BeamDose& c) {
  json b = {{"library", check.beamdata_root}, {"sha256", check.beamdata_sha256}};
  b["machine"] = c.machine != nullptr ? json(c.machine->name) : json(nullptr);
  b["manifest"] = c.machine != nullptr ? json(c.machine->manifest.string()) : json(nullptr);
  if (c.beam_data != nullptr) {
    const beamdata::BeamData& d = *c.beam_data;
    b["beam_id"] = d.id;
    b["radiation"] = d.radiation;
    b["energy_mv"] = d.energy_mv;
    b["dmax_cm"] = d.dmax_cm;
    b["pdd_ssd_cm"] = d.pdd_ssd_cm;
    b["calibration"] = {{"output_cgy_per_mu", d.calibration.output_cgy_per_mu},
                        {"field_cm", d.calibration.field_cm},
                        {"ssd_cm", d.calibration.ssd_cm},
                        {"depth_cm", d.calibration.depth_cm}};
  }
  if (c.electron_data != nullptr) {
    const beamdata::ElectronBeamData& e = *c.electron_data;
    b["beam_id"] = e.id;
    b["radiation"] = "ELECTRON";
    b["energy_mv"] = e.energy_mev;  // MeV, as the manifest's energy_mv
    b["dmax_cm"] = e.dmax_cm;
    b["pdd_ssd_cm"] = e.pdd_ssd_cm;
    b["calibration"] = {{"output_cgy_per_mu", e.calibration.output_cgy_per_mu},
                        {"applicator", e.calibration.applicator},
                        {"ssd_cm", e.calibration.ssd_cm},
                        {"depth_cm", e.calibration.depth_cm}};
  }
  return b;
}

json sensitivity_json(const BeamExplanation& e) {
  if (!e.sensitivity)
    return {{"note", e.sensitivity_note}, {"changes", json::array()}, {"factor_needed", json::array()}};
  const engine::Sensitivity& s = *e.sensitivity;
  json changes = json::array();
  for (const engine::Reconciliation& r : s.changes) {
    changes.push_back({{"quantity", engine::to_code(r.quantity)},
                       {"baseline_cm", r.baseline_cm},
                       {"change_cm", optional_json(r.change_cm)},
                       {"reconciled_cm", r.change_cm ? json(r.baseline_cm + *r.change_cm) : json(nullptr)},
                       {"search_min_change_cm", r.search_min_change_cm},
                       {"search_max_change_cm", r.search_max_change_cm},
                       {"extrapolated", r.extrapolated},
                       {"sentence", reconciliation_sentence(r)}});
  }
  // If a single factor alone were wrong: the value it would need (the calculation is a product).
  json needed = json::array();
  const double ratio = s.baseline_dose_cgy > 0.0 ? s.target_dose_cgy / s.baseline_dose_cgy : 0.0;
  if (ratio > 0.0 && e.tmr && e.pdd) {
    const engine::PointDose& used =
        e.parts.front().method == engine::Method::tmr ? e.tmr->first_part : e.pdd->first_part;
    for (const FactorRow& row : factor_rows(used)) {
      const double value = row.factor->value;
      needed.push_back({{"key", row.key},
                        {"value", value},
                        {"needed_value", row.role == "divides" ? value / ratio : value * ratio}});
    }
  }
  return {{"target_dose_gy", util::cgy_to_gy(s.target_dose_cgy)},
          {"baseline_dose_gy", util::cgy_to_gy(s.baseline_dose_cgy)},
          {"planned_to_computed_ratio", ratio},
          {"changes", changes},
          {"factor_needed", needed},
          {"note", e.sensitivity_note}};
}

json parts_json(const engine::BeamDose& c) {
  json parts = json::array();
  for (const engine::Segment& s : c.segments) {
    parts.push_back({{"from_control_point", s.from_control_point},
                     {"meterset_mu", s.meterset_mu},
                     {"gantry_deg", s.angles.gantry_deg},
                     {"collimator_deg", s.angles.collimator_deg},
                     {"depth_mm", s.depth_mm},
                     {"ssd_mm", s.ssd_mm},
                     {"spd_mm", s.point.spd_mm},
                     {"off_axis_mm", s.point.off_axis_mm},
                     {"collimator_field_cm", s.inputs.collimator_field_cm},
                     {"field_at_isocentre_cm", s.inputs.field_at_isocentre_cm},
                     {"point_in_opening", s.point_in_opening},
                     {"point_in_jaws", s.point_in_jaws},
                     {"dose_cgy", s.dose.dose_cgy}});
  }
  return parts;
}

}  // namespace

namespace {

// The sector-integration dose beside the equivalent-square dose (scatter_comparison.hpp).
json scatter_comparison_json(const engine::BeamDose& c) {
  json rows = json::array();
  for (const ScatterComparison& r : scatter_comparisons(c)) {
    rows.push_back({{"part", r.part == 0 ? json(nullptr) : json(r.part)},
                    {"from_control_point", r.part == 0 ? json(nullptr) : json(r.from_control_point)},
                    {"sector_integration_dose_gy", r.sector_dose_gy},
                    {"equivalent_square_dose_gy", r.equivalent_square_dose_gy},
                    {"difference_percent", r.difference_percent}});
  }
  return rows;
}

json model_checks_json(const engine::BeamDose& c) {
  const engine::ReferenceConditions& ref = c.dose.reference;
  const engine::FormalismComparison& f = c.model.formalism;
  const engine::GeometryConsistency& g = c.model.geometry;
  const engine::UncertaintyEstimate& u = c.model.uncertainty;
  return json{{"calibration",
               {{"geometry", beamdata::to_string(ref.geometry)},
                {"geometry_defaulted", ref.geometry_defaulted},
                {"source_to_point_cm", ref.source_to_point_cm},
                {"field_at_point_cm", ref.field_at_point_cm},
                {"field_at_surface_cm", ref.field_at_surface_cm},
                {"collimator_field_cm", ref.collimator_field_cm}}},
              {"formalisms", f.computed ? json{{"used", engine::to_code(c.method)},
                                               {"other", engine::to_code(f.other)},
                                               {"used_dose_per_mu_cgy", f.used_dose_per_mu_cgy},
                                               {"other_dose_per_mu_cgy", f.other_dose_per_mu_cgy},
                                               {"difference_percent", f.difference_percent},
                                               {"other_extrapolated", f.other_extrapolated}}
                                        : json(nullptr)},
              {"geometry_consistency",
               {{"ray_mismatch_mm", optional_json(g.ray_mismatch_mm)},
                {"ssd_mismatch_mm", optional_json(g.ssd_mismatch_mm)}}},
              {"uncertainty",
               {{"combined_percent", u.combined_percent},
                {"interpolation_percent", u.interpolation_percent},
                {"formalism_percent", u.formalism_percent},
                {"sector_percent", c.used_sector_integration() ? json(u.sector_percent) : json(nullptr)},
                {"heterogeneity_percent", u.heterogeneity_percent}}}};
}

}  // namespace

nlohmann::json explanation_to_json(const check::PlanCheck& check, const check::BeamCheck& beam,
                                   const BeamExplanation& e) {
  json j;
  j["source_file"] = check.source_file;
  j["sop_instance_uid"] = check.sop_instance_uid;
  j["patient_id"] = check.patient_id;
  j["plan_label"] = check.plan_label;
  j["beam"] = {{"number", beam.beam_number},
               {"name", beam.beam_name},
               {"fraction_group_number", beam.fraction_group_number}};
  j["status"] = check::to_code(beam.status);
  j["reason"] = {{"code", check::reason_code(beam.reason.reason)}, {"sentence", beam.reason.sentence}};
  j["meterset_mu"] = optional_json(beam.meterset_mu);
  j["planned_dose_gy"] = optional_json(beam.planned_dose_gy);
  j["computed_dose_gy"] = optional_json(beam.computed_dose_gy);
  j["deviation_percent"] = optional_json(beam.deviation_percent);
  j["calc_uncertainty_percent"] = optional_json(beam.calc_uncertainty_percent);
  j["tolerance_percent"] = optional_json(beam.tolerance_percent);
  j["independent_mu"] = optional_json(beam.independent_mu);
  j["category"] = beam.category ? json(check::to_code(*beam.category)) : json(nullptr);
  j["medium"] = check::to_code(beam.medium);
  j["tolerance_policy"] = check.options.policy.source;
  j["patient_study"] = study_json(check.options.study);
  j["patient"] = beam_patient_json(beam, check.options.study);

  const engine::BeamDose* c = beam.calculation ? &*beam.calculation : nullptr;
  const auto& problem = beam.words.problem;
  j["calculation_problem"] =
      c != nullptr && problem
          ? json({{"code", check::reason_code(problem->reason)}, {"sentence", problem->sentence}})
          : json(nullptr);
  j["beam_data"] = c != nullptr ? beam_data_json(check, *c) : json(nullptr);
  j["geometry"] = c != nullptr && c->point.spd_mm > 0.0 ? geometry_json(*c, beam.words) : json(nullptr);
  if (c != nullptr && c->dose_computed) {
    j["method"] = {{"used", engine::to_code(c->method)}, {"reason", beam.words.method_reason}};
    j["factors"] = factors_json(c->dose);
    j["dose_per_mu_cgy"] = c->dose.dose_per_mu_cgy;
    j["parts"] = parts_json(*c);
    j["scatter_comparison"] = scatter_comparison_json(*c);
  } else {
    j["method"] = nullptr;
    j["factors"] = json::array();
    j["dose_per_mu_cgy"] = nullptr;
    j["parts"] = json::array();
    j["scatter_comparison"] = json::array();
  }
  if (e.tmr && e.pdd) {
    j["formalisms"] = {{"tmr", formalism_json(*e.tmr)},
                       {"pdd", formalism_json(*e.pdd)},
                       {"difference_percent", optional_json(e.formalism_difference_percent)}};
  } else {
    j["formalisms"] = nullptr;
  }
  j["model_checks"] = c != nullptr && c->dose_computed ? model_checks_json(*c) : json(nullptr);
  j["sensitivity"] = sensitivity_json(e);
  j["approximations"] = c != nullptr ? json(beam.words.approximations) : json::array();
  j["caution"] = caution_text();
  return j;
}

}  // namespace countersign::report
