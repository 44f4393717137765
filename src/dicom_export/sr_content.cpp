#include "sr_content.hpp"

#include "dataset_writing.hpp"

#include <dcmtk/dcmdata/dcdeftag.h>

namespace countersign::dicom_export::detail {

namespace {

DcmItem& add_content(DcmItem& parent, const char* value_type, const Code& concept_name) {
  DcmItem& item = append_item(parent, DCM_ContentSequence);
  put(item, DCM_RelationshipType, "CONTAINS");
  put(item, DCM_ValueType, value_type);
  put_code(item, DCM_ConceptNameCodeSequence, concept_name);
  return item;
}

}  // namespace

void make_root_container(DcmItem& dataset, const Code& concept_name) {
  put(dataset, DCM_ValueType, "CONTAINER");
  put_code(dataset, DCM_ConceptNameCodeSequence, concept_name);
  put(dataset, DCM_ContinuityOfContent, "SEPARATE");
}

DcmItem& add_container(DcmItem& parent, const Code& concept_name) {
  DcmItem& item = add_content(parent, "CONTAINER", concept_name);
  put(item, DCM_ContinuityOfContent, "SEPARATE");
  return item;
}

void add_text(DcmItem& parent, const Code& concept_name, const std::string& text) {
  DcmItem& item = add_content(parent, "TEXT", concept_name);
  put(item, DCM_TextValue, text);
}

void add_number(DcmItem& parent, const Code& concept_name, double value, const Code& unit) {
  DcmItem& item = add_content(parent, "NUM", concept_name);
  DcmItem& measured = append_item(item, DCM_MeasuredValueSequence);
  put_code(measured, DCM_MeasurementUnitsCodeSequence, unit);
  // Six significant digits: more than any dose, deviation or MU here is known to.
  put(measured, DCM_NumericValue, decimal_string(value, 6));
}

void add_coded(DcmItem& parent, const Code& concept_name, const Code& value) {
  DcmItem& item = add_content(parent, "CODE", concept_name);
  put_code(item, DCM_ConceptCodeSequence, value);
}

void add_reference(DcmItem& parent, const Code& concept_name, const std::string& sop_class_uid,
                   const std::string& sop_instance_uid) {
  DcmItem& item = add_content(parent, "COMPOSITE", concept_name);
  DcmItem& reference = append_item(item, DCM_ReferencedSOPSequence);
  put(reference, DCM_ReferencedSOPClassUID, sop_class_uid);
  put(reference, DCM_ReferencedSOPInstanceUID, sop_instance_uid);
}

}  // namespace countersign::dicom_export::detail
