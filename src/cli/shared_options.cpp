#include "shared_options.hpp"

#include <algorithm>
#include <map>

#ifndef COUNTERSIGN_BUNDLED_BEAMDATA
#define COUNTERSIGN_BUNDLED_BEAMDATA "beamdata"
#endif

namespace countersign::cli {

namespace fs = std::filesystem;

std::vector<fs::path> plan_files(const std::vector<std::string>& paths) {
  std::vector<fs::path> files;
  for (const std::string& path : paths) {
    std::error_code ec;
    if (!fs::is_directory(path, ec)) {
      files.emplace_back(path);
      continue;
    }
    std::vector<fs::path> found;
    for (const auto& entry : fs::directory_iterator(path, ec)) {
      if (entry.is_regular_file() && entry.path().extension() == ".dcm") found.push_back(entry.path());
    }
    std::sort(found.begin(), found.end());
    files.insert(files.end(), found.begin(), found.end());
  }
  return files;
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
