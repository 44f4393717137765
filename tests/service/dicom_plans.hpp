#pragma once

// Small DICOM objects for the receiver tests, written with DCMTK: a minimal RT Plan of the invented
// Fernhollow Radiotherapy Unit (invented patient, invented linac FERN-LINAC-1), and a processor that
// reads just its identifiers, standing in for the checking pipeline.

#include <countersign/service/plan_outcome.hpp>

#include <dcmtk/config/osconfig.h>

#include <dcmtk/dcmdata/dcdeftag.h>
#include <dcmtk/dcmdata/dcfilefo.h>
#include <dcmtk/dcmdata/dcitem.h>
#include <dcmtk/dcmdata/dcmetinf.h>
#include <dcmtk/dcmdata/dcuid.h>

#include <atomic>
#include <filesystem>
#include <memory>
#include <string>

namespace countersign::test {

inline std::string new_dicom_uid() {
  char buffer[100];
  dcmGenerateUniqueIdentifier(buffer, SITE_INSTANCE_UID_ROOT);
  return buffer;
}

// Invented demo data; not a clinical plan.
inline bool write_demo_rt_plan(const std::filesystem::path& file, const std::string& uid,
                               const std::string& patient_id) {
  DcmFileFormat format;
  DcmDataset* dataset = format.getDataset();
  dataset->putAndInsertString(DCM_SOPClassUID, UID_RTPlanStorage);
  dataset->putAndInsertString(DCM_SOPInstanceUID, uid.c_str());
  dataset->putAndInsertString(DCM_StudyInstanceUID, new_dicom_uid().c_str());
  dataset->putAndInsertString(DCM_SeriesInstanceUID, new_dicom_uid().c_str());
  dataset->putAndInsertString(DCM_Modality, "RTPLAN");
  dataset->putAndInsertString(DCM_PatientName, "DEMO^FERNHOLLOW");
  dataset->putAndInsertString(DCM_PatientID, patient_id.c_str());
  dataset->putAndInsertString(DCM_InstitutionName, "Fernhollow Radiotherapy Unit (invented)");
  dataset->putAndInsertString(DCM_RTPlanLabel, "DEMO");
  dataset->putAndInsertString(DCM_RTPlanGeometry, "PATIENT");
  DcmItem* beam = nullptr;
  if (dataset->findOrCreateSequenceItem(DCM_BeamSequence, beam, -2).good() && beam != nullptr) {
    beam->putAndInsertString(DCM_BeamNumber, "1");
    beam->putAndInsertString(DCM_BeamName, "AP");
    beam->putAndInsertString(DCM_TreatmentMachineName, "FERN-LINAC-1");
    beam->putAndInsertString(DCM_RadiationType, "PHOTON");
  }
  return format.saveFile(file.c_str(), EXS_LittleEndianExplicit).good();
}

// Reads SOP Instance UID and Patient ID of a stored DICOM object; fails on anything that is not
// an RT Plan. Counts its calls.
inline service::PlanProcessor dicom_identity_processor(std::shared_ptr<std::atomic<int>> calls) {
  return [calls](const std::filesystem::path& file, std::span<const std::byte>,
                 const service::StudyContext& /*study*/) -> Expected<service::PlanOutcome> {
    DcmFileFormat format;
    if (format.loadFile(file.c_str()).bad()) {
      return Error{ErrorKind::not_dicom, file.string(), "", "", "not a readable DICOM file"};
    }
    OFString sop_class;
    OFString uid;
    OFString patient;
    format.getDataset()->findAndGetOFString(DCM_SOPClassUID, sop_class);
    format.getDataset()->findAndGetOFString(DCM_SOPInstanceUID, uid);
    format.getDataset()->findAndGetOFString(DCM_PatientID, patient);
    if (sop_class != UID_RTPlanStorage) {
      return Error{ErrorKind::wrong_sop_class, file.string(), "SOPClassUID", "(0008,0016)", "not an RT Plan"};
    }
    service::PlanOutcome outcome;
    outcome.sop_instance_uid = uid.c_str();
    outcome.patient_id = patient.c_str();
    outcome.verdict = service::PlanVerdict::not_checked;
    outcome.json_text = "{\"sop_instance_uid\": \"" + outcome.sop_instance_uid + "\"}\n";
    ++*calls;
    return outcome;
  };
}

}  // namespace countersign::test
