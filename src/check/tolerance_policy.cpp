#include <countersign/check/tolerance_policy.hpp>

#include <toml++/toml.h>

#include <cmath>
#include <functional>
#include <map>

namespace countersign::check {

std::string_view to_code(FieldCategory category) {
  switch (category) {
    case FieldCategory::simple:
      return "simple";
    case FieldCategory::complex:
      return "complex";
    case FieldCategory::modulated:
      return "modulated";
  }
  return "unknown";
}

std::string_view to_code(Medium medium) {
  return medium == Medium::homogeneous ? "homogeneous" : "heterogeneous";
}

double TolerancePolicy::tolerance_percent(FieldCategory category, Medium medium) const {
  const bool het = medium == Medium::heterogeneous;
  switch (category) {
    case FieldCategory::simple:
      return het ? simple_heterogeneous_percent : simple_percent;
    case FieldCategory::complex:
      return het ? complex_heterogeneous_percent : complex_percent;
    case FieldCategory::modulated:
      return het ? modulated_heterogeneous_percent : modulated_percent;
  }
  return simple_percent;
}

TolerancePolicy default_policy() { return TolerancePolicy{}; }

namespace {

struct Key {
  double TolerancePolicy::*member;
  double min;
  double max;
};

// Every key of the file: "table.key" -> member and accepted range.
const std::map<std::string, Key>& keys() {
  static const std::map<std::string, Key> all{
      {"tolerance_percent.simple", {&TolerancePolicy::simple_percent, 0.1, 20.0}},
      {"tolerance_percent.complex", {&TolerancePolicy::complex_percent, 0.1, 20.0}},
      {"tolerance_percent.modulated", {&TolerancePolicy::modulated_percent, 0.1, 20.0}},
      {"tolerance_percent.heterogeneous.simple", {&TolerancePolicy::simple_heterogeneous_percent, 0.1, 20.0}},
      {"tolerance_percent.heterogeneous.complex",
       {&TolerancePolicy::complex_heterogeneous_percent, 0.1, 20.0}},
      {"tolerance_percent.heterogeneous.modulated",
       {&TolerancePolicy::modulated_heterogeneous_percent, 0.1, 20.0}},
      {"category.simple_max_off_axis_cm", {&TolerancePolicy::simple_max_off_axis_cm, 0.0, 30.0}},
      {"category.simple_max_jaw_offset_cm", {&TolerancePolicy::simple_max_jaw_offset_cm, 0.0, 30.0}},
      {"category.simple_min_open_fraction", {&TolerancePolicy::simple_min_open_fraction, 0.0, 1.0}},
      {"category.heterogeneous_depth_difference_percent",
       {&TolerancePolicy::heterogeneous_depth_difference_percent, 0.0, 100.0}},
      {"limits.min_edge_distance_cm", {&TolerancePolicy::min_edge_distance_cm, 0.0, 10.0}},
      {"limits.max_depth_discrepancy_cm", {&TolerancePolicy::max_depth_discrepancy_cm, 0.0, 10.0}},
      {"limits.depth_check_max_off_axis_cm", {&TolerancePolicy::depth_check_max_off_axis_cm, 0.0, 30.0}},
      {"limits.wedge_max_off_axis_cm", {&TolerancePolicy::wedge_max_off_axis_cm, 0.0, 30.0}},
      {"limits.small_share_fraction", {&TolerancePolicy::small_share_fraction, 0.0, 1.0}},
      {"sectors.max_sector_deg", {&TolerancePolicy::max_sector_deg, 1.0, 10.0}},
      {"sectors.max_edge_meterset_share", {&TolerancePolicy::max_edge_meterset_share, 0.0, 1.0}},
      {"model_limits.geometry_consistency_max_mm",
       {&TolerancePolicy::geometry_consistency_max_mm, 0.0, 100.0}},
      {"model_limits.small_beam_max_deviation_percent",
       {&TolerancePolicy::small_beam_max_deviation_percent, 0.1, 100.0}},
      {"model_limits.buildup_margin_mm", {&TolerancePolicy::buildup_margin_mm, 0.0, 50.0}},
      {"model_limits.min_equivalent_square_cm", {&TolerancePolicy::min_equivalent_square_cm, 0.0, 40.0}},
      {"model_limits.max_ssd_offset_without_range_cm",
       {&TolerancePolicy::max_ssd_offset_without_range_cm, 0.0, 100.0}},
      {"model_limits.formalism_max_difference_percent",
       {&TolerancePolicy::formalism_max_difference_percent, 0.1, 20.0}},
      // [patient]
      {"patient.max_ssd_difference_mm", {&TolerancePolicy::patient_max_ssd_difference_mm, 0.0, 100.0}},
      {"patient.max_depth_difference_mm", {&TolerancePolicy::patient_max_depth_difference_mm, 0.0, 100.0}},
      {"patient.max_radiological_depth_difference_percent",
       {&TolerancePolicy::patient_max_radiological_depth_difference_percent, 0.0, 100.0}},
      {"patient.heterogeneous_density_difference",
       {&TolerancePolicy::patient_heterogeneous_density_difference, 0.0, 2.0}},
      {"patient.heterogeneous_min_path_mm",
       {&TolerancePolicy::patient_heterogeneous_min_path_mm, 0.0, 500.0}},
      {"patient.max_missing_tissue_fraction",
       {&TolerancePolicy::patient_max_missing_tissue_fraction, 0.0, 1.0}},
      {"patient.max_missing_tissue_fraction_sectors",
       {&TolerancePolicy::patient_max_missing_tissue_fraction_sectors, 0.0, 1.0}},
      {"patient.plan_equivalent_depth_switch_percent",
       {&TolerancePolicy::patient_plan_equivalent_depth_switch_percent, 0.0, 100.0}},
      // [electron]
      {"electron.max_obliquity_deg", {&TolerancePolicy::electron_max_obliquity_deg, 0.0, 89.0}},
  };
  return all;
}

Error config_error(const std::filesystem::path& file, const std::string& key, const std::string& detail) {
  return Error{ErrorKind::bad_configuration, file.string(), key, "", detail};
}

// Walks the table, assigning known keys; the first problem is returned.
std::optional<Error> apply(const toml::table& table, const std::string& prefix,
                           const std::filesystem::path& file, TolerancePolicy& policy) {
  for (const auto& [name, node] : table) {
    const std::string key = prefix.empty() ? std::string(name.str()) : prefix + "." + std::string(name.str());
    if (const toml::table* sub = node.as_table()) {
      if (auto e = apply(*sub, key, file, policy)) return e;
      continue;
    }
    const auto it = keys().find(key);
    if (it == keys().end()) return config_error(file, key, "unknown key");
    const std::optional<double> value = node.value<double>();
    if (!value || !std::isfinite(*value)) return config_error(file, key, "not a number");
    if (*value < it->second.min || *value > it->second.max) {
      return config_error(file, key,
                          "value " + std::to_string(*value) + " outside [" + std::to_string(it->second.min) +
                              ", " + std::to_string(it->second.max) + "]");
    }
    policy.*(it->second.member) = *value;
  }
  return std::nullopt;
}

}  // namespace

Expected<TolerancePolicy> load_policy(const std::filesystem::path& file) {
  toml::table table;
  try {
    table = toml::parse_file(file.string());
  } catch (const toml::parse_error& e) {
    const auto line = e.source().begin.line;
    return config_error(file, "", "line " + std::to_string(line) + ": " + std::string(e.description()));
  }
  TolerancePolicy policy = default_policy();
  policy.source = file.string();
  if (auto e = apply(table, "", file, policy)) return *e;
  return policy;
}

}  // namespace countersign::check
