// The patient's study in a check, and the verdict rules only a CT makes possible.

#include <countersign/check/check_plan.hpp>
#include <countersign/check/patient_study.hpp>
#include <countersign/util/units.hpp>

#include <fmt/format.h>

#include <cmath>

namespace countersign::check {

namespace {

patient::HuToDensity relation_of(const beamdata::CtDensityTable& table) {
  patient::HuToDensity relation;
  relation.density = [table](double hu) { return table.density(hu).relative_electron_density; };
  relation.lowest_hu = table.hu.front();
  relation.highest_hu = table.hu.back();
  return relation;
}

}  // namespace

PatientStudy PatientStudy::from(study::Result<study::Study> loaded, const beamdata::Library& library) {
  PatientStudy out;
  out.used_.present = true;
  if (!loaded) {
    out.used_.problem = Finding{Reason::study_unusable,
                                "the patient's CT study cannot be used: " + loaded.problem().message()};
    return out;
  }
  out.study_ = std::make_unique<study::Study>(std::move(loaded).value());
  const study::Study& s = *out.study_;
  out.used_.ct_series_uid = s.ct.series_instance_uid;
  out.used_.structure_set_uid = s.structure_set.sop_instance_uid;
  out.used_.body_source = std::string(study::code(s.body.source));
  const beamdata::CtDensityTable* table = library.ct.for_station(s.station_name);
  if (table == nullptr || table->hu.empty()) {
    out.used_.problem = Finding{
        Reason::study_unusable,
        fmt::format(
            "the beam-data library has no CT-number-to-density table (ct/default.csv, or ct/{}.csv for "
            "Station Name (0008,1010) \"{}\")",
            s.station_name, s.station_name)};
    return out;
  }
  out.used_.density_table = table->file;
  out.model_ = std::make_unique<patient::PatientModel>(*out.study_, relation_of(*table));
  return out;
}

PatientStudy PatientStudy::none(std::string note) {
  PatientStudy out;
  out.used_.note = std::move(note);
  return out;
}

void use_study(CheckOptions& options, const PatientStudy& study) {
  options.study = study.used();
  options.engine.patient = study.model();
  // With a CT, shaped parts' sector rays end at the body outline (missing tissue computed).
  options.engine.outline_radius_mm =
      study.model() != nullptr ? engine::outline_radius_from(*study.model()) : engine::OutlineRadius{};
}

bool ray_is_heterogeneous(const engine::CtRay& ray, const TolerancePolicy& policy) {
  double path_mm = 0.0;
  for (const patient::DensityLayer& layer : ray.layers) {
    if (std::abs(layer.relative_density - 1.0) > policy.patient_heterogeneous_density_difference)
      path_mm += layer.thickness_mm;
  }
  return path_mm >= policy.patient_heterogeneous_min_path_mm && path_mm > 0.0;
}

std::optional<Finding> missing_tissue_finding(const engine::BeamDose& c, const TolerancePolicy& policy) {
  if (!c.patient) return std::nullopt;
  // A part by sector integration whose rays were tested against the body outline computes the missing
  // scatter: the larger limit applies to the fraction outside the body. Outside the CT tissue is
  // assumed, so that fraction keeps today's limit, as every part by equivalent square does.
  const auto check_ray = [&policy](const engine::CtRay& ray, bool at_outline,
                                   const std::string& where) -> std::optional<Finding> {
    const double body_limit = at_outline ? policy.patient_max_missing_tissue_fraction_sectors
                                         : policy.patient_max_missing_tissue_fraction;
    const double ct_limit = policy.patient_max_missing_tissue_fraction;
    const double missing = ray.missing_tissue_fraction + ray.outside_ct_fraction;
    if (at_outline ? (ray.missing_tissue_fraction <= body_limit && ray.outside_ct_fraction <= ct_limit)
                   : missing <= body_limit)
      return std::nullopt;
    if (at_outline) {
      const bool by_ct = ray.outside_ct_fraction > ct_limit;
      return Finding{
          Reason::missing_tissue,
          fmt::format("{:.0f} % of the field at the point's depth lies outside the {} (policy limit {:.0f} % "
                      "with the scatter truncated at the body outline){}: the beam is not checked",
                      100.0 * (by_ct ? ray.outside_ct_fraction : ray.missing_tissue_fraction),
                      by_ct ? "CT" : "body", 100.0 * (by_ct ? ct_limit : body_limit), where)};
    }
    return Finding{
        Reason::missing_tissue,
        fmt::format(
            "{:.0f} % of the field at the point's depth lies outside the body{} (policy limit {:.0f} %){}: "
            "the scatter of full tissue would be assumed, so the beam is not checked",
            100.0 * missing, ray.outside_ct_fraction > 0.0 ? " or the CT" : "", 100.0 * body_limit, where)};
  };
  bool parts_traced = false;
  for (const engine::Segment& s : c.segments) {
    if (!s.ct) continue;
    parts_traced = true;
    const bool at_outline = s.sectors && s.sectors->body_outline;
    if (auto f = check_ray(*s.ct, at_outline,
                           c.segments.size() > 1
                               ? fmt::format(" in the part from control point {}", s.from_control_point)
                               : std::string{}))
      return f;
  }
  // No part computed (the calculation stopped before): control point 0's ray, today's limit.
  if (!parts_traced) return check_ray(c.patient->ray, false, "");
  return std::nullopt;
}

std::optional<Finding> plan_versus_ct_finding(const engine::BeamDose& c, const TolerancePolicy& policy) {
  if (!c.patient) return std::nullopt;
  const engine::CtRay& ct = c.patient->ray;
  const auto differs_mm = [](const char* what, double plan_mm, double ct_mm,
                             double limit_mm) -> std::optional<Finding> {
    if (std::abs(plan_mm - ct_mm) <= limit_mm) return std::nullopt;
    return Finding{
        Reason::plan_geometry_differs_from_ct,
        fmt::format("the plan's {} {:.1f} mm and the CT's {:.1f} mm differ by {:+.1f} mm (policy limit "
                    "{:.1f} mm): check the SSD, the isocentre, the CT and the dose point",
                    what, plan_mm, ct_mm, plan_mm - ct_mm, limit_mm)};
  };
  if (c.ssd_mm) {
    if (auto f = differs_mm("SSD (300A,0130)", *c.ssd_mm, ct.ssd_mm, policy.patient_max_ssd_difference_mm))
      return f;
  }
  if (c.depth.plan_dose_point_ssd_mm) {
    if (auto f = differs_mm("Beam Dose Point SSD (300A,008A)", *c.depth.plan_dose_point_ssd_mm,
                            ct.source_to_entry_mm, policy.patient_max_ssd_difference_mm))
      return f;
  }
  if (c.depth.plan_depth_mm) {
    if (auto f = differs_mm("Beam Dose Point Depth (300A,0088)", *c.depth.plan_depth_mm, ct.depth_mm,
                            policy.patient_max_depth_difference_mm))
      return f;
  }
  if (c.depth.plan_equivalent_depth_mm && ct.radiological_depth_mm > 0.0) {
    const double plan_mm = *c.depth.plan_equivalent_depth_mm;
    const double percent = 100.0 * (plan_mm - ct.radiological_depth_mm) / ct.radiological_depth_mm;
    if (std::abs(percent) > policy.patient_max_radiological_depth_difference_percent) {
      return Finding{
          Reason::plan_geometry_differs_from_ct,
          fmt::format("the plan's Beam Dose Point Equivalent Depth (300A,0089) {:.1f} mm and the CT's "
                      "radiological depth {:.1f} mm differ by {:+.1f} % (policy limit {:.1f} %): check "
                      "the CT, its density table and any density override",
                      plan_mm, ct.radiological_depth_mm, percent,
                      policy.patient_max_radiological_depth_difference_percent)};
    }
  }
  return std::nullopt;
}

}  // namespace countersign::check
