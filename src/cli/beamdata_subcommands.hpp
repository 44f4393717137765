#pragma once

// The subcommands of `countersign beamdata`, one registration function per group (private to the
// cli module): validate and report (beamdata_validate.cpp), new and import (beamdata_onboard.cpp),
// the commissioning conversions (beamdata_convert.cpp).

#include <countersign/cli/commands.hpp>

#include <functional>
#include <ostream>
#include <string>

namespace countersign::cli::beamdata_cli {

void add_validate(CLI::App& beamdata, CommandContext& context);
void add_report(CLI::App& beamdata, CommandContext& context);
void add_new(CLI::App& beamdata, CommandContext& context);
void add_import(CLI::App& beamdata, CommandContext& context);
void add_conversions(CLI::App& beamdata, CommandContext& context);

// Writes to the file named, or to the command's output when the name is empty; false (with a
// message) when the file cannot be written.
bool emit(const std::string& output_file, Io& io, const std::function<void(std::ostream&)>& body);

// A number with `decimals` places.
std::string fixed(double value, int decimals);

}  // namespace countersign::cli::beamdata_cli
