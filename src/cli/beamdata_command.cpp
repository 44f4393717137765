// `countersign beamdata`: validate a beam-data library and the commissioning conversions
// (TMR from PDD, PDD at another SSD, measured TMR against TMR derived from PDD).

#include <countersign/beamdata/conversions.hpp>
#include <countersign/beamdata/csv.hpp>
#include <countersign/beamdata/validation.hpp>
#include <countersign/cli/commands.hpp>

#include <cmath>
#include <cstdio>
#include <fstream>
#include <functional>
#include <memory>
#include <ostream>
#include <sstream>
#include <string>
#include <vector>

namespace countersign::cli {

namespace {

namespace bd = countersign::beamdata;

std::string fixed(double value, int decimals) {
  char buffer[64];
  std::snprintf(buffer, sizeof buffer, "%.*f", decimals, value);
  return buffer;
}

// Writes to the file named, or to the command's output when the name is empty.
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

struct ValidateOptions {
  std::string folder;
};

void run_validate(const ValidateOptions& options, CommandContext& context) {
  const bd::ValidationReport report = bd::validate_library(options.folder);
  for (const auto& problem : report.problems) context.io.out << problem.text() << '\n';
  context.io.out << "library SHA-256: " << (report.sha256_hex.empty() ? "not available" : report.sha256_hex)
                 << '\n';
  context.io.out << report.machine_count << " machine(s), " << report.beam_count
                 << " beam(s); PDD/TMR consistency: " << report.consistency_nodes_compared
                 << " TMR node(s) compared within " << fixed(bd::consistency_tolerance_percent, 1) << " %, "
                 << report.consistency_nodes_skipped << " not compared (would need extrapolation)\n";
  if (report.clean()) {
    context.io.out << "clean: no problems found\n";
    context.exit_code = ExitCode::all_within_tolerance;
  } else {
    context.io.out << report.error_count() << " error(s), " << report.warning_count() << " warning(s)\n";
    context.exit_code = ExitCode::bad_input;
  }
}

struct ConversionOptions {
  std::string pdd_file;
  std::string tmr_file;
  std::string sp_file;
  std::string output_file;
  double ssd_cm = 0.0;
  double to_ssd_cm = 0.0;
  double dmax_cm = 0.0;
  double tolerance_percent = bd::consistency_tolerance_percent;
  std::vector<double> fields_cm;
};

// Reports a file that cannot be used and sets the bad-input exit code; true when `value` is usable.
template <class T>
bool usable(const Expected<T>& value, CommandContext& context) {
  if (value) return true;
  context.io.err << value.error().message() << '\n';
  context.exit_code = ExitCode::bad_input;
  return false;
}

void run_derive_tmr(const ConversionOptions& o, CommandContext& context) {
  const auto pdd = bd::read_table2d(o.pdd_file, "pdd", "depth_cm", "field_cm");
  const auto sp = bd::read_table1d(o.sp_file, "sp");
  if (!usable(pdd, context) || !usable(sp, context)) return;
  const std::vector<double> fields = o.fields_cm.empty() ? pdd->columns() : o.fields_cm;
  const bd::DerivedTable derived =
      bd::derive_tmr_table(*pdd, *sp, o.ssd_cm, o.dmax_cm, fields, o.output_file);
  std::vector<std::string> comments = {
      "TMR derived by countersign beamdata derive-tmr from " + o.pdd_file + " (SSD " + fixed(o.ssd_cm, 1) +
          " cm) and " + o.sp_file + ", dmax " + fixed(o.dmax_cm, 2) + " cm",
      "TMR = PDD/100 ((f+d)/(f+dm))^2 Sp(s_dm)/Sp(s_d); columns: square field side at depth (cm)",
      "Review before use: the relation is unreliable in the build-up region (depth < dmax)"};
  const auto& t = derived.table;
  for (std::size_t r = 0; r < t.rows().size(); ++r) {
    for (std::size_t c = 0; c < t.columns().size(); ++c) {
      if (derived.extrapolated[r * t.columns().size() + c])
        comments.push_back("EXTRAPOLATED input at depth " + fixed(t.rows()[r], 2) + " cm, field " +
                           fixed(t.columns()[c], 1) + " cm");
    }
  }
  if (!emit(o.output_file, context.io, [&](std::ostream& out) { bd::write_table(out, t, comments, 4); })) {
    context.exit_code = ExitCode::bad_input;
    return;
  }
  if (derived.extrapolated_count() > 0)
    context.io.err << "warning: " << derived.extrapolated_count()
                   << " cell(s) needed PDD or Sp values outside their tables (listed in the comments)\n";
  context.exit_code = ExitCode::all_within_tolerance;
}

void run_rescale_pdd(const ConversionOptions& o, CommandContext& context) {
  const auto pdd = bd::read_table2d(o.pdd_file, "pdd", "depth_cm", "field_cm");
  if (!usable(pdd, context)) return;
  const bd::Table2D rescaled = bd::rescale_pdd_table(*pdd, o.ssd_cm, o.to_ssd_cm, o.dmax_cm, o.output_file);
  const std::vector<std::string> comments = {
      "PDD at SSD " + fixed(o.to_ssd_cm, 1) + " cm from " + o.pdd_file + " (SSD " + fixed(o.ssd_cm, 1) +
          " cm) by the Mayneord F factor, dmax " + fixed(o.dmax_cm, 2) +
          " cm; same field side at the surface",
      "The F factor ignores the change in phantom scatter with SSD; review before use"};
  if (!emit(o.output_file, context.io,
            [&](std::ostream& out) { bd::write_table(out, rescaled, comments, 2); })) {
    context.exit_code = ExitCode::bad_input;
    return;
  }
  context.exit_code = ExitCode::all_within_tolerance;
}

void run_compare_tmr(const ConversionOptions& o, CommandContext& context) {
  const auto pdd = bd::read_table2d(o.pdd_file, "pdd", "depth_cm", "field_cm");
  const auto tmr = bd::read_table2d(o.tmr_file, "tmr", "depth_cm", "field_cm");
  const auto sp = bd::read_table1d(o.sp_file, "sp");
  if (!usable(pdd, context) || !usable(tmr, context) || !usable(sp, context)) return;
  const auto comparisons = bd::compare_tmr(*tmr, *pdd, *sp, o.ssd_cm, o.dmax_cm, o.dmax_cm);
  std::size_t outside = 0;
  std::size_t not_compared = 0;
  auto& out = context.io.out;
  out << "# measured TMR (" << o.tmr_file << ") against TMR derived from " << o.pdd_file << " and "
      << o.sp_file << ", depths >= dmax " << fixed(o.dmax_cm, 2) << " cm, tolerance "
      << fixed(o.tolerance_percent, 2) << " %\n";
  out << "depth_cm,field_cm,measured_tmr,derived_tmr,difference_percent,status\n";
  for (const auto& c : comparisons) {
    std::string status = "within";
    if (c.extrapolated) {
      status = "not_compared_extrapolated";
      ++not_compared;
    } else if (std::abs(c.difference_percent) > o.tolerance_percent) {
      status = "outside";
      ++outside;
    }
    out << fixed(c.depth_cm, 2) << ',' << fixed(c.field_at_depth_cm, 1) << ',' << fixed(c.measured_tmr, 4)
        << ',' << fixed(c.derived_tmr, 4) << ',' << fixed(c.difference_percent, 2) << ',' << status << '\n';
  }
  const std::size_t compared = comparisons.size() - not_compared;
  out << "# " << compared << " node(s) compared, " << outside << " outside tolerance, " << not_compared
      << " not compared (derivation would need extrapolation)\n";
  if (compared == 0) {
    context.exit_code = ExitCode::not_checked;
  } else {
    context.exit_code = outside > 0 ? ExitCode::outside_tolerance : ExitCode::all_within_tolerance;
  }
}

void add_positive(CLI::App& command, const std::string& name, double& value, const std::string& help) {
  command.add_option(name, value, help)->required()->check(CLI::PositiveNumber);
}

}  // namespace

void add_beamdata_command(CLI::App& app, CommandContext& context) {
  auto* command =
      app.add_subcommand("beamdata", "Validate a beam-data library and convert commissioning tables");
  command->require_subcommand(1);

  auto validate_options = std::make_shared<ValidateOptions>();
  auto* validate = command->add_subcommand("validate",
                                           "Check a library folder (or one machine folder) against the "
                                           "beam-data format: one line per problem, then "
                                           "the library SHA-256. Exit 0 when clean, 3 otherwise");
  validate->add_option("folder", validate_options->folder, "Library or machine folder")->required();
  validate->callback([validate_options, &context] { run_validate(*validate_options, context); });

  auto conversion = std::make_shared<ConversionOptions>();

  auto* derive = command->add_subcommand(
      "derive-tmr", "Compute a TMR table (depth x field at depth) from a measured PDD table and Sp");
  derive->add_option("--pdd", conversion->pdd_file, "PDD table (depth_cm x field at the surface)")
      ->required();
  derive->add_option("--sp", conversion->sp_file, "Sp table (field_cm,sp)")->required();
  add_positive(*derive, "--ssd-cm", conversion->ssd_cm, "SSD of the PDD table (cm)");
  add_positive(*derive, "--dmax-cm", conversion->dmax_cm, "Depth of maximum dose (cm)");
  derive
      ->add_option("--fields-cm", conversion->fields_cm,
                   "Field sides at depth for the output (default: PDD columns)")
      ->delimiter(',');
  derive->add_option("-o,--output", conversion->output_file, "Output CSV (default: standard output)");
  derive->callback([conversion, &context] { run_derive_tmr(*conversion, context); });

  auto* rescale =
      command->add_subcommand("rescale-pdd", "Convert a PDD table to another SSD with the Mayneord F factor");
  rescale->add_option("--pdd", conversion->pdd_file, "PDD table (depth_cm x field at the surface)")
      ->required();
  add_positive(*rescale, "--from-ssd-cm", conversion->ssd_cm, "SSD of the PDD table (cm)");
  add_positive(*rescale, "--to-ssd-cm", conversion->to_ssd_cm, "SSD wanted (cm)");
  add_positive(*rescale, "--dmax-cm", conversion->dmax_cm, "Depth of maximum dose (cm)");
  rescale->add_option("-o,--output", conversion->output_file, "Output CSV (default: standard output)");
  rescale->callback([conversion, &context] { run_rescale_pdd(*conversion, context); });

  auto* compare =
      command->add_subcommand("compare-tmr",
                              "Report measured TMR against TMR derived from PDD and Sp, per depth and field, "
                              "difference in %. Exit 0 all "
                              "within tolerance, 1 some outside, 2 nothing comparable, 3 bad input");
  compare->add_option("--pdd", conversion->pdd_file, "PDD table (depth_cm x field at the surface)")
      ->required();
  compare->add_option("--tmr", conversion->tmr_file, "Measured TMR table (depth_cm x field at depth)")
      ->required();
  compare->add_option("--sp", conversion->sp_file, "Sp table (field_cm,sp)")->required();
  add_positive(*compare, "--ssd-cm", conversion->ssd_cm, "SSD of the PDD table (cm)");
  add_positive(*compare, "--dmax-cm", conversion->dmax_cm, "Depth of maximum dose (cm)");
  compare->add_option("--tolerance-percent", conversion->tolerance_percent, "Tolerance (default 1 %)")
      ->check(CLI::PositiveNumber);
  compare->callback([conversion, &context] { run_compare_tmr(*conversion, context); });
}

}  // namespace countersign::cli
