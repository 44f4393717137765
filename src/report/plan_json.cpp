#include <countersign/report/plan_json.hpp>

#include <algorithm>

namespace countersign::report {

namespace {

using nlohmann::json;

template <class T>
json optional_value(const std::optional<T>& value) {
  return value ? json(*value) : json(nullptr);
}

json optional_text(const std::string& text) { return text.empty() ? json(nullptr) : json(text); }

// A code string as the plan spells it.
template <class Term>
json optional_text(const plan::Coded<Term>& coded) {
  return optional_text(coded.text);
}

json point(const std::optional<plan::PointMm>& p) {
  return p ? json::array({(*p)[0], (*p)[1], (*p)[2]}) : json(nullptr);
}

json distances(const plan::DosePointDistances& d) {
  return {{"depth_mm", optional_value(d.depth_mm)},
          {"equivalent_depth_mm", optional_value(d.equivalent_depth_mm)},
          {"ssd_mm", optional_value(d.ssd_mm)},
          {"source_to_external_contour_mm", optional_value(d.source_to_external_contour_mm)}};
}

json accessories(const std::vector<plan::Accessory>& items) {
  json list = json::array();
  for (const auto& item : items) {
    list.push_back({{"number", optional_value(item.number)},
                    {"id", optional_text(item.id)},
                    {"type", optional_text(item.type)}});
  }
  return list;
}

// Applicators: the keys of the other accessories (no number in DICOM), then the description.
json applicators(const std::vector<plan::Applicator>& items) {
  json list = json::array();
  for (const auto& item : items) {
    list.push_back({{"number", nullptr},
                    {"id", optional_text(item.id)},
                    {"type", optional_text(item.type.text)},
                    {"description", optional_text(item.description)}});
  }
  return list;
}

// Blocks: the first three keys as before (id = Block Tray ID), then the block's own attributes.
json blocks(const std::vector<plan::Block>& items) {
  json list = json::array();
  for (const auto& block : items) {
    json outline = json::array();
    for (const auto& v : block.outline_mm) outline.push_back(json::array({v[0], v[1]}));
    list.push_back({{"number", optional_value(block.number)},
                    {"id", optional_text(block.tray_id)},
                    {"type", optional_text(block.type)},
                    {"name", optional_text(block.name)},
                    {"divergence", optional_text(block.divergence)},
                    {"source_to_tray_mm", optional_value(block.source_to_tray_mm)},
                    {"material_id", optional_text(block.material_id)},
                    {"thickness_mm", optional_value(block.thickness_mm)},
                    {"transmission", optional_value(block.transmission)},
                    {"outline_mm", outline}});
  }
  return list;
}

// Jaw pair positions from X/ASYMX and Y/ASYMY, whichever the plan uses.
json jaws(const plan::ControlPoint* cp) {
  json out = {{"x1", nullptr}, {"x2", nullptr}, {"y1", nullptr}, {"y2", nullptr}};
  if (cp == nullptr) return out;
  auto fill = [&](plan::DeviceType a, plan::DeviceType b, const char* lo, const char* hi) {
    for (const plan::DeviceType type : {a, b}) {
      const auto* device = cp->device(type);
      if (device != nullptr && device->positions_mm.size() == 2) {
        out[lo] = device->positions_mm[0];
        out[hi] = device->positions_mm[1];
        return;
      }
    }
  };
  fill(plan::DeviceType::x, plan::DeviceType::asymx, "x1", "x2");
  fill(plan::DeviceType::y, plan::DeviceType::asymy, "y1", "y2");
  return out;
}

json control_point(const plan::ControlPoint& cp) {
  json devices = json::object();
  for (const auto& d : cp.devices) devices[d.type.text] = d.positions_mm;
  json coefficients = json::array();
  for (const auto& c : cp.dose_reference_coefficients) {
    coefficients.push_back({{"dose_reference_number", c.dose_reference_number},
                            {"cumulative_coefficient", optional_value(c.cumulative_coefficient)}});
  }
  json wedges = json::array();
  for (const auto& w : cp.wedge_positions)
    wedges.push_back({{"wedge_number", w.wedge_number}, {"position", w.position.text}});
  return {{"index", cp.index},
          {"energy_mv", optional_value(cp.nominal_energy_mv)},
          {"dose_rate_mu_per_min", optional_value(cp.dose_rate_mu_per_min)},
          {"gantry_deg", optional_value(cp.gantry_deg)},
          {"gantry_rotation", optional_text(cp.gantry_rotation)},
          {"collimator_deg", optional_value(cp.collimator_deg)},
          {"collimator_rotation", optional_text(cp.collimator_rotation)},
          {"couch_deg", optional_value(cp.couch_deg)},
          {"couch_rotation", optional_text(cp.couch_rotation)},
          {"isocenter_mm", point(cp.isocenter_mm)},
          {"ssd_mm", optional_value(cp.ssd_mm)},
          {"jaws_mm", jaws(&cp)},
          {"device_positions_mm", devices},
          {"cumulative_meterset_weight", optional_value(cp.cumulative_meterset_weight)},
          {"dose_reference_coefficients", coefficients},
          {"wedge_positions", wedges}};
}

// Beam-level dose references, then any dose reference only the last control point names.
json dose_reference_points(const plan::Beam& beam) {
  const plan::ControlPoint* last = beam.control_points.empty() ? nullptr : &beam.control_points.back();
  auto final_coefficient = [last](int number) -> json {
    if (last == nullptr) return nullptr;
    for (const auto& c : last->dose_reference_coefficients) {
      if (c.dose_reference_number == number) return optional_value(c.cumulative_coefficient);
    }
    return nullptr;
  };
  json list = json::array();
  std::vector<int> listed;
  for (const auto& ref : beam.dose_references) {
    json entry = distances(ref.distances);
    entry["dose_reference_number"] = ref.dose_reference_number;
    entry["final_coefficient"] = final_coefficient(ref.dose_reference_number);
    entry["in_beam_dose_reference_sequence"] = true;
    list.push_back(entry);
    listed.push_back(ref.dose_reference_number);
  }
  if (last != nullptr) {
    for (const auto& c : last->dose_reference_coefficients) {
      if (std::find(listed.begin(), listed.end(), c.dose_reference_number) != listed.end()) continue;
      json entry = distances({});
      entry["dose_reference_number"] = c.dose_reference_number;
      entry["final_coefficient"] = optional_value(c.cumulative_coefficient);
      entry["in_beam_dose_reference_sequence"] = false;
      list.push_back(entry);
      listed.push_back(c.dose_reference_number);
    }
  }
  return list;
}

json beam_json(const plan::Plan& plan, const plan::Beam& beam) {
  const plan::ControlPoint* first = beam.control_points.empty() ? nullptr : &beam.control_points.front();
  int mlc_pairs = 0;
  json devices = json::array();
  for (const auto& d : beam.beam_limiting_devices) {
    if (d.type == plan::DeviceType::mlcx || d.type == plan::DeviceType::mlcy) mlc_pairs = d.pair_count;
    devices.push_back({{"type", d.type.text},
                       {"pairs", d.pair_count},
                       {"source_to_device_distance_mm", optional_value(d.source_to_device_distance_mm)},
                       {"leaf_boundaries_mm", d.leaf_boundaries_mm}});
  }
  json wedges = json::array();
  for (const auto& w : beam.wedges) {
    wedges.push_back({{"number", optional_value(w.number)},
                      {"id", optional_text(w.id)},
                      {"type", optional_text(w.type)},
                      {"angle_deg", optional_value(w.angle_deg)},
                      {"factor", optional_value(w.factor)},
                      {"orientation_deg", optional_value(w.orientation_deg)}});
  }
  json tray_ids = json::array();
  for (const auto& block : beam.blocks) {
    if (!block.tray_id.empty() &&
        std::find(tray_ids.begin(), tray_ids.end(), block.tray_id) == tray_ids.end()) {
      tray_ids.push_back(block.tray_id);
    }
  }
  json cps = json::array();
  for (const auto& cp : beam.control_points) cps.push_back(control_point(cp));
  const plan::PatientSetup* setup = beam.referenced_patient_setup_number
                                        ? plan.patient_setup(*beam.referenced_patient_setup_number)
                                        : nullptr;
  auto first_value = [first](auto member) -> json {
    return first ? optional_value((*first).*member) : json(nullptr);
  };
  return {{"number", beam.number},
          {"name", optional_text(beam.name)},
          {"description", optional_text(beam.description)},
          {"machine", optional_text(beam.machine_name)},
          {"radiation_type", optional_text(beam.radiation_type)},
          {"delivery_type", optional_text(beam.delivery_type)},
          {"beam_type", optional_text(beam.beam_type)},
          {"primary_dosimeter_unit", optional_text(beam.primary_dosimeter_unit)},
          {"energy_mv", first_value(&plan::ControlPoint::nominal_energy_mv)},
          {"sad_mm", optional_value(beam.sad_mm)},
          {"ssd_mm", first_value(&plan::ControlPoint::ssd_mm)},
          {"gantry_deg", first_value(&plan::ControlPoint::gantry_deg)},
          {"collimator_deg", first_value(&plan::ControlPoint::collimator_deg)},
          {"couch_deg", first_value(&plan::ControlPoint::couch_deg)},
          {"isocenter_mm", first ? point(first->isocenter_mm) : json(nullptr)},
          {"jaws_mm", jaws(first)},
          {"mlc_leaf_pairs", mlc_pairs},
          {"beam_limiting_devices", devices},
          {"wedges", wedges},
          {"blocks", blocks(beam.blocks)},
          {"block_tray_ids", tray_ids},
          {"applicators", applicators(beam.applicators)},
          {"compensators", accessories(beam.compensators)},
          {"boli", accessories(beam.boli)},
          {"general_accessories", accessories(beam.general_accessories)},
          {"final_cumulative_meterset_weight", optional_value(beam.final_cumulative_meterset_weight)},
          {"referenced_patient_setup_number", optional_value(beam.referenced_patient_setup_number)},
          {"patient_position", setup ? optional_text(setup->patient_position) : json(nullptr)},
          {"control_points", beam.control_points.size()},
          {"dose_reference_points", dose_reference_points(beam)},
          {"control_point_list", cps}};
}

json referenced_beam(const plan::ReferencedBeam& ref) {
  // The dose-point distances the plan gives, from the 2012-edition place if used, otherwise from
  // the fraction-level verification sequence; both are also listed separately.
  const bool direct = !ref.distances_in_referenced_beam.empty();
  const bool verification = !ref.distances_in_verification_sequence.empty();
  const plan::DosePointDistances& chosen =
      direct ? ref.distances_in_referenced_beam : ref.distances_in_verification_sequence;
  json source = direct         ? json("referenced_beam")
                : verification ? json("verification_sequence")
                               : json(nullptr);
  return {{"beam_number", ref.beam_number},
          {"meterset_mu", optional_value(ref.meterset_mu)},
          {"dose_gy", optional_value(ref.dose_gy)},
          {"dose_type", optional_text(ref.dose_type)},
          {"dose_point_mm", point(ref.dose_specification_point_mm)},
          {"dose_point_depth_mm", optional_value(chosen.depth_mm)},
          {"dose_point_equivalent_depth_mm", optional_value(chosen.equivalent_depth_mm)},
          {"dose_point_ssd_mm", optional_value(chosen.ssd_mm)},
          {"dose_point_distances_source", source},
          {"distances_in_referenced_beam", distances(ref.distances_in_referenced_beam)},
          {"distances_in_verification_sequence", distances(ref.distances_in_verification_sequence)},
          {"verification_dose_reference_number", optional_value(ref.verification_dose_reference_number)}};
}

}  // namespace

json plan_to_json(const plan::Plan& plan) {
  json setups = json::array();
  for (const auto& s : plan.patient_setups) {
    setups.push_back({{"number", s.number},
                      {"patient_position", optional_text(s.patient_position)},
                      {"setup_technique", optional_text(s.setup_technique)},
                      {"setup_technique_description", optional_text(s.setup_technique_description)}});
  }
  json dose_refs = json::array();
  for (const auto& d : plan.dose_references) {
    dose_refs.push_back(
        {{"number", d.number},
         {"uid", optional_text(d.uid)},
         {"structure_type", optional_text(d.structure_type)},
         {"description", optional_text(d.description)},
         {"type", optional_text(d.type)},
         {"point_mm", point(d.point_mm)},
         {"delivery_warning_dose_gy", optional_value(d.delivery_warning_dose_gy)},
         {"delivery_maximum_dose_gy", optional_value(d.delivery_maximum_dose_gy)},
         {"target_minimum_dose_gy", optional_value(d.target_minimum_dose_gy)},
         {"target_prescription_dose_gy", optional_value(d.target_prescription_dose_gy)},
         {"target_maximum_dose_gy", optional_value(d.target_maximum_dose_gy)},
         {"organ_at_risk_full_volume_dose_gy", optional_value(d.organ_at_risk_full_volume_dose_gy)},
         {"organ_at_risk_limit_dose_gy", optional_value(d.organ_at_risk_limit_dose_gy)},
         {"organ_at_risk_maximum_dose_gy", optional_value(d.organ_at_risk_maximum_dose_gy)}});
  }
  json groups = json::array();
  for (const auto& g : plan.fraction_groups) {
    json beams = json::array();
    for (const auto& b : g.beams) beams.push_back(referenced_beam(b));
    groups.push_back({{"number", g.number},
                      {"fractions_planned", optional_value(g.fractions_planned)},
                      {"beam_dose_meaning", optional_text(g.beam_dose_meaning)},
                      {"beams", beams}});
  }
  json beams = json::array();
  for (const auto& b : plan.beams) beams.push_back(beam_json(plan, b));
  return {{"source_file", plan.source_file},
          {"plan",
           {{"label", optional_text(plan.label)},
            {"name", optional_text(plan.name)},
            {"description", optional_text(plan.description)},
            {"date", optional_text(plan.date)},
            {"geometry", optional_text(plan.geometry)},
            {"sop_class_uid", optional_text(plan.sop_class_uid)},
            {"sop_instance_uid", optional_text(plan.sop_instance_uid)},
            {"patient_id", optional_text(plan.patient_id)},
            {"patient_name", optional_text(plan.patient_name)},
            {"approval_status", optional_text(plan.approval_status)},
            {"manufacturer", optional_text(plan.manufacturer)},
            {"specific_character_set", optional_text(plan.specific_character_set)}}},
          {"warnings", plan.warnings},
          {"patient_setups", setups},
          {"dose_references", dose_refs},
          {"fraction_groups", groups},
          {"beams", beams}};
}

}  // namespace countersign::report
