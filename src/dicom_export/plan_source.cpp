#include "plan_source.hpp"

#include <dcmtk/dcmdata/dcdeftag.h>
#include <dcmtk/dcmdata/dcsequen.h>

#include <array>
#include <cstdlib>

namespace countersign::dicom_export::detail {

namespace {

// Patient (PS3.3 C.7.1.1), General Study (C.7.2.1) and Patient Study (C.7.2.2) attributes copied
// as they are, sequences included. The first group is type 2 in the exported IODs: written empty
// when the plan lacks them.
const std::array type2_attributes{
    DCM_PatientName,    DCM_PatientID, DCM_PatientBirthDate,       DCM_PatientSex,
    DCM_StudyDate,      DCM_StudyTime, DCM_ReferringPhysicianName, DCM_StudyID,
    DCM_AccessionNumber};
const std::array optional_attributes{DCM_IssuerOfPatientID,
                                     DCM_IssuerOfPatientIDQualifiersSequence,
                                     DCM_PatientBirthTime,
                                     DCM_OtherPatientIDsSequence,
                                     DCM_OtherPatientNames,
                                     DCM_EthnicGroup,
                                     DCM_PatientComments,
                                     DCM_PatientIdentityRemoved,
                                     DCM_DeidentificationMethod,
                                     DCM_DeidentificationMethodCodeSequence,
                                     DCM_ReferringPhysicianIdentificationSequence,
                                     DCM_IssuerOfAccessionNumberSequence,
                                     DCM_StudyDescription,
                                     DCM_PhysiciansOfRecord,
                                     DCM_ProcedureCodeSequence,
                                     DCM_PatientAge,
                                     DCM_PatientSize,
                                     DCM_PatientWeight};

std::string text_of(DcmItem& item, const DcmTagKey& tag) {
  OFString value;
  item.findAndGetOFString(tag, value);
  return value.c_str();
}

void copy_element(DcmItem& from, DcmItem& to, const DcmTagKey& tag, bool write_empty) {
  DcmElement* element = nullptr;
  if (from.findAndGetElement(tag, element).good() && element != nullptr) {
    to.insert(OFstatic_cast(DcmElement*, element->clone()), OFTrue);
  } else if (write_empty) {
    to.insertEmptyElement(tag);
  }
}

}  // namespace

Expected<PlanSource> PlanSource::load(const std::filesystem::path& plan_file) {
  auto file = std::make_shared<DcmFileFormat>();
  if (const OFCondition loaded = file->loadFile(plan_file.c_str()); loaded.bad()) {
    return Error{ErrorKind::io, plan_file.string(), "", "",
                 std::string{"cannot read the plan again for the DICOM result: "} + loaded.text()};
  }
  DcmDataset& dataset = *file->getDataset();
  PlanSource source;
  // Our objects are UTF-8 when the plan's text can be converted; DCMTK leaves it unchanged otherwise.
  source.utf8_ = dataset.convertToUTF8().good();
  source.study_uid_ = text_of(dataset, DCM_StudyInstanceUID);
  source.series_uid_ = text_of(dataset, DCM_SeriesInstanceUID);
  source.sop_class_uid_ = text_of(dataset, DCM_SOPClassUID);
  source.sop_instance_uid_ = text_of(dataset, DCM_SOPInstanceUID);
  source.institution_ = text_of(dataset, DCM_InstitutionName);
  for (const auto& [tag, keyword] : {std::pair{DCM_StudyInstanceUID, "StudyInstanceUID (0020,000D)"},
                                     std::pair{DCM_SeriesInstanceUID, "SeriesInstanceUID (0020,000E)"},
                                     std::pair{DCM_SOPInstanceUID, "SOPInstanceUID (0008,0018)"}}) {
    if (text_of(dataset, tag).empty()) {
      return Error{ErrorKind::missing_attribute, plan_file.string(), keyword, "",
                   "absent: the DICOM result cannot be filed with the plan"};
    }
  }
  DcmSequenceOfItems* beams = nullptr;
  if (dataset.findAndGetSequence(DCM_BeamSequence, beams).good() && beams != nullptr) {
    for (unsigned long i = 0; i < beams->card(); ++i) {
      DcmItem* beam = beams->getItem(i);
      const std::string number = text_of(*beam, DCM_BeamNumber);
      if (!number.empty()) source.beam_names_[std::atoi(number.c_str())] = text_of(*beam, DCM_BeamName);
    }
  }
  source.file_ = std::move(file);
  return source;
}

void PlanSource::copy_patient_and_study(DcmItem& target) const {
  DcmDataset& dataset = *file_->getDataset();
  copy_element(dataset, target, DCM_SpecificCharacterSet, false);
  copy_element(dataset, target, DCM_StudyInstanceUID, false);
  for (const auto& tag : type2_attributes) copy_element(dataset, target, tag, true);
  for (const auto& tag : optional_attributes) copy_element(dataset, target, tag, false);
}

std::string PlanSource::beam_name(int beam_number) const {
  const auto found = beam_names_.find(beam_number);
  return found == beam_names_.end() ? std::string{} : found->second;
}

std::string PlanSource::own_text(std::string_view text) const {
  if (utf8_) return std::string{text};
  std::string ascii;
  for (const char c : text) ascii += (static_cast<unsigned char>(c) < 0x80) ? c : '?';
  return ascii;
}

}  // namespace countersign::dicom_export::detail
