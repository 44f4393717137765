// `countersign beamdata`: onboarding, validation, review and conversion of beam-data libraries.

#include "beamdata_subcommands.hpp"

#include <cstdio>
#include <fstream>

namespace countersign::cli {

namespace beamdata_cli {

bool emit(const std::string& output_file, Io& io, const std::function<void(std::ostream&)>& body) {
  if (output_file.empty()) {
    body(io.out);
    return true;
  }
  std::ofstream out(output_file, std::ios::binary);
  if (out) body(out);
  out.close();
  if (!out) {
    io.err << output_file << ": cannot write the file\n";
    return false;
  }
  return true;
}

std::string fixed(double value, int decimals) {
  char buffer[64];
  std::snprintf(buffer, sizeof buffer, "%.*f", decimals, value);
  return buffer;
}

}  // namespace beamdata_cli

void add_beamdata_command(CLI::App& app, CommandContext& context) {
  auto* command = app.add_subcommand(
      "beamdata",
      "Beam-data libraries: start one (new), fill it from measured data (import), check it (validate), "
      "review it as plots (report), and convert commissioning tables (derive-tmr, rescale-pdd, compare-tmr)");
  command->require_subcommand(1);
  beamdata_cli::add_new(*command, context);
  beamdata_cli::add_import(*command, context);
  beamdata_cli::add_validate(*command, context);
  beamdata_cli::add_report(*command, context);
  beamdata_cli::add_conversions(*command, context);
}

}  // namespace countersign::cli
