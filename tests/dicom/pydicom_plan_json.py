#!/usr/bin/env python3
"""Independent reader for the cross-check: reads an RT Plan with pydicom (not DCMTK, not our code)
and prints the same JSON as `countersign show --json` for one file. Written from the DICOM
standard (PS3.3 RT Beams and RT Fraction Scheme modules), not from the C++ reader.

Usage: pydicom_plan_json.py PLAN.dcm
"""
import json
import math
import sys

import pydicom


def text(item, keyword):
    value = item.get(keyword)
    if value is None:
        return None
    value = str(value).strip()
    return value or None


def number(item, keyword):
    value = item.get(keyword)
    if value is None or value == "":
        return None
    if isinstance(value, (list, pydicom.multival.MultiValue)):
        if len(value) != 1:
            raise ValueError(f"{keyword} has {len(value)} values")
        value = value[0]
    result = float(value)
    if not math.isfinite(result):
        raise ValueError(f"{keyword} is not finite")
    return result


def character_set(ds):
    """Specific Character Set (0008,0005) as declared, values joined by a backslash."""
    value = ds.get("SpecificCharacterSet")
    if value is None:
        return None
    values = list(value) if isinstance(value, pydicom.multival.MultiValue) else [value]
    joined = "\\".join(str(v).strip() for v in values).strip()
    return joined or None


def integer(item, keyword):
    value = number(item, keyword)
    return None if value is None else int(value)


def numbers(item, keyword):
    value = item.get(keyword)
    if value is None or value == "":
        return None
    if not isinstance(value, (list, pydicom.multival.MultiValue)):
        value = [value]
    return [float(v) for v in value]


def point(item, keyword):
    values = numbers(item, keyword)
    return values if values is not None and len(values) == 3 else None


def sequence(item, keyword):
    value = item.get(keyword)
    return list(value) if value else []


def distances(item):
    return {
        "depth_mm": number(item, "BeamDosePointDepth"),
        "equivalent_depth_mm": number(item, "BeamDosePointEquivalentDepth"),
        "ssd_mm": number(item, "BeamDosePointSSD"),
        # (300A,0094) Beam Dose Point Source to External Contour Distance, by tag: pydicom 2.3's
        # dictionary may not name it.
        "source_to_external_contour_mm": number_by_tag(item, 0x300A0094),
    }


def number_by_tag(item, tag):
    if tag not in item:
        return None
    value = item[tag].value
    if isinstance(value, bytes):  # unknown to the dictionary in an explicit-VR file stored as UN
        value = value.decode("ascii").strip()
    if value in (None, ""):
        return None
    return float(value)


def empty(d):
    return all(v is None for v in d.values())


def accessories(items, number_kw, id_kw, type_kw):
    return [{"number": integer(i, number_kw) if number_kw else None, "id": text(i, id_kw), "type": text(i, type_kw)}
            for i in items]


def blocks_of(items):
    """Block Sequence items: the three accessory keys, then the block's own attributes."""
    out = []
    for i in items:
        data = numbers(i, "BlockData") or []
        out.append({"number": integer(i, "BlockNumber"), "id": text(i, "BlockTrayID"), "type": text(i, "BlockType"),
                    "name": text(i, "BlockName"), "divergence": text(i, "BlockDivergence"),
                    "source_to_tray_mm": number(i, "SourceToBlockTrayDistance"),
                    "material_id": text(i, "MaterialID"), "thickness_mm": number(i, "BlockThickness"),
                    "transmission": number(i, "BlockTransmission"),
                    "outline_mm": [[data[k], data[k + 1]] for k in range(0, len(data) - 1, 2)]})
    return out


def jaws(devices):
    out = {"x1": None, "x2": None, "y1": None, "y2": None}
    for pair, lo, hi in ((("X", "ASYMX"), "x1", "x2"), (("Y", "ASYMY"), "y1", "y2")):
        for name in pair:
            positions = devices.get(name)
            if positions is not None and len(positions) == 2:
                out[lo], out[hi] = positions
                break
    return out


