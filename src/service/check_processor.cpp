#include <countersign/service/check_processor.hpp>

#include <countersign/check/reason.hpp>
#include <countersign/dicom/read_plan.hpp>
#include <countersign/engine/point_dose.hpp>
#include <countersign/report/check_json.hpp>
#include <countersign/report/html_report.hpp>
#include <countersign/report/json_text.hpp>

#include <string>
#include <utility>

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

}  // namespace

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
  return [library = std::move(library), options = std::move(options)](
             const std::filesystem::path& file, std::span<const std::byte> bytes) -> Expected<PlanOutcome> {
    auto plan = dicom::read_plan_bytes(bytes, file.string());
    if (!plan) return std::move(plan).error();
    const check::PlanCheck check = check::check_plan(plan.value(), *library, options);
    PlanOutcome outcome = outcome_from_check(check, plan.value());
    outcome.json_text =
        report::json_text(report::check_run_to_json({check}, {}, static_cast<int>(check.exit_code())));
    outcome.html_text = report::html_report(check);
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
