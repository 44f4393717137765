#include "shared_options.hpp"

#include <countersign/dicom/plan_files.hpp>

#include <algorithm>
#include <map>

#ifndef COUNTERSIGN_BUNDLED_BEAMDATA
#define COUNTERSIGN_BUNDLED_BEAMDATA "beamdata"
#endif

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
  return option_value.empty() ? fs::path{COUNTERSIGN_BUNDLED_BEAMDATA} : fs::path{option_value};
}

Expected<check::CheckOptions> check_options_from(engine::MethodChoice method, engine::DepthChoice depth,
                                                 const std::string& policy_file) {
  check::CheckOptions options;
  options.engine.method = method;
  options.engine.depth = depth;
  if (!policy_file.empty()) {
    auto policy = check::load_policy(policy_file);
    if (!policy) return policy.error();
    options.policy = std::move(policy.value());
  }
  return options;
}

fs::path bundled_demo_plans() {
  return fs::path{COUNTERSIGN_BUNDLED_BEAMDATA}.parent_path() / "testdata" / "plans";
}

void add_beamdata_option(CLI::App& command, std::string& value) {
  command.add_option(
      "--beamdata", value,
      std::string("beam-data library folder (default: the bundled ") + COUNTERSIGN_BUNDLED_BEAMDATA + ")");
}

void add_policy_option(CLI::App& command, std::string& value) {
  command.add_option("--policy", value, "tolerance policy TOML file (default: built-in TG-114 based values)");
}

void add_method_option(CLI::App& command, engine::MethodChoice& value, const std::string& description) {
  const std::map<std::string, engine::MethodChoice> methods{
      {"auto", engine::MethodChoice::by_setup_technique},
      {"tmr", engine::MethodChoice::tmr},
      {"pdd", engine::MethodChoice::pdd}};
  command.add_option("--method", value, description)
      ->transform(CLI::CheckedTransformer(methods, CLI::ignore_case).description(""))
      ->option_text("auto|tmr|pdd");
}

void add_depth_option(CLI::App& command, engine::DepthChoice& value, const std::string& description) {
  const std::map<std::string, engine::DepthChoice> depths{{"planned", engine::DepthChoice::planned},
                                                          {"equivalent", engine::DepthChoice::equivalent}};
  command.add_option("--depth", value, description)
      ->transform(CLI::CheckedTransformer(depths, CLI::ignore_case).description(""))
      ->option_text("planned|equivalent");
}

}  // namespace countersign::cli