def control_points(beam, declared_types):
    """Control points with the values DICOM lets a later control point omit carried forward."""
    carried = {"energy_mv": None, "dose_rate_mu_per_min": None, "gantry_deg": None, "gantry_rotation": None,
               "collimator_deg": None, "collimator_rotation": None, "couch_deg": None, "couch_rotation": None,
               "isocenter_mm": None}
    sources = {"energy_mv": ("NominalBeamEnergy", number), "dose_rate_mu_per_min": ("DoseRateSet", number),
               "gantry_deg": ("GantryAngle", number), "gantry_rotation": ("GantryRotationDirection", text),
               "collimator_deg": ("BeamLimitingDeviceAngle", number),
               "collimator_rotation": ("BeamLimitingDeviceRotationDirection", text),
               "couch_deg": ("PatientSupportAngle", number),
               "couch_rotation": ("PatientSupportRotationDirection", text),
               "isocenter_mm": ("IsocenterPosition", point)}
    devices = {}
    wedges = []
    result = []
    for cp in sequence(beam, "ControlPointSequence"):
        for key, (keyword, read) in sources.items():
            value = read(cp, keyword)
            if value is not None:
                carried[key] = value
        for item in sequence(cp, "BeamLimitingDevicePositionSequence"):
            devices[text(item, "RTBeamLimitingDeviceType")] = numbers(item, "LeafJawPositions")
        wedge_items = sequence(cp, "WedgePositionSequence")
        if wedge_items:
            wedges = [{"wedge_number": integer(w, "ReferencedWedgeNumber"), "position": text(w, "WedgePosition")}
                      for w in wedge_items]
        entry = dict(carried)
        entry["index"] = integer(cp, "ControlPointIndex")
        entry["ssd_mm"] = number(cp, "SourceToSurfaceDistance")
        entry["device_positions_mm"] = {t: devices[t] for t in declared_types if t in devices}
        entry["jaws_mm"] = jaws(devices)
        entry["cumulative_meterset_weight"] = number(cp, "CumulativeMetersetWeight")
        entry["dose_reference_coefficients"] = [
            {"dose_reference_number": integer(r, "ReferencedDoseReferenceNumber"),
             "cumulative_coefficient": number(r, "CumulativeDoseReferenceCoefficient")}
            for r in sequence(cp, "ReferencedDoseReferenceSequence")]
        entry["wedge_positions"] = list(wedges)
        result.append(entry)
    return result


