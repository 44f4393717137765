// `beamdata new` (a template library) and `beamdata import` (measured data into it).

#include "beamdata_subcommands.hpp"

#include <countersign/beamdata/import.hpp>
#include <countersign/beamdata/library_template.hpp>

#include <filesystem>
#include <memory>

namespace countersign::cli::beamdata_cli {

namespace {

namespace bd = countersign::beamdata;
namespace fs = std::filesystem;

struct NewOptions {
  std::string folder;
  std::string machine;
  std::vector<double> energies_mv;
  std::vector<std::string> wedges;
};

void run_new(const NewOptions& o, CommandContext& context) {
  bd::TemplateRequest request;
  request.library_folder = o.folder;
  request.machine = o.machine;
  request.photon_energies_mv = o.energies_mv;
  request.wedges = o.wedges;
  const auto written = bd::write_library_template(request);
  if (!written) {
    context.io.err << written.error().message() << '\n';
    context.exit_code = ExitCode::bad_input;
    return;
  }
  for (const auto& file : *written) context.io.out << "wrote " << file.string() << '\n';
  context.io.out
      << "Next: fill in every nan, \"?\" and empty cell (by hand or with `countersign beamdata import "
      << o.folder << " --machine " << o.machine << " --beam ID --measured FILE`), then run "
      << "`countersign beamdata validate " << o.folder << "`.\n";
  context.exit_code = ExitCode::all_within_tolerance;
}

struct ImportCliOptions {
  std::string folder;
  std::string machine;
  std::string beam;
  std::string measured;
  std::string method = "monotone-cubic";
  std::vector<std::string> gap_limits;
  double dmax_cm = 0.0;
};

void run_import(const ImportCliOptions& o, CommandContext& context) {
  bd::ImportOptions options;
  options.measured_file = o.measured;
  options.machine_folder = o.machine.empty() ? fs::path{o.folder} : fs::path{o.folder} / o.machine;
  options.beam_id = o.beam;
  options.method = o.method == "linear" ? bd::ResamplingMethod::linear : bd::ResamplingMethod::monotone_cubic;
  if (o.dmax_cm > 0.0) options.dmax_cm = o.dmax_cm;
  for (const auto& text : o.gap_limits) {
    const auto limit = bd::parse_gap_limit(text);
    if (!limit) {
      context.io.err << "--max-gap " << text << ": expected QUANTITY:AXIS=CM, e.g. pdd:depth_cm=0.5\n";
      context.exit_code = ExitCode::bad_input;
      return;
    }
    options.gap_limits.push_back(*limit);
  }
  const bd::ImportResult result = bd::import_measured_data(options);
  auto& out = context.io.out;
  for (const auto& note : result.notes) out << "note: " << note << '\n';
  if (!result.ok()) {
    for (const auto& group : bd::group_problems(result.problems)) context.io.err << group.text() << '\n';
    context.io.err << "nothing written: " << result.problems.size() << " problem(s)\n";
    context.exit_code = ExitCode::bad_input;
    return;
  }
  for (const auto& t : result.tables)
    out << "wrote " << t.file << " (" << t.quantity << ", " << t.measured_points
        << " measured points, SHA-256 " << t.sha256_hex << ")\n";
  out << "resampling: " << bd::describe(options.method) << "; no extrapolation\n";
  out << "provenance: " << result.provenance_file.string() << " (measured file SHA-256 "
      << result.measured_sha256_hex << ")\n";
  context.exit_code = ExitCode::all_within_tolerance;
}

}  // namespace

void add_new(CLI::App& beamdata, CommandContext& context) {
  auto o = std::make_shared<NewOptions>();
  auto* command = beamdata.add_subcommand(
      "new",
      "Write a template library for one machine: a manifest with every key commented, tables with their axes "
      "and empty cells, a README of what to measure. `validate` reports it incomplete until it is filled in");
  command->add_option("folder", o->folder, "Library folder (the machine folder FOLDER/NAME must not exist)")
      ->required();
  command->add_option("--machine", o->machine, "Treatment Machine Name (300A,00B2), exact")->required();
  command->add_option("--energies", o->energies_mv, "Photon energies in MV, e.g. 6,10")
      ->required()
      ->delimiter(',')
      ->check(CLI::PositiveNumber);
  command->add_option("--wedges", o->wedges, "Wedge IDs (300A,00D4) on every beam, e.g. W15,W30")
      ->delimiter(',');
  command->callback([o, &context] { run_new(*o, context); });
}

void add_import(CLI::App& beamdata, CommandContext& context) {
  auto o = std::make_shared<ImportCliOptions>();
  auto* command = beamdata.add_subcommand(
      "import",
      "Resample measured data (long-format CSV: quantity, field, depth or off-axis distance, value) onto one "
      "beam's tables, normalise it, and write the tables with a provenance note. Nothing is extrapolated and "
      "nothing is written when a cell cannot be filled. Exit 0 written, 3 refused");
  command->add_option("folder", o->folder, "Library folder (with --machine) or machine folder")->required();
  command->add_option("--machine", o->machine, "Machine folder name inside the library folder");
  command->add_option("--beam", o->beam, "Beam id in the manifest, e.g. 6X")->required();
  command->add_option("--measured", o->measured, "Measured data, long-format CSV")->required();
  command->add_option("--method", o->method, "Resampling: monotone-cubic (default) or linear")
      ->check(CLI::IsMember({"monotone-cubic", "linear"}));
  command->add_option("--max-gap", o->gap_limits,
                      "Widest gap between measured points to bridge, QUANTITY:AXIS=CM (repeatable), e.g. "
                      "pdd:depth_cm=0.5; defaults in README");
  command->add_option("--dmax-cm", o->dmax_cm, "dmax for normalisation (default: the manifest's dmax_cm)")
      ->check(CLI::PositiveNumber);
  command->callback([o, &context] { run_import(*o, context); });
}

}  // namespace countersign::cli::beamdata_cli
