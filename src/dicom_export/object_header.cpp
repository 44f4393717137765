#include "object_header.hpp"

#include "dataset_writing.hpp"

#include <countersign/util/version.hpp>

#include <dcmtk/dcmdata/dcdeftag.h>

namespace countersign::dicom_export::detail {

ObjectIdentity write_object_header(DcmItem& dataset, const PlanSource& plan, const NewObject& object,
                                   const ExportOptions& options) {
  const LocalDateTime now = local_date_time(options.created);
  ObjectIdentity identity{new_uuid_uid(), new_uuid_uid()};
  plan.copy_patient_and_study(dataset);
  // The series: new, in the plan's study.
  put(dataset, DCM_Modality, object.modality);
  put(dataset, DCM_SeriesInstanceUID, identity.series_instance_uid);
  put(dataset, DCM_SeriesNumber, object.series_number);
  put(dataset, DCM_SeriesDate, now.date);
  put(dataset, DCM_SeriesTime, now.time);
  put(dataset, DCM_SeriesDescription, plan.own_text(object.series_description));
  // General Equipment: the software that made the object, at the plan's institution.
  put(dataset, DCM_Manufacturer, "countersign project");
  put(dataset, DCM_ManufacturerModelName, "countersign");
  put(dataset, DCM_SoftwareVersions, version_string);
  if (!plan.institution_name().empty()) put(dataset, DCM_InstitutionName, plan.institution_name());
  if (!options.station_name.empty()) put(dataset, DCM_StationName, plan.own_text(options.station_name));
  // SOP Common.
  put(dataset, DCM_SOPClassUID, object.sop_class_uid);
  put(dataset, DCM_SOPInstanceUID, identity.sop_instance_uid);
  put(dataset, DCM_InstanceCreationDate, now.date);
  put(dataset, DCM_InstanceCreationTime, now.time);
  put(dataset, DCM_TimezoneOffsetFromUTC, now.utc_offset);
  put(dataset, DCM_InstanceNumber, "1");
  return identity;
}

Expected<std::filesystem::path> save_object(DcmFileFormat& file, const std::filesystem::path& output) {
  const OFCondition saved = file.saveFile(output.c_str(), EXS_LittleEndianExplicit, EET_ExplicitLength,
                                          EGL_recalcGL, EPD_noChange, 0, 0, EWM_createNewMeta);
  if (saved.bad())
    return Error{ErrorKind::io, output.string(), "", "", std::string{"cannot write: "} + saved.text()};
  return output;
}

}  // namespace countersign::dicom_export::detail
