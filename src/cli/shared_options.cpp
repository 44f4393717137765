#include "shared_options.hpp"

#include <countersign/dicom/plan_files.hpp>
#include <countersign/util/units.hpp>
#include "bundled_data.hpp"

#include <algorithm>
#include <map>

namespace countersign::cli {

namespace fs = std::filesystem;

PlanFileCandidates plan_file_candidates(const std::vector<std::string>& paths) {
  PlanFileCandidates candidates;
  for (const std::string& path : paths) {
    std::error_code ec;
    if (!fs::is_directory(path, ec)) {
      candidates.files.push_back(PlanFileCandidate{path, false});
      continue;
    }
    dicom::FolderListing listing = dicom::list_candidates(path, dicom::Subfolders::ignore);
    for (fs::path& file : listing.files) candidates.files.push_back(PlanFileCandidate{std::move(file), true});
    for (fs::path& folder : listing.subfolders) candidates.ignored_subfolders.push_back(std::move(folder));
  }
  return candidates;
}

bool is_skipped_non_plan(const PlanFileCandidate& candidate, const Error& read_error) {
  if (!candidate.from_folder) return false;
  const dicom::FileContent content = dicom::content_of(read_error);
  return content == dicom::FileContent::other_object || content == dicom::FileContent::not_dicom;
}

fs::path beamdata_folder(const std::string& option_value) {
  return option_value.empty() ? bundled_beamdata() : fs::path{option_value};
}

Expected<check::CheckOptions> check_options_from(const CheckFlags& flags) {
  check::CheckOptions options;
  options.engine.method = flags.method;
  options.engine.depth = flags.depth;
  options.engine.heterogeneity = flags.heterogeneity;
  if (!flags.policy.empty()) TRY_ASSIGN(options.policy, check::load_policy(flags.policy));
  options.engine.max_sector_deg = options.policy.max_sector_deg;
  options.engine.segment_edge_distance_mm = util::cm_to_mm(options.policy.min_edge_distance_cm);
  return options;
}

void add_beamdata_option(CLI::App& command, std::string& value) {
  command.add_option(
      "--beamdata", value,
      "beam-data library folder (default: the bundled demo library, " + bundled_beamdata().string() + ")");
}

std::string_view flag_text(engine::MethodChoice method) {
  switch (method) {
    case engine::MethodChoice::tmr:
      return "tmr";
    case engine::MethodChoice::pdd:
      return "pdd";
    case engine::MethodChoice::by_setup_technique:
      break;
  }
  return "auto";
}

void add_check_flags(CLI::App& command, CheckFlags& flags) {
  add_beamdata_option(command, flags.beamdata);
  command.add_option("--policy", flags.policy,
                     "tolerance policy TOML file (default: built-in TG-114 based values)");
  const std::map<std::string, engine::MethodChoice> methods{
      {"auto", engine::MethodChoice::by_setup_technique},
      {"tmr", engine::MethodChoice::tmr},
      {"pdd", engine::MethodChoice::pdd}};
  command
      .add_option("--method", flags.method,
                  "formalism: auto (FIXED_SSD setups pdd, others tmr; the default), tmr or pdd")
      ->transform(CLI::CheckedTransformer(methods, CLI::ignore_case).description(""))
      ->option_text("auto|tmr|pdd");
  const std::map<std::string, engine::DepthChoice> depths{{"planned", engine::DepthChoice::planned},
                                                          {"equivalent", engine::DepthChoice::equivalent}};
  command
      .add_option("--depth", flags.depth,
                  "depth: planned (the plan's geometric depth, else SPD - SSD; the default) or equivalent "
                  "(the plan's radiological depth)")
      ->transform(CLI::CheckedTransformer(depths, CLI::ignore_case).description(""))
      ->option_text("planned|equivalent");
  const std::map<std::string, engine::Heterogeneity> heterogeneity{{"off", engine::Heterogeneity::off},
                                                                   {"epl", engine::Heterogeneity::epl},
                                                                   {"batho", engine::Heterogeneity::batho}};
  command
      .add_option(
          "--heterogeneity", flags.heterogeneity,
          "with a CT study: epl (radiological depth in the TMR/PDD look-ups; the default), batho (Batho "
          "power-law factor on the dose at the geometric depth) or off (water at the CT's geometric depth)")
      ->transform(CLI::CheckedTransformer(heterogeneity, CLI::ignore_case).description(""))
      ->option_text("off|epl|batho");
}

}  // namespace countersign::cli