def beam_json(ds, beam):
    devices = []
    mlc_pairs = 0
    for d in sequence(beam, "BeamLimitingDeviceSequence"):
        kind = text(d, "RTBeamLimitingDeviceType")
        pairs = integer(d, "NumberOfLeafJawPairs")
        if kind in ("MLCX", "MLCY"):
            mlc_pairs = pairs
        devices.append({"type": kind, "pairs": pairs,
                        "source_to_device_distance_mm": number(d, "SourceToBeamLimitingDeviceDistance"),
                        "leaf_boundaries_mm": numbers(d, "LeafPositionBoundaries") or []})
    cps = control_points(beam, [d["type"] for d in devices])
    first = cps[0] if cps else {}
    last = sequence(beam, "ControlPointSequence")[-1] if cps else None
    final = {}
    if last is not None:
        for r in sequence(last, "ReferencedDoseReferenceSequence"):
            final[integer(r, "ReferencedDoseReferenceNumber")] = number(r, "CumulativeDoseReferenceCoefficient")
    points = []
    for r in sequence(beam, "ReferencedDoseReferenceSequence"):
        n = integer(r, "ReferencedDoseReferenceNumber")
        verification = sequence(r, "BeamDoseVerificationControlPointSequence")
        entry = distances(verification[0]) if verification else distances(pydicom.Dataset())
        entry.update({"dose_reference_number": n, "final_coefficient": final.get(n),
                      "in_beam_dose_reference_sequence": True})
        points.append(entry)
    listed = {p["dose_reference_number"] for p in points}
    if last is not None:
        for r in sequence(last, "ReferencedDoseReferenceSequence"):
            n = integer(r, "ReferencedDoseReferenceNumber")
            if n in listed:
                continue
            entry = distances(pydicom.Dataset())
            entry.update({"dose_reference_number": n, "final_coefficient": number(r, "CumulativeDoseReferenceCoefficient"),
                          "in_beam_dose_reference_sequence": False})
            points.append(entry)
            listed.add(n)
    blocks = blocks_of(sequence(beam, "BlockSequence"))
    trays = []
    for b in blocks:
        if b["id"] and b["id"] not in trays:
            trays.append(b["id"])
    setup_number = integer(beam, "ReferencedPatientSetupNumber")
    position = None
    for s in sequence(ds, "PatientSetupSequence"):
        if setup_number is not None and integer(s, "PatientSetupNumber") == setup_number:
            position = text(s, "PatientPosition")
    return {
        "number": integer(beam, "BeamNumber"), "name": text(beam, "BeamName"),
        "description": text(beam, "BeamDescription"), "machine": text(beam, "TreatmentMachineName"),
        "radiation_type": text(beam, "RadiationType"), "delivery_type": text(beam, "TreatmentDeliveryType"),
        "beam_type": text(beam, "BeamType"), "primary_dosimeter_unit": text(beam, "PrimaryDosimeterUnit"),
        "energy_mv": first.get("energy_mv"), "sad_mm": number(beam, "SourceAxisDistance"),
        "ssd_mm": first.get("ssd_mm"), "gantry_deg": first.get("gantry_deg"),
        "collimator_deg": first.get("collimator_deg"), "couch_deg": first.get("couch_deg"),
        "isocenter_mm": first.get("isocenter_mm"), "jaws_mm": first.get("jaws_mm", jaws({})),
        "mlc_leaf_pairs": mlc_pairs, "beam_limiting_devices": devices,
        "wedges": [{"number": integer(w, "WedgeNumber"), "id": text(w, "WedgeID"), "type": text(w, "WedgeType"),
                    "angle_deg": number(w, "WedgeAngle"), "factor": number(w, "WedgeFactor"),
                    "orientation_deg": number(w, "WedgeOrientation")} for w in sequence(beam, "WedgeSequence")],
        "blocks": blocks, "block_tray_ids": trays,
        "applicators": [dict(a, description=text(i, "ApplicatorDescription"))
                        for a, i in zip(accessories(sequence(beam, "ApplicatorSequence"), None, "ApplicatorID",
                                                    "ApplicatorType"), sequence(beam, "ApplicatorSequence"))],
        "compensators": accessories(sequence(beam, "CompensatorSequence"), "CompensatorNumber", "CompensatorID",
                                    "CompensatorType"),
        "boli": accessories(sequence(beam, "ReferencedBolusSequence"), "ReferencedROINumber", "BolusID",
                            "BolusDescription"),
        "general_accessories": accessories(sequence(beam, "GeneralAccessorySequence"), "GeneralAccessoryNumber",
                                           "GeneralAccessoryID", "GeneralAccessoryType"),
        "final_cumulative_meterset_weight": number(beam, "FinalCumulativeMetersetWeight"),
        "referenced_patient_setup_number": setup_number, "patient_position": position,
        "control_points": len(cps), "dose_reference_points": points, "control_point_list": cps,
    }


