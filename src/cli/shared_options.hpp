#pragma once

// Options and argument handling that several subcommands share, so each reads the same way.

#include <countersign/check/check_plan.hpp>
#include <countersign/engine/beam_dose.hpp>
#include <countersign/util/error.hpp>

#include <CLI/CLI.hpp>
#include <filesystem>
#include <string>
#include <vector>

namespace countersign::cli {

// The files named, folders expanded to their .dcm files (sorted, so output order is stable).
[[nodiscard]] std::vector<std::filesystem::path> plan_files(const std::vector<std::string>& paths);

// The library folder to use: the option's value, else the bundled beamdata/ of the source tree.
[[nodiscard]] std::filesystem::path beamdata_folder(const std::string& option_value);

// Check options from the shared flags; the policy file (if named) is loaded and validated.
[[nodiscard]] Expected<check::CheckOptions> check_options_from(engine::MethodChoice method,
                                                               engine::DepthChoice depth,
                                                               const std::string& policy_file);

// The bundled demo plans (testdata/plans beside the bundled beamdata/).
[[nodiscard]] std::filesystem::path bundled_demo_plans();

void add_beamdata_option(CLI::App& command, std::string& value);
void add_policy_option(CLI::App& command, std::string& value);
void add_method_option(CLI::App& command, engine::MethodChoice& value, const std::string& description);
void add_depth_option(CLI::App& command, engine::DepthChoice& value, const std::string& description);

}  // namespace countersign::cli
