// Plan model -> RT Plan file with DCMTK: the attributes the reader reads, plus the type 1 and 2
// attributes of the modules an RT Plan needs (PS3.3 A.20), so that dciodvfy accepts the file.

#include <countersign/dicom/write_plan.hpp>

#include <dcmtk/dcmdata/dcdeftag.h>
#include <dcmtk/dcmdata/dcfilefo.h>
#include <dcmtk/dcmdata/dcuid.h>

#include <fmt/format.h>

#include <cmath>
#include <stdexcept>

namespace countersign::dicom {

namespace {

// Thrown inside the writer only; write_plan_file turns it into an Error naming the attribute.
struct WriteFailure : std::runtime_error {
  using std::runtime_error::runtime_error;
};

void put(DcmItem& item, const DcmTagKey& tag, const std::string& value) {
  if (item.putAndInsertString(tag, value.c_str()).bad())
    throw WriteFailure(std::string("cannot write ") + DcmTag(tag).getTagName() + " " +
                       tag.toString());
}

// A decimal string of at most 16 characters (DS).
std::string ds(double value) {
  if (std::abs(value) < 5e-10) value = 0.0;
  for (int precision = 12; precision > 0; --precision) {
    std::string text = fmt::format("{:.{}g}", value, precision);
    if (text.size() <= 16) return text;
  }
  throw WriteFailure("value does not fit a decimal string");
}

std::string ds_list(const std::vector<double>& values) {
  std::string text;
  for (const double v : values) text += (text.empty() ? "" : "\\") + ds(v);
  return text;
}

std::string ds_point(const plan::PointMm& p) { return ds_list({p[0], p[1], p[2]}); }

void put_fl(DcmItem& item, const DcmTagKey& tag, double value) {
  if (item.putAndInsertFloat32(tag, static_cast<Float32>(value)).bad())
    throw WriteFailure(std::string("cannot write ") + DcmTag(tag).getTagName());
}

void put_if(DcmItem& item, const DcmTagKey& tag, const std::optional<double>& value) {
  if (value) put(item, tag, ds(*value));
}

DcmItem& new_item(DcmItem& parent, const DcmTagKey& sequence, std::size_t index) {
  DcmItem* item = nullptr;
  if (parent.findOrCreateSequenceItem(sequence, item, static_cast<long>(index)).bad() || item == nullptr)
    throw WriteFailure(std::string("cannot create an item of ") + DcmTag(sequence).getTagName());
  return *item;
}

void write_distances(DcmItem& item, const plan::DosePointDistances& d) {
  if (d.depth_mm) put_fl(item, DCM_BeamDosePointDepth, *d.depth_mm);
  if (d.equivalent_depth_mm) put_fl(item, DCM_BeamDosePointEquivalentDepth, *d.equivalent_depth_mm);
  if (d.ssd_mm) put_fl(item, DCM_BeamDosePointSSD, *d.ssd_mm);
  if (d.source_to_external_contour_mm)
    put(item, DCM_BeamDosePointSourceToExternalContourDistance, ds(*d.source_to_external_contour_mm));
}

void write_header(DcmDataset& data, const plan::Plan& plan) {
  const std::string& date = plan.date;                // type 2: empty when the plan has none
  put(data, DCM_SpecificCharacterSet, "ISO_IR 192");  // UTF-8: the model's text is UTF-8
  put(data, DCM_SOPClassUID, UID_RTPlanStorage);
  put(data, DCM_SOPInstanceUID, plan.sop_instance_uid);
  put(data, DCM_StudyDate, date);
  put(data, DCM_StudyTime, "120000");
  put(data, DCM_AccessionNumber, "");
  put(data, DCM_Modality, "RTPLAN");
  put(data, DCM_Manufacturer, plan.manufacturer);
  put(data, DCM_ReferringPhysicianName, "");
  put(data, DCM_PatientName, plan.patient_name);
  put(data, DCM_PatientID, plan.patient_id);
  put(data, DCM_PatientBirthDate, "");
  put(data, DCM_PatientSex, "O");
  put(data, DCM_StudyInstanceUID, new_uid());
  put(data, DCM_SeriesInstanceUID, new_uid());
  put(data, DCM_StudyID, "");
  put(data, DCM_SeriesNumber, "1");
  put(data, DCM_OperatorsName, "");
  put(data, DCM_InstanceNumber, "1");
  put(data, DCM_FrameOfReferenceUID,
      plan.frame_of_reference_uid.empty() ? new_uid() : plan.frame_of_reference_uid);
  put(data, DCM_PositionReferenceIndicator, "");
  put(data, DCM_RTPlanLabel, plan.label);
  if (!plan.name.empty()) put(data, DCM_RTPlanName, plan.name);
  if (!plan.description.empty()) put(data, DCM_RTPlanDescription, plan.description);
  put(data, DCM_RTPlanDate, date);
  put(data, DCM_RTPlanTime, "120000");
  put(data, DCM_RTPlanGeometry, plan.geometry.empty() ? "TREATMENT_DEVICE" : plan.geometry);
  if (plan.geometry == "PATIENT") {
    for (std::size_t i = 0; i < plan.referenced_structure_set_uids.size(); ++i) {
      DcmItem& item = new_item(data, DCM_ReferencedStructureSetSequence, i);
      put(item, DCM_ReferencedSOPClassUID, UID_RTStructureSetStorage);
      put(item, DCM_ReferencedSOPInstanceUID, plan.referenced_structure_set_uids[i]);
    }
  }
  if (!plan.approval_status.empty()) put(data, DCM_ApprovalStatus, plan.approval_status);
  if (plan.approval_status == "APPROVED" && !date.empty()) {
    put(data, DCM_ReviewDate, date);
    put(data, DCM_ReviewTime, "120000");
  }
}

void write_dose_references(DcmDataset& data, const plan::Plan& plan) {
  for (std::size_t i = 0; i < plan.dose_references.size(); ++i) {
    const plan::DoseReference& ref = plan.dose_references[i];
    DcmItem& item = new_item(data, DCM_DoseReferenceSequence, i);
    put(item, DCM_DoseReferenceNumber, std::to_string(ref.number));
    put(item, DCM_DoseReferenceUID, ref.uid.empty() ? new_uid() : ref.uid);
    put(item, DCM_DoseReferenceStructureType, ref.structure_type.text);
    if (!ref.description.empty()) put(item, DCM_DoseReferenceDescription, ref.description);
    if (ref.point_mm) put(item, DCM_DoseReferencePointCoordinates, ds_point(*ref.point_mm));
    put(item, DCM_DoseReferenceType, ref.type.empty() ? "TARGET" : ref.type);
    put_if(item, DCM_TargetPrescriptionDose, ref.target_prescription_dose_gy);
  }
}

void write_fraction_groups(DcmDataset& data, const plan::Plan& plan) {
  for (std::size_t g = 0; g < plan.fraction_groups.size(); ++g) {
    const plan::FractionGroup& group = plan.fraction_groups[g];
    DcmItem& item = new_item(data, DCM_FractionGroupSequence, g);
    put(item, DCM_FractionGroupNumber, std::to_string(group.number));
    if (group.fractions_planned)
      put(item, DCM_NumberOfFractionsPlanned, std::to_string(*group.fractions_planned));
    put(item, DCM_NumberOfBeams, std::to_string(group.beams.size()));
    put(item, DCM_NumberOfBrachyApplicationSetups, "0");
    if (!group.beam_dose_meaning.absent()) put(item, DCM_BeamDoseMeaning, group.beam_dose_meaning.text);
    for (std::size_t b = 0; b < group.beams.size(); ++b) {
      const plan::ReferencedBeam& rb = group.beams[b];
      DcmItem& ref = new_item(item, DCM_ReferencedBeamSequence, b);
      put(ref, DCM_ReferencedBeamNumber, std::to_string(rb.beam_number));
      put_if(ref, DCM_BeamMeterset, rb.meterset_mu);
      put_if(ref, DCM_BeamDose, rb.dose_gy);
      if (!rb.dose_type.empty()) put(ref, DCM_BeamDoseType, rb.dose_type);
      if (rb.dose_specification_point_mm)
        put(ref, DCM_RETIRED_BeamDoseSpecificationPoint, ds_point(*rb.dose_specification_point_mm));
      write_distances(ref, rb.distances_in_referenced_beam);
    }
  }
}

const char* direction(const plan::Coded<plan::RotationDirection>& rotation) {
  return rotation.absent() ? "NONE" : rotation.text.c_str();
}

void write_control_point(DcmItem& cp, const plan::Beam& beam, std::size_t index) {
  const plan::ControlPoint& p = beam.control_points[index];
  put(cp, DCM_ControlPointIndex, std::to_string(index));
  if (p.nominal_energy_mv) put(cp, DCM_NominalBeamEnergy, ds(*p.nominal_energy_mv));
  put_if(cp, DCM_DoseRateSet, p.dose_rate_mu_per_min);
  for (std::size_t w = 0; w < p.wedge_positions.size(); ++w) {
    DcmItem& item = new_item(cp, DCM_WedgePositionSequence, w);
    put(item, DCM_ReferencedWedgeNumber, std::to_string(p.wedge_positions[w].wedge_number));
    put(item, DCM_WedgePosition, p.wedge_positions[w].position.text);
  }
  for (std::size_t d = 0; d < p.devices.size(); ++d) {
    DcmItem& item = new_item(cp, DCM_BeamLimitingDevicePositionSequence, d);
    put(item, DCM_RTBeamLimitingDeviceType, p.devices[d].type.text);
    put(item, DCM_LeafJawPositions, ds_list(p.devices[d].positions_mm));
  }
  put_if(cp, DCM_GantryAngle, p.gantry_deg);
  if (p.gantry_deg) put(cp, DCM_GantryRotationDirection, direction(p.gantry_rotation));
  put_if(cp, DCM_BeamLimitingDeviceAngle, p.collimator_deg);
  if (p.collimator_deg) put(cp, DCM_BeamLimitingDeviceRotationDirection, direction(p.collimator_rotation));
  put_if(cp, DCM_PatientSupportAngle, p.couch_deg);
  if (p.couch_deg) {
    put(cp, DCM_PatientSupportRotationDirection, direction(p.couch_rotation));
    put(cp, DCM_TableTopEccentricAngle, "0");
    put(cp, DCM_TableTopEccentricRotationDirection, "NONE");
  }
  if (p.isocenter_mm) put(cp, DCM_IsocenterPosition, ds_point(*p.isocenter_mm));
  put_if(cp, DCM_SourceToSurfaceDistance, p.ssd_mm);
  put_if(cp, DCM_CumulativeMetersetWeight, p.cumulative_meterset_weight);
  for (std::size_t r = 0; r < p.dose_reference_coefficients.size(); ++r) {
    const plan::DoseReferenceCoefficient& c = p.dose_reference_coefficients[r];
    DcmItem& item = new_item(cp, DCM_ReferencedDoseReferenceSequence, r);
    put_if(item, DCM_CumulativeDoseReferenceCoefficient, c.cumulative_coefficient);
    put(item, DCM_ReferencedDoseReferenceNumber, std::to_string(c.dose_reference_number));
  }
}

void write_accessories(DcmItem& item, const plan::Beam& beam) {
  put(item, DCM_NumberOfWedges, std::to_string(beam.wedges.size()));
  for (std::size_t w = 0; w < beam.wedges.size(); ++w) {
    const plan::Wedge& wedge = beam.wedges[w];
    DcmItem& out = new_item(item, DCM_WedgeSequence, w);
    put(out, DCM_WedgeNumber, std::to_string(wedge.number.value_or(static_cast<int>(w) + 1)));
    put(out, DCM_WedgeType, wedge.type.absent() ? "STANDARD" : wedge.type.text);
    put(out, DCM_WedgeID, wedge.id);
    put(out, DCM_WedgeAngle, wedge.angle_deg ? ds(*wedge.angle_deg) : "");  // type 2: empty when absent
    put(out, DCM_WedgeFactor, wedge.factor ? ds(*wedge.factor) : "");       // type 2C: empty when absent
    put(out, DCM_WedgeOrientation, wedge.orientation_deg ? ds(*wedge.orientation_deg) : "");
  }
  put(item, DCM_NumberOfCompensators, "0");
  put(item, DCM_NumberOfBoli, "0");
  put(item, DCM_NumberOfBlocks, std::to_string(beam.blocks.size()));
  for (std::size_t b = 0; b < beam.blocks.size(); ++b) {
    const plan::Block& source = beam.blocks[b];
    DcmItem& block = new_item(item, DCM_BlockSequence, b);
    put(block, DCM_BlockTrayID, source.tray_id);
    put(block, DCM_SourceToBlockTrayDistance, source.source_to_tray_mm ? ds(*source.source_to_tray_mm) : "");
    put(block, DCM_BlockType, source.type.absent() ? "SHIELDING" : source.type.text);
    put(block, DCM_BlockDivergence, source.divergence.text);
    put(block, DCM_BlockNumber, std::to_string(source.number.value_or(static_cast<int>(b) + 1)));
    if (!source.name.empty()) put(block, DCM_BlockName, source.name);
    put(block, DCM_MaterialID, source.material_id);
    put(block, DCM_BlockThickness, source.thickness_mm ? ds(*source.thickness_mm) : "");
    if (source.transmission) put(block, DCM_BlockTransmission, ds(*source.transmission));
    put(block, DCM_BlockNumberOfPoints, std::to_string(source.outline_mm.size()));
    std::vector<double> data;
    for (const auto& v : source.outline_mm) data.insert(data.end(), {v[0], v[1]});
    put(block, DCM_BlockData, ds_list(data));
  }
}

void write_beam(DcmItem& item, const plan::Beam& beam) {
  put(item, DCM_TreatmentMachineName, beam.machine_name);
  put(item, DCM_PrimaryDosimeterUnit,
      beam.primary_dosimeter_unit.absent() ? "MU" : beam.primary_dosimeter_unit.text);
  put_if(item, DCM_SourceAxisDistance, beam.sad_mm);
  for (std::size_t d = 0; d < beam.beam_limiting_devices.size(); ++d) {
    const plan::BeamLimitingDevice& device = beam.beam_limiting_devices[d];
    DcmItem& out = new_item(item, DCM_BeamLimitingDeviceSequence, d);
    put(out, DCM_RTBeamLimitingDeviceType, device.type.text);
    put_if(out, DCM_SourceToBeamLimitingDeviceDistance, device.source_to_device_distance_mm);
    put(out, DCM_NumberOfLeafJawPairs, std::to_string(device.pair_count));
    if (!device.leaf_boundaries_mm.empty())
      put(out, DCM_LeafPositionBoundaries, ds_list(device.leaf_boundaries_mm));
  }
  put(item, DCM_BeamNumber, std::to_string(beam.number));
  put(item, DCM_BeamName, beam.name);
  if (!beam.description.empty()) put(item, DCM_BeamDescription, beam.description);
  put(item, DCM_BeamType, beam.beam_type.text);
  put(item, DCM_RadiationType, beam.radiation_type.text);
  put(item, DCM_TreatmentDeliveryType, beam.delivery_type.absent() ? "TREATMENT" : beam.delivery_type.text);
  write_accessories(item, beam);
  put_if(item, DCM_FinalCumulativeMetersetWeight, beam.final_cumulative_meterset_weight);
  put(item, DCM_NumberOfControlPoints, std::to_string(beam.control_points.size()));
  for (std::size_t i = 0; i < beam.control_points.size(); ++i)
    write_control_point(new_item(item, DCM_ControlPointSequence, i), beam, i);
  if (beam.referenced_patient_setup_number)
    put(item, DCM_ReferencedPatientSetupNumber, std::to_string(*beam.referenced_patient_setup_number));
}

void write_setups(DcmDataset& data, const plan::Plan& plan) {
  for (std::size_t i = 0; i < plan.patient_setups.size(); ++i) {
    const plan::PatientSetup& setup = plan.patient_setups[i];
    DcmItem& item = new_item(data, DCM_PatientSetupSequence, i);
    put(item, DCM_PatientSetupNumber, std::to_string(setup.number));
    put(item, DCM_PatientPosition, setup.patient_position.text);
    if (!setup.setup_technique.absent()) put(item, DCM_SetupTechnique, setup.setup_technique.text);
    if (!setup.setup_technique_description.empty())
      put(item, DCM_SetupTechniqueDescription, setup.setup_technique_description);
  }
}

}  // namespace

std::string new_uid() {
  char buffer[100];
  return dcmGenerateUniqueIdentifier(buffer, SITE_INSTANCE_UID_ROOT);
}

Expected<void> write_plan_file(const plan::Plan& plan, const std::filesystem::path& path) {
  const auto failure = [&](const std::string& detail) {
    return Error{ErrorKind::io, path.string(), "", "", detail};
  };
  if (plan.sop_instance_uid.empty() || plan.patient_id.empty() || plan.beams.empty())
    return failure("the plan needs a SOP Instance UID, a Patient ID and a beam to be written");
  DcmFileFormat file;
  DcmDataset& data = *file.getDataset();
  try {
    write_header(data, plan);
    write_dose_references(data, plan);
    write_fraction_groups(data, plan);
    for (std::size_t i = 0; i < plan.beams.size(); ++i)
      write_beam(new_item(data, DCM_BeamSequence, i), plan.beams[i]);
    write_setups(data, plan);
  } catch (const WriteFailure& e) {
    return failure(e.what());
  }
  const OFCondition saved = file.saveFile(path.string().c_str(), EXS_LittleEndianExplicit);
  if (saved.bad()) return failure(std::string("cannot save the file: ") + saved.text());
  return {};
}

}  // namespace countersign::dicom
