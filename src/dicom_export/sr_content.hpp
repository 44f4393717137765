#pragma once

// Content items of a Structured Report (PS3.3 C.17.3), one call per value type (internal to
// dicom_export). Every item is a child of `parent` with relationship CONTAINS; throws ExportDefect.

#include <countersign/dicom_export/result_codes.hpp>

#include <dcmtk/config/osconfig.h>  // must come first among DCMTK headers

#include <dcmtk/dcmdata/dcitem.h>

#include <string>

namespace countersign::dicom_export::detail {

DcmItem& add_container(DcmItem& parent, const Code& concept_name);
void add_text(DcmItem& parent, const Code& concept_name, const std::string& text);
void add_number(DcmItem& parent, const Code& concept_name, double value, const Code& unit);
void add_coded(DcmItem& parent, const Code& concept_name, const Code& value);
void add_reference(DcmItem& parent, const Code& concept_name, const std::string& sop_class_uid,
                   const std::string& sop_instance_uid);

// Makes `dataset` the root CONTAINER of the document.
void make_root_container(DcmItem& dataset, const Code& concept_name);

}  // namespace countersign::dicom_export::detail
