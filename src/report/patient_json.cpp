// The `patient` object of the check's JSON.

#include "patient_json.hpp"

#include <countersign/util/units.hpp>

namespace countersign::report {

using nlohmann::json;

namespace {

json cm_or_null(const std::optional<double>& mm) { return mm ? json(util::mm_to_cm(*mm)) : json(nullptr); }

json point_json(const plan::PointMm& p) { return json{{"x_mm", p[0]}, {"y_mm", p[1]}, {"z_mm", p[2]}}; }

// The CT's numbers for one ray.
void add_ray(json& j, const engine::CtRay& ray) {
  j["ssd_cm"] = util::mm_to_cm(ray.ssd_mm);
  j["point_ssd_cm"] = util::mm_to_cm(ray.source_to_entry_mm);
  j["depth_cm"] = util::mm_to_cm(ray.depth_mm);
  j["radiological_depth_cm"] = util::mm_to_cm(ray.radiological_depth_mm);
  j["entry_point"] = point_json(ray.entry_mm);
  j["central_axis_entry_point"] = point_json(ray.axis_entry_mm);
  j["missing_tissue_fraction"] = ray.missing_tissue_fraction;
  j["outside_ct_fraction"] = ray.outside_ct_fraction;
  j["lowest_relative_density"] = ray.lowest_density;
  j["highest_relative_density"] = ray.highest_density;
  j["voxels_beyond_density_table"] = ray.voxels_beyond_table;
}

}  // namespace

json study_json(const check::StudyUsed& study) {
  return json{{"used", study.present && !study.problem},
              {"ct_series_uid", study.present ? json(study.ct_series_uid) : json(nullptr)},
              {"structure_set_uid", study.present ? json(study.structure_set_uid) : json(nullptr)},
              {"body_source", study.present ? json(study.body_source) : json(nullptr)},
              {"density_table", study.present ? json(study.density_table) : json(nullptr)},
              {"reason",
               study.problem ? json(std::string(check::reason_code(study.problem->reason))) : json(nullptr)},
              {"explanation", study.problem ? json(study.problem->sentence) : json(study.note)}};
}

json beam_patient_json(const check::BeamCheck& beam, const check::StudyUsed& study) {
  const bool computed = beam.calculation && beam.calculation->depth.chosen;
  const engine::BeamDose* c = beam.calculation ? &*beam.calculation : nullptr;
  std::string source = "plan";
  if (c != nullptr && c->patient) {
    source = "ct";
  } else if (computed && (c->depth.source == engine::DepthSource::derived_spd_minus_ssd ||
                          c->depth.source == engine::DepthSource::derived_from_dose_point_ssd)) {
    source = "flat_surface";
  }
  json j{
      {"source", source},
      {"ct_series_uid", c != nullptr && c->patient ? json(study.ct_series_uid) : json(nullptr)},
      {"structure_set_uid", c != nullptr && c->patient ? json(study.structure_set_uid) : json(nullptr)},
      {"body_source", c != nullptr && c->patient ? json(study.body_source) : json(nullptr)},
      {"ssd_cm", nullptr},
      {"depth_cm", nullptr},
      {"radiological_depth_cm", nullptr},
      {"plan_ssd_cm", c != nullptr ? cm_or_null(c->ssd_mm) : json(nullptr)},
      {"plan_depth_cm", c != nullptr ? cm_or_null(c->depth.plan_depth_mm) : json(nullptr)},
      {"plan_equivalent_depth_cm",
       c != nullptr ? cm_or_null(c->depth.plan_equivalent_depth_mm) : json(nullptr)},
      {"plan_dose_point_ssd_cm", c != nullptr ? cm_or_null(c->depth.plan_dose_point_ssd_mm) : json(nullptr)},
      {"missing_tissue_fraction", nullptr},
      {"heterogeneity_method", nullptr},
      {"homogeneous_dose_gy",
       c != nullptr && c->homogeneous_dose_gy ? json(*c->homogeneous_dose_gy) : json(nullptr)},
      {"medium", beam.words.medium.empty() ? json(nullptr) : json(beam.words.medium)}};
  if (c != nullptr && c->patient) {
    add_ray(j, c->patient->ray);
    j["heterogeneity_method"] = std::string(engine::to_code(c->patient->method));
  } else if (computed && c->depth.equivalent_by_policy) {
    j["heterogeneity_method"] = "plan_equivalent_depth";
  }
  return j;
}

json segment_patient_json(const engine::Segment& segment) {
  if (!segment.ct) return nullptr;
  json j = json::object();
  add_ray(j, *segment.ct);
  j["batho_factor"] = segment.batho_factor ? json(*segment.batho_factor) : json(nullptr);
  j["homogeneous_dose_gy"] = util::cgy_to_gy(segment.homogeneous_dose_cgy);
  return j;
}

}  // namespace countersign::report
