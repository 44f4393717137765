// The commissioning conversions: TMR from PDD and Sp, PDD at another SSD, and measured TMR against
// TMR derived from PDD. Cells that would need extrapolation are left empty (and the command fails)
// unless --allow-extrapolation is given; then they are listed in a provenance note.

#include "beamdata_subcommands.hpp"

#include <countersign/beamdata/conversions.hpp>
#include <countersign/beamdata/csv.hpp>
#include <countersign/beamdata/sha256.hpp>
#include <countersign/beamdata/validation.hpp>
#include <countersign/util/version.hpp>

#include <algorithm>
#include <cmath>
#include <fstream>
#include <memory>
#include <sstream>

namespace countersign::cli::beamdata_cli {

namespace {

namespace bd = countersign::beamdata;

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
  std::vector<double> depths_cm;
  bool allow_extrapolation = false;
};

// Reports a file that cannot be used and sets the bad-input exit code; true when `value` is usable.
template <class T>
bool usable(const Expected<T>& value, CommandContext& context) {
  if (value) return true;
  context.io.err << value.error().message() << '\n';
  context.exit_code = ExitCode::bad_input;
  return false;
}

std::string quoted(const std::string& s) {
  std::string out = "\"";
  for (const char c : s) out += (c == '"' || c == '\\') ? std::string{'\\', c} : std::string{c};
  return out + "\"";
}

std::string file_sha256(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream bytes;
  bytes << in.rdbuf();
  return bd::sha256_hex(bytes.str());
}

// `<output>.provenance.toml`: the inputs, the method and every cell filled by extrapolation.
bool write_provenance(const std::string& output, const std::string& command, const std::string& method,
                      const std::vector<std::string>& inputs, const bd::DerivedTable& derived) {
  std::ofstream out(output + ".provenance.toml", std::ios::binary);
  out << "# Provenance of " << output << ", written by countersign beamdata " << command
      << ". Not part of the beam-data\n# format nor of the library's SHA-256; `beamdata validate` reads it "
         "and warns "
         "about extrapolated cells.\n"
      << "software = " << quoted(std::string{"countersign "} + version_string) << "\n"
      << "method = " << quoted(method) << "\n"
      << "output_sha256 = " << quoted(file_sha256(output)) << "\n";
  for (const auto& input : inputs)
    out << "\n[[input]]\nfile = " << quoted(input) << "\nsha256 = " << quoted(file_sha256(input)) << "\n";
  const auto& t = derived.table;
  for (std::size_t r = 0; r < t.rows().size(); ++r) {
    for (std::size_t c = 0; c < t.columns().size(); ++c) {
      const std::size_t i = r * t.columns().size() + c;
      if (!derived.extrapolated[i]) continue;
      out << "\n[[cell]]\n"
          << t.row_axis_name() << " = " << t.rows()[r] << "\n"
          << t.column_axis_name() << " = " << t.columns()[c]
          << "\nextrapolated = true\nhow = " << quoted(derived.how[i]) << "\n";
    }
  }
  out.close();
  return static_cast<bool>(out);
}

// Writes a derived table under the extrapolation rule; sets the exit code.
void finish_derived(bd::DerivedTable derived, std::vector<std::string> comments, int decimals,
                    const std::string& command, const std::string& method,
                    const std::vector<std::string>& inputs, const ConversionOptions& o,
                    CommandContext& context) {
  const std::size_t count = derived.extrapolated_count();
  auto& t = derived.table;
  std::vector<double> values;
  for (std::size_t r = 0; r < t.rows().size(); ++r) {
    for (std::size_t c = 0; c < t.columns().size(); ++c) {
      const std::size_t i = r * t.columns().size() + c;
      const bool empty = derived.extrapolated[i] && !o.allow_extrapolation;
      values.push_back(empty ? std::nan("") : t.cell(r, c));
      if (derived.extrapolated[i])
        comments.push_back(
            std::string{o.allow_extrapolation ? "EXTRAPOLATED" : "EMPTY (would need extrapolation)"} +
            " at " + t.row_axis_name() + " " + fixed(t.rows()[r], 2) + ", " + t.column_axis_name() + " " +
            fixed(t.columns()[c], 1) + ": " + derived.how[i]);
    }
  }
  derived.table =
      bd::Table2D{t.file(),    t.quantity(),     t.row_axis_name(), t.rows(), t.column_axis_name(),
                  t.columns(), std::move(values)};
  if (!emit(o.output_file, context.io,
            [&](std::ostream& out) { bd::write_table(out, derived.table, comments, decimals); }) ||
      (!o.output_file.empty() && !write_provenance(o.output_file, command, method, inputs, derived))) {
    context.exit_code = ExitCode::bad_input;
    return;
  }
  context.exit_code = ExitCode::all_within_tolerance;
  if (count == 0) return;
  if (o.allow_extrapolation) {
    context.io.err << "warning: " << count << " cell(s) extrapolated (listed in the comments"
                   << (o.output_file.empty() ? "" : " and in " + o.output_file + ".provenance.toml") << ")\n";
    return;
  }
  context.io.err
      << count << " cell(s) left empty: they would need values outside the input tables (listed in the "
      << "comments). Measure further, choose another grid, or give --allow-extrapolation to fill them "
      << "and record them in the provenance note\n";
  context.exit_code = ExitCode::bad_input;
}

void run_derive_tmr(const ConversionOptions& o, CommandContext& context) {
  const auto pdd = bd::read_table2d(o.pdd_file, "pdd", "depth_cm", "field_cm");
  const auto sp = bd::read_table1d(o.sp_file, "sp");
  if (!usable(pdd, context) || !usable(sp, context)) return;
  const std::vector<double> fields = o.fields_cm.empty() ? pdd->columns() : o.fields_cm;
  bd::DerivedTable derived = bd::derive_tmr_table(*pdd, *sp, o.ssd_cm, o.dmax_cm, fields, o.output_file);
  const std::string method = "TMR = PDD/100 ((f+d)/(f+dm))^2 Sp(s_dm)/Sp(s_d), AAPM TG-71; bilinear lookups";
  std::vector<std::string> comments = {
      "TMR derived by countersign beamdata derive-tmr from " + o.pdd_file + " (SSD " + fixed(o.ssd_cm, 1) +
          " cm) and " + o.sp_file + ", dmax " + fixed(o.dmax_cm, 2) + " cm",
      method + "; columns: square field side at depth (cm)",
      "Review before use: the relation is unreliable in the build-up region (depth < dmax)"};
  finish_derived(std::move(derived), std::move(comments), 4, "derive-tmr", method, {o.pdd_file, o.sp_file}, o,
                 context);
}

void run_rescale_pdd(const ConversionOptions& o, CommandContext& context) {
  const auto pdd = bd::read_table2d(o.pdd_file, "pdd", "depth_cm", "field_cm");
  if (!usable(pdd, context)) return;
  const std::vector<double> depths = o.depths_cm.empty() ? pdd->rows() : o.depths_cm;
  const std::vector<double> fields = o.fields_cm.empty() ? pdd->columns() : o.fields_cm;
  bd::DerivedTable rescaled =
      bd::rescale_pdd_table(*pdd, o.ssd_cm, o.to_ssd_cm, o.dmax_cm, depths, fields, o.output_file);
  const std::string method = "Mayneord F factor, same field side at the surface; bilinear lookups";
  std::vector<std::string> comments = {
      "PDD at SSD " + fixed(o.to_ssd_cm, 1) + " cm from " + o.pdd_file + " (SSD " + fixed(o.ssd_cm, 1) +
          " cm) by the Mayneord F factor, dmax " + fixed(o.dmax_cm, 2) +
          " cm; same field side at the surface",
      "The F factor ignores the change in phantom scatter with SSD; review before use"};
  finish_derived(std::move(rescaled), std::move(comments), 2, "rescale-pdd", method, {o.pdd_file}, o,
                 context);
}

void print_comparison_csv(std::ostream& out, const std::vector<bd::TmrComparison>& comparisons,
                          double tolerance) {
  out << "depth_cm,field_cm,measured_tmr,derived_tmr,difference_percent,status\n";
  for (const auto& c : comparisons) {
    const std::string status = c.extrapolated                               ? "not_compared_extrapolated"
                               : std::abs(c.difference_percent) > tolerance ? "outside"
                                                                            : "within";
    out << fixed(c.depth_cm, 2) << ',' << fixed(c.field_at_depth_cm, 1) << ',' << fixed(c.measured_tmr, 4)
        << ',' << fixed(c.derived_tmr, 4) << ',' << fixed(c.difference_percent, 2) << ',' << status << '\n';
  }
}

void run_compare_tmr(const ConversionOptions& o, CommandContext& context) {
  const auto pdd = bd::read_table2d(o.pdd_file, "pdd", "depth_cm", "field_cm");
  const auto tmr = bd::read_table2d(o.tmr_file, "tmr", "depth_cm", "field_cm");
  const auto sp = bd::read_table1d(o.sp_file, "sp");
  if (!usable(pdd, context) || !usable(tmr, context) || !usable(sp, context)) return;
  const auto comparisons = bd::compare_tmr(*tmr, *pdd, *sp, o.ssd_cm, o.dmax_cm, o.dmax_cm);
  std::vector<const bd::TmrComparison*> outside;
  std::size_t not_compared = 0;
  for (const auto& c : comparisons) {
    if (c.extrapolated)
      ++not_compared;
    else if (std::abs(c.difference_percent) > o.tolerance_percent)
      outside.push_back(&c);
  }
  std::sort(outside.begin(), outside.end(), [](const auto* a, const auto* b) {
    return std::abs(a->difference_percent) > std::abs(b->difference_percent);
  });
  const std::size_t compared = comparisons.size() - not_compared;
  auto& out = context.io.out;
  out << "# measured TMR (" << o.tmr_file << ") against TMR derived from " << o.pdd_file << " and "
      << o.sp_file << ", depths >= dmax " << fixed(o.dmax_cm, 2) << " cm, tolerance "
      << fixed(o.tolerance_percent, 2) << " %\n"
      << "# summary: " << compared << " node(s) compared, " << outside.size() << " outside tolerance, "
      << not_compared << " not compared (derivation would need extrapolation)\n";
  for (std::size_t i = 0; i < outside.size() && i < 20; ++i)
    out << "# outside: depth " << fixed(outside[i]->depth_cm, 2) << " cm, field "
        << fixed(outside[i]->field_at_depth_cm, 1)
        << " cm: " << (outside[i]->difference_percent > 0 ? "+" : "")
        << fixed(outside[i]->difference_percent, 2) << " %\n";
  if (outside.size() > 20) out << "# ... and " << outside.size() - 20 << " more (largest first)\n";
  if (o.output_file.empty()) {
    print_comparison_csv(out, comparisons, o.tolerance_percent);
  } else if (emit(o.output_file, context.io, [&](std::ostream& file) {
               print_comparison_csv(file, comparisons, o.tolerance_percent);
             })) {
    out << "# every node: " << o.output_file << "\n";
  } else {
    context.exit_code = ExitCode::bad_input;
    return;
  }
  context.exit_code = compared == 0      ? ExitCode::not_checked
                      : !outside.empty() ? ExitCode::outside_tolerance
                                         : ExitCode::all_within_tolerance;
}

void add_positive(CLI::App& command, const std::string& name, double& value, const std::string& help) {
  command.add_option(name, value, help)->required()->check(CLI::PositiveNumber);
}

void add_derive_tmr(CLI::App& beamdata, const std::shared_ptr<ConversionOptions>& o,
                    CommandContext& context) {
  auto* derive = beamdata.add_subcommand(
      "derive-tmr",
      "Compute a TMR table (depth x field at depth) from a measured PDD table and Sp. Cells that would need "
      "extrapolation are left empty and the command fails (exit 3), unless --allow-extrapolation");
  derive->add_option("--pdd", o->pdd_file, "PDD table (depth_cm x field at the surface)")->required();
  derive->add_option("--sp", o->sp_file, "Sp table (field_cm,sp)")->required();
  add_positive(*derive, "--ssd-cm", o->ssd_cm, "SSD of the PDD table (cm)");
  add_positive(*derive, "--dmax-cm", o->dmax_cm, "Depth of maximum dose (cm)");
  derive
      ->add_option("--fields-cm", o->fields_cm, "Field sides at depth for the output (default: PDD columns)")
      ->delimiter(',');
  derive->add_option("-o,--output", o->output_file,
                     "Output CSV (default: standard output); a provenance note "
                     "OUTPUT.provenance.toml is written beside it");
  derive->add_flag(
      "--allow-extrapolation", o->allow_extrapolation,
      "Fill cells that need extrapolation, and list them in the comments and the provenance note");
  derive->callback([o, &context] { run_derive_tmr(*o, context); });
}

void add_rescale_pdd(CLI::App& beamdata, const std::shared_ptr<ConversionOptions>& o,
                     CommandContext& context) {
  auto* rescale = beamdata.add_subcommand(
      "rescale-pdd",
      "Convert a PDD table to another SSD with the Mayneord F factor, optionally onto another grid. "
      "Cells outside the input are left empty (exit 3) unless --allow-extrapolation");
  rescale->add_option("--pdd", o->pdd_file, "PDD table (depth_cm x field at the surface)")->required();
  add_positive(*rescale, "--from-ssd-cm", o->ssd_cm, "SSD of the PDD table (cm)");
  add_positive(*rescale, "--to-ssd-cm", o->to_ssd_cm, "SSD wanted (cm)");
  add_positive(*rescale, "--dmax-cm", o->dmax_cm, "Depth of maximum dose (cm)");
  rescale->add_option("--depths-cm", o->depths_cm, "Depths of the output (default: the input's)")
      ->delimiter(',');
  rescale->add_option("--fields-cm", o->fields_cm, "Surface field sides of the output (default: the input's)")
      ->delimiter(',');
  rescale->add_option("-o,--output", o->output_file,
                      "Output CSV (default: standard output); a provenance note "
                      "OUTPUT.provenance.toml is written beside it");
  rescale->add_flag(
      "--allow-extrapolation", o->allow_extrapolation,
      "Fill cells that need extrapolation, and list them in the comments and the provenance note");
  rescale->callback([o, &context] { run_rescale_pdd(*o, context); });
}

void add_compare_tmr(CLI::App& beamdata, const std::shared_ptr<ConversionOptions>& o,
                     CommandContext& context) {
  auto* compare = beamdata.add_subcommand(
      "compare-tmr",
      "Measured TMR against TMR derived from PDD and Sp: a summary first (counts, the nodes outside "
      "tolerance, "
      "largest first), then every node (or into -o FILE). Exit 0 all within, 1 some outside, 2 nothing "
      "comparable, 3 bad input");
  compare->add_option("--pdd", o->pdd_file, "PDD table (depth_cm x field at the surface)")->required();
  compare->add_option("--tmr", o->tmr_file, "Measured TMR table (depth_cm x field at depth)")->required();
  compare->add_option("--sp", o->sp_file, "Sp table (field_cm,sp)")->required();
  add_positive(*compare, "--ssd-cm", o->ssd_cm, "SSD of the PDD table (cm)");
  add_positive(*compare, "--dmax-cm", o->dmax_cm, "Depth of maximum dose (cm)");
  compare->add_option("--tolerance-percent", o->tolerance_percent, "Tolerance (default 1 %)")
      ->check(CLI::PositiveNumber);
  compare->add_option("-o,--output", o->output_file,
                      "Write every node (CSV) to this file instead of the output");
  compare->callback([o, &context] { run_compare_tmr(*o, context); });
}

}  // namespace

void add_conversions(CLI::App& beamdata, CommandContext& context) {
  add_derive_tmr(beamdata, std::make_shared<ConversionOptions>(), context);
  add_rescale_pdd(beamdata, std::make_shared<ConversionOptions>(), context);
  add_compare_tmr(beamdata, std::make_shared<ConversionOptions>(), context);
}

}  // namespace countersign::cli::beamdata_cli
