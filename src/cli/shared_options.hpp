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

struct PlanFileCandidate {
  std::filesystem::path file;
  bool from_folder = false;  // found in a folder (a non-plan is skipped), not named (a non-plan is an error)
};

struct PlanFileCandidates {
  std::vector<PlanFileCandidate> files;                   // in the order named; a folder's sorted
  std::vector<std::filesystem::path> ignored_subfolders;  // subfolders of the folders named
};

// The files named, and each folder's candidate files by the rule the folder watcher uses
// (dicom::list_candidates: any name but hidden and temporary ones; subfolders are not entered).
[[nodiscard]] PlanFileCandidates plan_file_candidates(const std::vector<std::string>& paths);

// Whether a file found in a folder that did not read as a plan is passed over: it holds no RT Plan
// (another DICOM object, or no DICOM at all). A file named on the command line is never passed over.
[[nodiscard]] bool is_skipped_non_plan(const PlanFileCandidate& candidate, const Error& read_error);

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