def referenced_beam(ds, item):
    direct = distances(item)
    verification_items = sequence(item, "BeamDoseVerificationControlPointSequence")
    verification = distances(verification_items[0]) if verification_items else distances(pydicom.Dataset())
    ref_number = integer(verification_items[0], "ReferencedDoseReferenceNumber") if verification_items else None
    ref_uid = text(item, "ReferencedDoseReferenceUID")
    if ref_number is None and ref_uid:
        for d in sequence(ds, "DoseReferenceSequence"):
            if text(d, "DoseReferenceUID") == ref_uid:
                ref_number = integer(d, "DoseReferenceNumber")
    chosen = direct if not empty(direct) else verification
    source = "referenced_beam" if not empty(direct) else ("verification_sequence" if not empty(verification) else None)
    return {
        "beam_number": integer(item, "ReferencedBeamNumber"), "meterset_mu": number(item, "BeamMeterset"),
        "dose_gy": number(item, "BeamDose"), "dose_type": text(item, "BeamDoseType"),
        "dose_point_mm": point(item, "BeamDoseSpecificationPoint"),
        "dose_point_depth_mm": chosen["depth_mm"], "dose_point_equivalent_depth_mm": chosen["equivalent_depth_mm"],
        "dose_point_ssd_mm": chosen["ssd_mm"], "dose_point_distances_source": source,
        "distances_in_referenced_beam": direct, "distances_in_verification_sequence": verification,
        "verification_dose_reference_number": ref_number,
    }


def plan_json(path):
    ds = pydicom.dcmread(path)
    dose_doses = ("delivery_warning_dose_gy", "DeliveryWarningDose"), ("delivery_maximum_dose_gy", "DeliveryMaximumDose"), \
        ("target_minimum_dose_gy", "TargetMinimumDose"), ("target_prescription_dose_gy", "TargetPrescriptionDose"), \
        ("target_maximum_dose_gy", "TargetMaximumDose"), \
        ("organ_at_risk_full_volume_dose_gy", "OrganAtRiskFullVolumeDose"), \
        ("organ_at_risk_limit_dose_gy", "OrganAtRiskLimitDose"), ("organ_at_risk_maximum_dose_gy", "OrganAtRiskMaximumDose")
    dose_refs = []
    for d in sequence(ds, "DoseReferenceSequence"):
        entry = {"number": integer(d, "DoseReferenceNumber"), "uid": text(d, "DoseReferenceUID"),
                 "structure_type": text(d, "DoseReferenceStructureType"),
                 "description": text(d, "DoseReferenceDescription"), "type": text(d, "DoseReferenceType"),
                 "point_mm": point(d, "DoseReferencePointCoordinates")}
        for key, keyword in dose_doses:
            entry[key] = number(d, keyword)
        dose_refs.append(entry)
    return {
        "source_file": path,
        "plan": {"label": text(ds, "RTPlanLabel"), "name": text(ds, "RTPlanName"),
                 "description": text(ds, "RTPlanDescription"), "date": text(ds, "RTPlanDate"),
                 "geometry": text(ds, "RTPlanGeometry"), "sop_class_uid": text(ds, "SOPClassUID"),
                 "sop_instance_uid": text(ds, "SOPInstanceUID"), "patient_id": text(ds, "PatientID"),
                 "patient_name": text(ds, "PatientName"), "approval_status": text(ds, "ApprovalStatus"),
                 "manufacturer": text(ds, "Manufacturer"),
                 "specific_character_set": character_set(ds)},
        # pydicom decodes these files without replacing anything: nothing to warn about.
        "warnings": [],
        "patient_setups": [{"number": integer(s, "PatientSetupNumber"), "patient_position": text(s, "PatientPosition"),
                            "setup_technique": text(s, "SetupTechnique"),
                            "setup_technique_description": text(s, "SetupTechniqueDescription")}
                           for s in sequence(ds, "PatientSetupSequence")],
        "dose_references": dose_refs,
        "fraction_groups": [{"number": integer(g, "FractionGroupNumber"),
                             "fractions_planned": integer(g, "NumberOfFractionsPlanned"),
                             "beam_dose_meaning": text(g, "BeamDoseMeaning"),
                             "beams": [referenced_beam(ds, b) for b in sequence(g, "ReferencedBeamSequence")]}
                            for g in sequence(ds, "FractionGroupSequence")],
        "beams": [beam_json(ds, b) for b in sequence(ds, "BeamSequence")],
    }


if __name__ == "__main__":
    if len(sys.argv) != 2:
        sys.exit(__doc__)
    print(json.dumps(plan_json(sys.argv[1]), indent=2, sort_keys=True))
