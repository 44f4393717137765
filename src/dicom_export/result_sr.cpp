// The structured result: a Comprehensive SR whose root container holds the checked plan (a
// reference), the plan's verdict and reason, what the check used (beam data, policy, software),
// one container per beam with its numbers and verdict, and the caution.

#include <countersign/dicom_export/export_objects.hpp>

#include "dataset_writing.hpp"
#include "object_header.hpp"
#include "plan_source.hpp"
#include "sr_content.hpp"

#include <countersign/check/reason.hpp>
#include <countersign/report/html_report.hpp>
#include <countersign/util/version.hpp>

#include <dcmtk/dcmdata/dcdeftag.h>

namespace countersign::dicom_export {

namespace {

using namespace detail;

const Code& verdict_code(check::Status status) {
  switch (status) {
    case check::Status::within_tolerance:
      return codes::within_tolerance;
    case check::Status::outside_tolerance:
      return codes::outside_tolerance;
    case check::Status::not_checked:
      return codes::not_checked;
    case check::Status::skipped:
      return codes::skipped;
  }
  return codes::not_checked;
}

std::string reason_text(const check::Finding& finding) {
  return std::string{check::reason_code(finding.reason)} + ": " + finding.sentence;
}

void add_if(DcmItem& parent, const Code& concept_name, const std::optional<double>& value, const Code& unit) {
  if (value) add_number(parent, concept_name, *value, unit);
}

void add_beam(DcmItem& root, const check::BeamCheck& beam, const PlanSource& plan) {
  DcmItem& item = add_container(root, codes::beam);
  add_number(item, codes::beam_number, beam.beam_number, codes::no_units);
  const std::string name = plan.beam_name(beam.beam_number);
  add_text(item, codes::beam_name, name.empty() ? plan.own_text(beam.beam_name) : name);
  add_coded(item, codes::beam_verdict, verdict_code(beam.status));
  add_text(item, codes::reason, plan.own_text(reason_text(beam.reason)));
  add_if(item, codes::planned_dose, beam.planned_dose_gy, codes::gray);
  add_if(item, codes::computed_dose, beam.computed_dose_gy, codes::gray);
  add_if(item, codes::deviation, beam.deviation_percent, codes::percent);
  add_if(item, codes::tolerance, beam.tolerance_percent, codes::percent);
  add_if(item, codes::planned_meterset, beam.meterset_mu, codes::monitor_units);
  add_if(item, codes::independent_meterset, beam.independent_mu, codes::monitor_units);
}

// SR Document General (PS3.3 C.17.2): unverified (nobody has signed it), with the plan as evidence.
void write_document_general(DcmItem& dataset, const PlanSource& plan, const ExportOptions& options) {
  const LocalDateTime now = local_date_time(options.created);
  put_empty_sequence(dataset, DCM_ReferencedPerformedProcedureStepSequence);
  put(dataset, DCM_CompletionFlag, "COMPLETE");
  put(dataset, DCM_VerificationFlag, "UNVERIFIED");
  put(dataset, DCM_ContentDate, now.date);
  put(dataset, DCM_ContentTime, now.time);
  put_empty_sequence(dataset, DCM_PerformedProcedureCodeSequence);
  DcmItem& study = append_item(dataset, DCM_CurrentRequestedProcedureEvidenceSequence);
  put(study, DCM_StudyInstanceUID, plan.study_instance_uid());
  DcmItem& series = append_item(study, DCM_ReferencedSeriesSequence);
  put(series, DCM_SeriesInstanceUID, plan.series_instance_uid());
  DcmItem& instance = append_item(series, DCM_ReferencedSOPSequence);
  put(instance, DCM_ReferencedSOPClassUID, plan.sop_class_uid());
  put(instance, DCM_ReferencedSOPInstanceUID, plan.sop_instance_uid());
  DcmItem& scheme = append_item(dataset, DCM_CodingSchemeIdentificationSequence);
  put(scheme, DCM_CodingSchemeDesignator, coding_scheme_designator);
  put(scheme, DCM_CodingSchemeName, coding_scheme_name);
  put(scheme, DCM_CodingSchemeVersion, coding_scheme_version);
  put(scheme, DCM_CodingSchemeResponsibleOrganization, coding_scheme_organization);
}

void write_content(DcmItem& dataset, const check::PlanCheck& check, const PlanSource& plan) {
  make_root_container(dataset, codes::report);
  add_reference(dataset, codes::checked_plan, plan.sop_class_uid(), plan.sop_instance_uid());
  add_coded(dataset, codes::plan_verdict, verdict_code(check.status));
  add_text(dataset, codes::reason, plan.own_text(reason_text(check.reason)));
  add_text(dataset, codes::beam_data,
           plan.own_text(check.beamdata_root + " (SHA-256 " + check.beamdata_sha256 + ")"));
  add_text(dataset, codes::tolerance_policy, plan.own_text(check.options.policy.source));
  add_text(dataset, codes::software, std::string{"countersign "} + version_string);
  for (const auto& beam : check.beams) add_beam(dataset, beam, plan);
  add_text(dataset, codes::caution, plan.own_text(report::caution_text()));
}

}  // namespace

Expected<ExportedObject> write_result_sr(const check::PlanCheck& check,
                                         const std::filesystem::path& plan_file,
                                         const std::filesystem::path& output, const ExportOptions& options) {
  auto plan = PlanSource::load(plan_file);
  if (!plan) return plan.error();
  try {
    DcmFileFormat file;
    DcmDataset& dataset = *file.getDataset();
    const ObjectIdentity identity = write_object_header(
        dataset, *plan,
        {comprehensive_sr_sop_class, "SR", "901", "Independent dose check result (countersign)"}, options);
    write_document_general(dataset, *plan, options);
    write_content(dataset, check, *plan);
    if (auto saved = save_object(file, output); !saved) return saved.error();
    return ExportedObject{output, comprehensive_sr_sop_class, identity.sop_instance_uid,
                          identity.series_instance_uid, plan->study_instance_uid()};
  } catch (const ExportDefect& defect) {
    return Error{ErrorKind::io, output.string(), "", "",
                 std::string{"cannot build the structured report: "} + defect.what()};
  }
}

}  // namespace countersign::dicom_export
