// `countersign explain PLAN.dcm --beam N [--study DIR] [--json]`: one beam in depth. The plan is checked
// exactly as `check` does it; the beam's factors, geometry, both formalisms and what would reconcile the two
// doses are then written out. The exit code is that beam's outcome (0, 1, 2; 3 for bad input).

#include <countersign/beamdata/library.hpp>
#include <countersign/check/check_plan.hpp>
#include <countersign/check/patient_study.hpp>
#include <countersign/cli/commands.hpp>
#include <countersign/dicom/read_plan.hpp>
#include <countersign/dicom/read_study.hpp>
#include <countersign/report/explain_report.hpp>
#include <countersign/report/json_text.hpp>

#include "bundled_data.hpp"
#include "shared_options.hpp"

#include <filesystem>
#include <memory>
#include <optional>
#include <ostream>
#include <string>
#include <vector>

namespace countersign::cli {

namespace {

struct ExplainCommandOptions {
  std::string plan;
  int beam = 0;
  std::optional<int> fraction_group;
  std::vector<std::string> study;  // --study DIR: the plan's CT and structure set
  CheckFlags flags;
  engine::SensitivityLimits limits;
  bool json = false;
};

ExitCode beam_exit_code(check::Status status) {
  switch (status) {
    case check::Status::within_tolerance:
      return ExitCode::all_within_tolerance;
    case check::Status::outside_tolerance:
      return ExitCode::outside_tolerance;
    case check::Status::not_checked:
      return ExitCode::not_checked;
    case check::Status::skipped:
      return ExitCode::all_within_tolerance;
  }
  return ExitCode::not_checked;
}

// The plan's study from --study, as `check --study` takes it; without --study, water with the
// plan's depths, and the result says so.
check::PatientStudy study_for_plan(const ExplainCommandOptions& options, const plan::Plan& plan,
                                   const beamdata::Library& library) {
  if (options.study.empty()) {
    return check::PatientStudy::none(
        "no CT study was given (--study DIR names the plan's CT and structure set): homogeneous water "
        "with the plan's depths");
  }
  if (plan.referenced_structure_set_uids.empty()) {
    return check::PatientStudy::none(
        "the plan names no structure set (Referenced Structure Set Sequence (300C,0060)): homogeneous water "
        "with the plan's depths");
  }
  const std::vector<std::filesystem::path> paths(options.study.begin(), options.study.end());
  return check::PatientStudy::from(dicom::load_study_for_plan(plan, paths), library);
}

ExitCode run_explain(const ExplainCommandOptions& options, Io& io) {
  use_bundled_reader_dictionary();
  auto configured = check_options_from(options.flags);
  if (!configured) {
    io.err << "countersign explain: " << configured.error().message() << "\n";
    return exit_code_for(configured.error());
  }
  check::CheckOptions check_options = configured.value();
  const std::filesystem::path library_dir = beamdata_folder(options.flags.beamdata);
  auto library = beamdata::load_library(library_dir);
  if (!library) {
    io.err << "countersign explain: " << library.error().message() << "\n";
    return exit_code_for(library.error());
  }
  auto plan = dicom::read_plan_file(options.plan);
  if (!plan) {
    io.err << plan.error().message() << "\n";
    return exit_code_for(plan.error());
  }
  const check::PatientStudy study = study_for_plan(options, plan.value(), library.value());
  check::use_study(check_options, study);
  const check::PlanCheck result = check::check_plan(plan.value(), library.value(), check_options);
  const check::BeamCheck* beam = report::find_beam(result, options.beam, options.fraction_group);
  if (beam == nullptr) {
    io.err << options.plan << ": BeamNumber (300A,00C0): no beam " << options.beam
           << (options.fraction_group ? " in fraction group " + std::to_string(*options.fraction_group)
                                      : std::string{})
           << " is referenced by a fraction group of the plan\n";
    return ExitCode::bad_input;
  }
  const report::BeamExplanation explanation = report::explain_beam(*beam, options.limits);
  if (options.json) {
    io.out << report::json_text(report::explanation_to_json(result, *beam, explanation));
  } else {
    io.out << report::explanation_text(result, *beam, explanation);
  }
  return beam_exit_code(beam->status);
}

}  // namespace

void add_explain_command(CLI::App& app, CommandContext& context) {
  auto options = std::make_shared<ExplainCommandOptions>();
  auto* command = app.add_subcommand(
      "explain",
      "Explain one beam: every factor and where it came from in the tables, the geometry, the TMR and PDD "
      "formalisms side by side, and the change of depth, SSD or field size that alone would reconcile the "
      "independent dose with the planned dose. Exit code: the beam's outcome (0 within, 1 outside, 2 not "
      "checked; 3 bad input).");
  command->add_option("plan", options->plan, "RT Plan file")->required();
  command->add_option("--beam", options->beam, "Beam Number (300A,00C0) of the beam to explain")->required();
  command->add_option("--fraction-group", options->fraction_group,
                      "Fraction Group Number (300A,0071) (default: the first that references the beam)");
  add_check_flags(*command, options->flags);
  command->add_option("--study", options->study,
                      "folder(s) or files with the plan's CT series and RT Structure Set, as for `check "
                      "--study`; depths and SSD then come from the CT");
  command
      ->add_option("--search-depth-cm", options->limits.depth_cm,
                   "how far the depth search goes each way (default 10)")
      ->check(CLI::PositiveNumber);
  command
      ->add_option("--search-ssd-cm", options->limits.ssd_cm,
                   "how far the SSD search goes each way (default 20)")
      ->check(CLI::PositiveNumber);
  command
      ->add_option("--search-field-cm", options->limits.field_cm,
                   "how far the field-size search goes each way (default 10)")
      ->check(CLI::PositiveNumber);
  command->add_flag("--json", options->json, "write JSON instead of text");
  command->callback([options, &context] { context.exit_code = run_explain(*options, context.io); });
}

}  // namespace countersign::cli
