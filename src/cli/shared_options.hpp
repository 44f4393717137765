#pragma once

// Options and argument handling that several subcommands share, so each reads the same way.

#include <countersign/check/check_plan.hpp>
#include <countersign/engine/beam_dose.hpp>
#include <countersign/util/error.hpp>

#include <CLI/CLI.hpp>
#include <filesystem>
#include <string>
#include <string_view>
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

// The library folder to use: the option's value, else the bundled demo library (bundled_data.hpp).
[[nodiscard]] std::filesystem::path beamdata_folder(const std::string& option_value);

// What every command that checks plans (check, explain, watch, receive) takes on its command line.
struct CheckFlags {
  std::string beamdata;  // --beamdata DIR; empty: the bundled library
  std::string policy;    // --policy FILE; empty: the built-in policy
  engine::MethodChoice method = engine::MethodChoice::by_setup_technique;  // --method
  engine::DepthChoice depth = engine::DepthChoice::planned;                // --depth
  engine::Heterogeneity heterogeneity = engine::Heterogeneity::epl;        // --heterogeneity (with a CT)
};

// Declares --beamdata, --policy, --method and --depth on a command, worded the same everywhere.
void add_check_flags(CLI::App& command, CheckFlags& flags);

// The one place where check options are built from the flags; the policy file (if named) is loaded
// and validated, errors name the file and the key.
[[nodiscard]] Expected<check::CheckOptions> check_options_from(const CheckFlags& flags);

// The --method value as typed: auto, tmr or pdd.
[[nodiscard]] std::string_view flag_text(engine::MethodChoice method);

// --beamdata alone, for commands that take no other check flag (selftest).
void add_beamdata_option(CLI::App& command, std::string& value);

}  // namespace countersign::cli
