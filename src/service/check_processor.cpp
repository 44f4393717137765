#include <countersign/service/check_processor.hpp>

#include <countersign/check/patient_study.hpp>
#include <countersign/check/reason.hpp>
#include <countersign/dicom/read_plan.hpp>
#include <countersign/dicom/read_study.hpp>
#include <countersign/dicom_export/export_objects.hpp>
#include <countersign/engine/point_dose.hpp>
#include <countersign/report/check_json.hpp>
#include <countersign/report/html_report.hpp>
#include <countersign/report/json_text.hpp>
#include <countersign/util/sha256.hpp>

#include <charconv>
#include <cstdlib>
#include <fstream>
#include <iterator>
#include <string>
#include <utility>

#include <unistd.h>

namespace countersign::service {

namespace {

BeamVerdict beam_verdict(check::Status status) {
  switch (status) {
    case check::Status::within_tolerance:
      return BeamVerdict::within_tolerance;
    case check::Status::outside_tolerance:
      return BeamVerdict::outside_tolerance;
    case check::Status::not_checked:
      return BeamVerdict::not_checked;
    case check::Status::skipped:
      return BeamVerdict::skipped;
  }
  return BeamVerdict::not_checked;
}

std::string technique_of(const check::BeamCheck& beam) {
  if (!beam.calculation) return "unknown";
  const std::string category =
      beam.category ? std::string{check::to_code(*beam.category)} : std::string{"unknown"};
  return category + "/" + std::string{engine::to_code(beam.calculation->method)};
}

// The structured result (SR) of the check, made now from the plan file while it is still in the
// inbox, and kept as bytes so that the service writes it with the record under the check's number.
void add_structured_result(PlanOutcome& outcome, const check::PlanCheck& check,
                           const std::filesystem::path& file) {
  std::error_code ec;
  std::string pattern = (std::filesystem::temp_directory_path(ec) / "countersign-sr-XXXXXX").string();
  const int fd = ::mkstemp(pattern.data());
  if (fd < 0) {
    outcome.sr_problem = "cannot create a temporary file for it";
    return;
  }
  ::close(fd);
  const std::filesystem::path temporary = pattern;
  auto written = dicom_export::write_result_sr(check, file, temporary);
  if (written) {
    std::ifstream in(temporary, std::ios::binary);
    outcome.sr_bytes = std::string{std::istreambuf_iterator<char>{in}, std::istreambuf_iterator<char>{}};
  } else {
    outcome.sr_problem = written.error().message();
  }
  std::filesystem::remove(temporary, ec);
}

}  // namespace

std::string policy_sha256(const check::TolerancePolicy& policy) {
  // Every value that changes a verdict, by name, in its shortest exact form; where the policy came
  // from (`source`) is not part of it: the same values from another file are the same policy.
  const std::pair<const char*, double> values[] = {
      {"simple_percent", policy.simple_percent},
      {"complex_percent", policy.complex_percent},
      {"modulated_percent", policy.modulated_percent},
      {"simple_heterogeneous_percent", policy.simple_heterogeneous_percent},
      {"complex_heterogeneous_percent", policy.complex_heterogeneous_percent},
      {"modulated_heterogeneous_percent", policy.modulated_heterogeneous_percent},
      {"simple_max_off_axis_cm", policy.simple_max_off_axis_cm},
      {"simple_max_jaw_offset_cm", policy.simple_max_jaw_offset_cm},
      {"simple_min_open_fraction", policy.simple_min_open_fraction},
      {"heterogeneous_depth_difference_percent", policy.heterogeneous_depth_difference_percent},
      {"min_edge_distance_cm", policy.min_edge_distance_cm},
      {"max_depth_discrepancy_cm", policy.max_depth_discrepancy_cm},
      {"depth_check_max_off_axis_cm", policy.depth_check_max_off_axis_cm},
      {"wedge_max_off_axis_cm", policy.wedge_max_off_axis_cm},
      {"small_share_fraction", policy.small_share_fraction},
  };
  std::string text;
  for (const auto& [name, value] : values) {
    char number[32];
    const auto [end, error] = std::to_chars(number, number + sizeof number, value);
    text +=
        std::string{name} + "=" + (error == std::errc{} ? std::string{number, end} : std::string{"?"}) + "\n";
  }
  return util::sha256_hex(text);
}

PlanOutcome outcome_from_check(const check::PlanCheck& check, const plan::Plan& plan) {
  PlanOutcome outcome;
  outcome.sop_instance_uid = check.sop_instance_uid;
  outcome.patient_id = check.patient_id;
  outcome.plan_label = check.plan_label;
  outcome.beamdata_sha256 = check.beamdata_sha256;
  switch (check.exit_code()) {
    case ExitCode::all_within_tolerance:
      outcome.verdict = PlanVerdict::within_tolerance;
      break;
    case ExitCode::outside_tolerance:
      outcome.verdict = PlanVerdict::outside_tolerance;
      break;
    default:
      outcome.verdict = PlanVerdict::not_checked;
      break;
  }
  for (const auto& beam_check : check.beams) {
    BeamOutcome beam;
    beam.beam_number = beam_check.beam_number;
    beam.beam_name = beam_check.beam_name;
    if (const plan::Beam* planned = plan.beam(beam_check.beam_number)) {
      beam.machine = planned->machine_name;
      if (!planned->control_points.empty())
        beam.energy_mv = planned->control_points.front().nominal_energy_mv;
    }
    beam.technique = technique_of(beam_check);
    beam.verdict = beam_verdict(beam_check.status);
    // A difference is kept only for a judged beam: a not-checked beam's number must not enter trends.
    if (beam.verdict == BeamVerdict::within_tolerance || beam.verdict == BeamVerdict::outside_tolerance) {
      beam.deviation_percent = beam_check.deviation_percent;
      beam.tolerance_percent = beam_check.tolerance_percent;
    } else {
      beam.reason = std::string{check::reason_code(beam_check.reason.reason)};
    }
    outcome.beams.push_back(std::move(beam));
  }
  return outcome;
}

PlanProcessor make_check_processor(std::shared_ptr<const beamdata::Library> library,
                                   check::CheckOptions options) {
  const std::string policy_hash = policy_sha256(options.policy);
  return [library = std::move(library), options = std::move(options), policy_hash](
             const std::filesystem::path& file, std::span<const std::byte> bytes,
             const StudyContext& study) -> Expected<PlanOutcome> {
    auto plan = dicom::read_plan_bytes(bytes, file.string());
    if (!plan) return std::move(plan).error();
    check::CheckOptions plan_options = options;
    std::optional<check::PatientStudy> patient;
    if (!study.folders.empty()) {
      patient.emplace(
          check::PatientStudy::from(dicom::load_study_for_plan(plan.value(), study.folders), *library));
    } else if (!study.note.empty()) {
      patient.emplace(check::PatientStudy::none(study.note));
    }
    if (patient) check::use_study(plan_options, *patient);
    const check::PlanCheck check = check::check_plan(plan.value(), *library, plan_options);
    PlanOutcome outcome = outcome_from_check(check, plan.value());
    outcome.json_text =
        report::json_text(report::check_run_to_json({check}, {}, static_cast<int>(check.exit_code())));
    outcome.html_text = report::html_report(check);
    outcome.policy_sha256 = policy_hash;
    add_structured_result(outcome, check, file);
    return outcome;
  };
}

Expected<PlanProcessor> load_check_processor(const std::filesystem::path& beamdata_dir,
                                             check::CheckOptions options) {
  auto library = beamdata::load_library(beamdata_dir);
  if (!library) return std::move(library).error();
  return make_check_processor(std::make_shared<const beamdata::Library>(std::move(library).value()),
                              std::move(options));
}

}  // namespace countersign::service
