#pragma once

// What both exported objects share (internal to dicom_export): the plan's patient and study, a new
// series, the equipment that made them, and the SOP Common module.

#include "plan_source.hpp"

#include <countersign/dicom_export/export_objects.hpp>

#include <string>

namespace countersign::dicom_export::detail {

struct NewObject {
  const char* sop_class_uid;
  const char* modality;
  const char* series_number;
  std::string series_description;
};

struct ObjectIdentity {
  std::string sop_instance_uid;
  std::string series_instance_uid;
};

// Writes Patient, General Study, the series (modality, new UID, number, description, date and time),
// General Equipment and SOP Common; throws ExportDefect.
ObjectIdentity write_object_header(DcmItem& dataset, const PlanSource& plan, const NewObject& object,
                                   const ExportOptions& options);

// Saves as a Part 10 file in Explicit VR Little Endian; an error names the file.
[[nodiscard]] Expected<std::filesystem::path> save_object(DcmFileFormat& file,
                                                          const std::filesystem::path& output);

}  // namespace countersign::dicom_export::detail
