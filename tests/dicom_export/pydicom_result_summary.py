#!/usr/bin/env python3
"""Reads an exported object (SR or Encapsulated PDF) with pydicom, an independent DICOM reader,
and prints what the tests compare as JSON: identity, references to the plan, and for the SR the
content tree's beam containers with their numbers and verdicts."""
import json
import sys

import pydicom


def code(item):
    return {"value": item.CodeValue, "scheme": item.CodingSchemeDesignator, "meaning": item.CodeMeaning}


def content(items):
    result = []
    for item in items:
        entry = {"type": item.ValueType, "concept": code(item.ConceptNameCodeSequence[0]),
                 "relationship": item.RelationshipType}
        if item.ValueType == "TEXT":
            entry["text"] = item.TextValue
        elif item.ValueType == "NUM":
            measured = item.MeasuredValueSequence[0]
            entry["number"] = float(measured.NumericValue)
            entry["unit"] = code(measured.MeasurementUnitsCodeSequence[0])
        elif item.ValueType == "CODE":
            entry["code"] = code(item.ConceptCodeSequence[0])
        elif item.ValueType == "COMPOSITE":
            entry["reference"] = item.ReferencedSOPSequence[0].ReferencedSOPInstanceUID
        elif item.ValueType == "CONTAINER":
            entry["content"] = content(item.get("ContentSequence", []))
        result.append(entry)
    return result


def main(path):
    ds = pydicom.dcmread(path)
    out = {
        "sop_class_uid": ds.SOPClassUID,
        "sop_instance_uid": ds.SOPInstanceUID,
        "study_instance_uid": ds.StudyInstanceUID,
        "series_instance_uid": ds.SeriesInstanceUID,
        "modality": ds.Modality,
        "patient_id": ds.PatientID,
        "patient_name": str(ds.PatientName),
        "specific_character_set": ds.get("SpecificCharacterSet", ""),
    }
    if ds.Modality == "SR":
        evidence = ds.CurrentRequestedProcedureEvidenceSequence[0]
        out["evidence_study"] = evidence.StudyInstanceUID
        out["evidence_instance"] = evidence.ReferencedSeriesSequence[0].ReferencedSOPSequence[0].ReferencedSOPInstanceUID
        out["verification_flag"] = ds.VerificationFlag
        out["root"] = code(ds.ConceptNameCodeSequence[0])
        out["content"] = content(ds.ContentSequence)
        out["coding_schemes"] = [s.CodingSchemeDesignator for s in ds.CodingSchemeIdentificationSequence]
    else:
        out["source_instance"] = ds.SourceInstanceSequence[0].ReferencedSOPInstanceUID
        out["mime_type"] = ds.MIMETypeOfEncapsulatedDocument
        document = bytes(ds.EncapsulatedDocument)
        out["document_starts_with_pdf"] = document[:5] == b"%PDF-"
        out["document_length"] = int(ds.EncapsulatedDocumentLength)
        out["document_value_length"] = len(document)
    print(json.dumps(out))


if __name__ == "__main__":
    main(sys.argv[1])
