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

// The files named, folders expanded to their .dcm files (sorted, so output order is stable).
[[nodiscard]] std::vector<std::filesystem::path> plan_files(const std::vector<std::string>& paths);

// The library folder to use: the option's value, else the bundled demo library (bundled_data.hpp).
[[nodiscard]] std::filesystem::path beamdata_folder(const std::string& option_value);

// What every command that checks plans (check, explain, watch, receive) takes on its command line.
struct CheckFlags {
  std::string beamdata;  // --beamdata DIR; empty: the bundled library
  std::string policy;    // --policy FILE; empty: the built-in policy
  engine::MethodChoice method = engine::MethodChoice::by_setup_technique;  // --method
  engine::DepthChoice depth = engine::DepthChoice::planned;                // --depth
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
