// The whole RT Plan dataset: SOP class, plan identification, patient setups, dose references,
// beams, fraction groups, and the cross-references between them.

#include "parse.hpp"

#include <countersign/dicom/read_plan.hpp>
#include <countersign/dicom/read_plan_dataset.hpp>

#include <dcmtk/dcmdata/dcdeftag.h>
#include <dcmtk/dcmdata/dcuid.h>

#include <fmt/format.h>

#include <algorithm>

namespace countersign::dicom {

namespace detail {

namespace {

constexpr const char* rt_ion_plan_storage_uid = "1.2.840.10008.5.1.4.1.1.481.8";

bool check_sop_class(const ItemReader& dataset, plan::Plan& plan) {
  plan.sop_class_uid = dataset.text(DCM_SOPClassUID, Need::required);
  if (dataset.failed()) return false;
  if (plan.sop_class_uid == rt_plan_storage_uid) return true;
  const std::string name = dcmFindNameOfUID(plan.sop_class_uid.c_str(), "an unknown SOP class");
  const std::string what = plan.sop_class_uid == rt_ion_plan_storage_uid
                               ? "an RT Ion Plan; ion plans are not supported"
                               : "not an RT Plan (" + std::string{rt_plan_storage_uid} + ")";
  dataset.fail(ErrorKind::wrong_sop_class, DCM_SOPClassUID,
               fmt::format("is {} ({}): {}", printable(plan.sop_class_uid), name, what));
  return false;
}

std::vector<plan::PatientSetup> parse_patient_setups(const ItemReader& dataset) {
  std::vector<plan::PatientSetup> setups;
  for (const auto& item : dataset.sequence(DCM_PatientSetupSequence, Need::optional)) {
    plan::PatientSetup setup;
    setup.number = item.integer(DCM_PatientSetupNumber, Need::required).value_or(0);
    setup.patient_position = item.term<plan::PatientPosition>(DCM_PatientPosition, Need::optional);
    setup.setup_technique = item.term<plan::SetupTechnique>(DCM_SetupTechnique, Need::optional);
    setup.setup_technique_description = item.text(DCM_SetupTechniqueDescription, Need::optional);
    if (std::any_of(setups.begin(), setups.end(),
                    [&setup](const plan::PatientSetup& s) { return s.number == setup.number; })) {
      item.fail(ErrorKind::inconsistent, DCM_PatientSetupNumber,
                fmt::format("number {} is used twice", setup.number));
    }
    setups.push_back(std::move(setup));
  }
  return setups;
}

std::vector<plan::DoseReference> parse_dose_references(const ItemReader& dataset) {
  std::vector<plan::DoseReference> refs;
  for (const auto& item : dataset.sequence(DCM_DoseReferenceSequence, Need::optional)) {
    plan::DoseReference ref;
    ref.number = item.integer(DCM_DoseReferenceNumber, Need::required).value_or(0);
    ref.uid = item.text(DCM_DoseReferenceUID, Need::optional);
    ref.structure_type =
        item.term<plan::DoseReferenceStructure>(DCM_DoseReferenceStructureType, Need::required);
    ref.description = item.text(DCM_DoseReferenceDescription, Need::optional);
    ref.type = item.text(DCM_DoseReferenceType, Need::required);
    // Type 1C: required when the structure type is COORDINATES.
    const auto point = item.numbers(
        DCM_DoseReferencePointCoordinates,
        ref.structure_type == plan::DoseReferenceStructure::coordinates ? Need::required : Need::optional, 3);
    if (point) ref.point_mm = plan::PointMm{(*point)[0], (*point)[1], (*point)[2]};
    auto dose = [&item](const DcmTagKey& tag) {
      return item.within(tag, item.number(tag, Need::optional), 0.0, 100000.0, "Gy");
    };
    ref.delivery_warning_dose_gy = dose(DCM_DeliveryWarningDose);
    ref.delivery_maximum_dose_gy = dose(DCM_DeliveryMaximumDose);
    ref.target_minimum_dose_gy = dose(DCM_TargetMinimumDose);
    ref.target_prescription_dose_gy = dose(DCM_TargetPrescriptionDose);
    ref.target_maximum_dose_gy = dose(DCM_TargetMaximumDose);
    ref.organ_at_risk_full_volume_dose_gy = dose(DCM_OrganAtRiskFullVolumeDose);
    ref.organ_at_risk_limit_dose_gy = dose(DCM_OrganAtRiskLimitDose);
    ref.organ_at_risk_maximum_dose_gy = dose(DCM_OrganAtRiskMaximumDose);
    if (std::any_of(refs.begin(), refs.end(),
                    [&ref](const plan::DoseReference& r) { return r.number == ref.number; })) {
      item.fail(ErrorKind::inconsistent, DCM_DoseReferenceNumber,
                fmt::format("number {} is used twice", ref.number));
    }
    refs.push_back(std::move(ref));
  }
  return refs;
}

}  // namespace

void check_references(const ItemReader& dataset, const plan::Plan& plan) {
  for (const auto& group : plan.fraction_groups) {
    for (const auto& ref : group.beams) {
      if (plan.beam(ref.beam_number) == nullptr) {
        dataset.fail(
            ErrorKind::inconsistent, DCM_ReferencedBeamNumber,
            fmt::format("fraction group {} refers to beam {}, which is not in BeamSequence (300A,00B0)",
                        group.number, ref.beam_number));
        return;
      }
      if (ref.verification_dose_reference_number &&
          plan.dose_reference(*ref.verification_dose_reference_number) == nullptr) {
        dataset.fail(ErrorKind::inconsistent, DCM_ReferencedDoseReferenceNumber,
                     fmt::format("fraction group {}, beam {} refers to dose reference {}, which is not in "
                                 "DoseReferenceSequence (300A,0010)",
                                 group.number, ref.beam_number, *ref.verification_dose_reference_number));
        return;
      }
    }
  }
  for (const auto& beam : plan.beams) {
    if (beam.referenced_patient_setup_number &&
        plan.patient_setup(*beam.referenced_patient_setup_number) == nullptr) {
      dataset.fail(
          ErrorKind::inconsistent, DCM_ReferencedPatientSetupNumber,
          fmt::format("beam {} refers to patient setup {}, which is not in PatientSetupSequence (300A,0180)",
                      beam.number, *beam.referenced_patient_setup_number));
      return;
    }
    auto check_dose_ref = [&](int number, const char* where) {
      if (plan.dose_reference(number) != nullptr) return true;
      dataset.fail(
          ErrorKind::inconsistent, DCM_ReferencedDoseReferenceNumber,
          fmt::format("beam {} {} refers to dose reference {}, which is not in DoseReferenceSequence "
                      "(300A,0010)",
                      beam.number, where, number));
      return false;
    };
    for (const auto& ref : beam.dose_references) {
      if (!check_dose_ref(ref.dose_reference_number, "(ReferencedDoseReferenceSequence)")) return;
    }
    for (const auto& cp : beam.control_points) {
      for (const auto& coefficient : cp.dose_reference_coefficients) {
        if (!check_dose_ref(coefficient.dose_reference_number,
                            fmt::format("control point {}", cp.index).c_str()))
          return;
      }
    }
  }
}

}  // namespace detail

Expected<plan::Plan> read_plan_dataset(DcmItem& dataset, std::string display_name) {
  using detail::Need;
  plan::Plan plan;
  plan.source_file = std::move(display_name);
  detail::ErrorSink sink;
  const detail::ItemReader top(dataset, plan.source_file, "", sink);
  if (!detail::check_sop_class(top, plan)) return sink.error();

  plan.sop_instance_uid = top.text(DCM_SOPInstanceUID, Need::required);
  plan.patient_id = top.text(DCM_PatientID, Need::optional);
  plan.patient_name = top.text(DCM_PatientName, Need::optional);
  plan.label = top.text(DCM_RTPlanLabel, Need::required);
  plan.name = top.text(DCM_RTPlanName, Need::optional);
  plan.description = top.text(DCM_RTPlanDescription, Need::optional);
  plan.date = top.text(DCM_RTPlanDate, Need::optional);
  plan.geometry = top.text(DCM_RTPlanGeometry, Need::optional);
  plan.approval_status = top.text(DCM_ApprovalStatus, Need::optional);
  plan.manufacturer = top.text(DCM_Manufacturer, Need::optional);
  plan.frame_of_reference_uid = top.text(DCM_FrameOfReferenceUID, Need::optional);
  // Read as given; whether the reference leads to a usable study is the study reader's question.
  for (const auto& item : top.sequence(DCM_ReferencedStructureSetSequence, Need::optional)) {
    plan.referenced_structure_set_uids.push_back(item.text(DCM_ReferencedSOPInstanceUID, Need::optional));
  }
  plan.specific_character_set = top.character_set();
  if (sink.failed()) return sink.error();

  plan.patient_setups = detail::parse_patient_setups(top);
  if (sink.failed()) return sink.error();
  plan.dose_references = detail::parse_dose_references(top);
  if (sink.failed()) return sink.error();
  plan.beams = detail::parse_beams(top);
  if (sink.failed()) return sink.error();
  plan.fraction_groups = detail::parse_fraction_groups(top, plan.dose_references);
  if (sink.failed()) return sink.error();
  detail::check_references(top, plan);
  if (sink.failed()) return sink.error();
  plan.warnings = sink.warnings();
  return plan;
}

}  // namespace countersign::dicom
