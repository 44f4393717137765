#include "write_plan.hpp"

#include "pencil_planner.hpp"
#include "planner.hpp"

#include <demo_linac/model.hpp>

#include <dcmtk/dcmdata/dcdeftag.h>
#include <dcmtk/dcmdata/dcuid.h>

#include <fmt/format.h>

#include <cmath>
#include <stdexcept>

namespace make_demo_plans {

namespace {

constexpr const char* plan_date = "20260115";
constexpr const char* plan_time = "093000";

void put(DcmItem& item, const DcmTagKey& tag, const std::string& value) {
  if (item.putAndInsertString(tag, value.c_str()).bad()) {
    throw std::runtime_error("cannot write " + DcmTag(tag).toString() + " = " + value);
  }
}

// A decimal string of at most 16 characters (DS).
std::string ds(double value) {
  if (std::abs(value) < 5e-10) value = 0.0;
  for (int precision = 10; precision > 0; --precision) {
    std::string text = fmt::format("{:.{}g}", value, precision);
    if (text.size() <= 16) return text;
  }
  throw std::logic_error("value does not fit a DS");
}

std::string ds_list(const std::vector<double>& values) {
  std::string text;
  for (const double v : values) text += (text.empty() ? "" : "\\") + ds(v);
  return text;
}

void put_fl(DcmItem& item, const DcmTagKey& tag, double value) {
  if (item.putAndInsertFloat32(tag, static_cast<Float32>(value)).bad())
    throw std::runtime_error("cannot write FL");
}

DcmItem& new_item(DcmItem& parent, const DcmTagKey& sequence, long index) {
  DcmItem* item = nullptr;
  if (parent.findOrCreateSequenceItem(sequence, item, index).bad() || item == nullptr) {
    throw std::runtime_error("cannot create sequence item");
  }
  return *item;
}

std::string uid(const PlanSpec& plan, int kind, int number = 0) {
  return fmt::format("{}.{}.{}.{}", uid_root, plan.uid_suffix, kind, number);
}

// Dose-point distances along the ray from the source to the dose point (PS3.3 definitions):
// a flat surface perpendicular to the central axis, so both scale with 1/cos of the ray angle.
struct RayDistances {
  double depth_mm;
  double ssd_mm;
};
RayDistances ray_distances(const BeamSpec& beam) {
  const double plane_mm = beam.ssd_mm + beam.depth_mm;  // source to the point's plane
  const double scale =
      std::hypot(plane_mm, beam.off_axis_mm * plane_mm / (demo_linac::sad_cm * 10.0)) / plane_mm;
  return {beam.depth_mm * scale, beam.ssd_mm * scale};
}

// One item of a Beam Dose Verification Control Point Sequence at control point `index`. The demo
// phantom keeps the SSD and depth of the dose point the same at every control point of a beam.
void write_verification_item(DcmItem& item, const BeamSpec& beam, std::size_t index, bool with_contour) {
  const RayDistances ray = ray_distances(beam);
  put(item, DCM_CumulativeMetersetWeight, ds(beam.cumulative_weights.at(index)));
  put(item, DCM_ReferencedControlPointIndex, std::to_string(index));
  put_fl(item, DCM_BeamDosePointDepth, ray.depth_mm);
  put_fl(item, DCM_BeamDosePointEquivalentDepth, ray.depth_mm);  // homogeneous water phantom
  put_fl(item, DCM_BeamDosePointSSD, ray.ssd_mm);
  if (with_contour) put(item, DCM_BeamDosePointSourceToExternalContourDistance, ds(ray.ssd_mm));
}

void write_header(DcmDataset& ds_, const PlanSpec& plan) {
  put(ds_, DCM_SpecificCharacterSet, "ISO_IR 100");
  put(ds_, DCM_InstanceCreationDate, plan_date);
  put(ds_, DCM_InstanceCreationTime, plan_time);
  put(ds_, DCM_SOPClassUID, UID_RTPlanStorage);
  put(ds_, DCM_SOPInstanceUID, uid(plan, 1));
  put(ds_, DCM_StudyDate, plan_date);
  put(ds_, DCM_StudyTime, plan_time);
  put(ds_, DCM_AccessionNumber, "");
  put(ds_, DCM_Modality, "RTPLAN");
  put(ds_, DCM_Manufacturer, "Fernhollow demo generator (INVENTED)");
  put(ds_, DCM_InstitutionName, "Fernhollow Radiotherapy Unit (INVENTED)");
  put(ds_, DCM_ReferringPhysicianName, "");
  put(ds_, DCM_StationName, "FERN-TPS-DEMO");
  put(ds_, DCM_ManufacturerModelName, "make_demo_plans");
  put(ds_, DCM_PatientName, plan.patient_name);
  put(ds_, DCM_PatientID, plan.patient_id);
  put(ds_, DCM_PatientBirthDate, "");
  put(ds_, DCM_PatientSex, "O");
  put(ds_, DCM_SoftwareVersions, "countersign demo 1");
  put(ds_, DCM_StudyInstanceUID, uid(plan, 2));
  put(ds_, DCM_SeriesInstanceUID, uid(plan, 3));
  put(ds_, DCM_StudyID, "FERN-DEMO");
  put(ds_, DCM_SeriesNumber, "1");
  put(ds_, DCM_OperatorsName, "");  // RT Series module, type 2
  put(ds_, DCM_InstanceNumber, "1");
  put(ds_, DCM_FrameOfReferenceUID, uid(plan, 4));
  put(ds_, DCM_PositionReferenceIndicator, "");
  put(ds_, DCM_RTPlanLabel, plan.label);
  put(ds_, DCM_RTPlanName, plan.name);
  put(ds_, DCM_RTPlanDescription, plan.description);
  put(ds_, DCM_RTPlanDate, plan_date);
  put(ds_, DCM_RTPlanTime, plan_time);
  put(ds_, DCM_RTPlanGeometry, "PATIENT");
  DcmItem& structure_set = new_item(ds_, DCM_ReferencedStructureSetSequence, 0);
  put(structure_set, DCM_ReferencedSOPClassUID, UID_RTStructureSetStorage);
  put(structure_set, DCM_ReferencedSOPInstanceUID, uid(plan, 6));
  put(ds_, DCM_ApprovalStatus, "APPROVED");
  put(ds_, DCM_ReviewDate, plan_date);
  put(ds_, DCM_ReviewTime, "100000");
  put(ds_, DCM_ReviewerName, "DEMO^REVIEWER");
}

const BeamSpec& reference_beam(const PlanSpec& plan) {
  for (const auto& beam : plan.beams) {
    if (beam.delivery_type == "TREATMENT") return beam;
  }
  throw std::logic_error("plan without a treatment beam");
}

void write_dose_reference(DcmDataset& ds_, const PlanSpec& plan) {
  double fraction_dose_gy = 0.0;
  for (const auto& beam : plan.beams) fraction_dose_gy += beam.beam_dose_gy.value_or(0.0);
  const auto& point = reference_beam(plan).dose_point_mm;
  DcmItem& item = new_item(ds_, DCM_DoseReferenceSequence, 0);
  put(item, DCM_DoseReferenceNumber, "1");
  put(item, DCM_DoseReferenceUID, uid(plan, 5, 1));
  put(item, DCM_DoseReferenceStructureType, "COORDINATES");
  put(item, DCM_DoseReferenceDescription, "CALC-POINT");
  put(item, DCM_DoseReferencePointCoordinates, ds_list({point[0], point[1], point[2]}));
  put(item, DCM_DoseReferenceType, "TARGET");
  put(item, DCM_TargetPrescriptionDose, ds(std::round(fraction_dose_gy * plan.fractions * 1000.0) / 1000.0));
}

void write_fraction_group(DcmDataset& ds_, const PlanSpec& plan) {
  DcmItem& group = new_item(ds_, DCM_FractionGroupSequence, 0);
  put(group, DCM_FractionGroupNumber, "1");
  put(group, DCM_NumberOfFractionsPlanned, std::to_string(plan.fractions));
  put(group, DCM_NumberOfBeams, std::to_string(plan.beams.size()));
  put(group, DCM_NumberOfBrachyApplicationSetups, "0");
  if (plan.layout == DosePointLayout::beam_level) put(group, DCM_BeamDoseMeaning, "BEAM_LEVEL");
  long index = 0;
  for (const auto& beam : plan.beams) {
    DcmItem& ref = new_item(group, DCM_ReferencedBeamSequence, index++);
    put(ref, DCM_ReferencedBeamNumber, std::to_string(beam.number));
    if (beam.meterset_mu) put(ref, DCM_BeamMeterset, ds(*beam.meterset_mu));
    if (beam.beam_dose_gy) put(ref, DCM_BeamDose, ds(*beam.beam_dose_gy));
    if (beam.delivery_type != "TREATMENT") continue;
    const RayDistances ray = ray_distances(beam);
    switch (plan.layout) {
      case DosePointLayout::beam_level:
        put(ref, DCM_BeamDoseType, "PHYSICAL");
        break;
      case DosePointLayout::referenced_beam_2012:
        put(ref, DCM_RETIRED_BeamDoseSpecificationPoint,
            ds_list({beam.dose_point_mm[0], beam.dose_point_mm[1], beam.dose_point_mm[2]}));
        put_fl(ref, DCM_BeamDosePointDepth, ray.depth_mm);
        put_fl(ref, DCM_BeamDosePointEquivalentDepth, ray.depth_mm);
        put_fl(ref, DCM_BeamDosePointSSD, ray.ssd_mm);
        break;
      case DosePointLayout::fraction_verification:
        put(ref, DCM_ReferencedDoseReferenceUID, uid(plan, 5, 1));
        write_verification_item(new_item(ref, DCM_BeamDoseVerificationControlPointSequence, 0), beam,
                                beam.control_points.size() - 1, false);
        break;
    }
  }
}

void write_devices(DcmItem& beam_item, const BeamSpec& beam) {
  const bool symmetric = beam.jaw_kind == JawKind::symmetric_xy;
  long index = 0;
  for (const char* type : {symmetric ? "X" : "ASYMX", symmetric ? "Y" : "ASYMY"}) {
    DcmItem& item = new_item(beam_item, DCM_BeamLimitingDeviceSequence, index++);
    put(item, DCM_RTBeamLimitingDeviceType, type);
    put(item, DCM_NumberOfLeafJawPairs, "1");
  }
  if (beam.has_mlc) {
    DcmItem& item = new_item(beam_item, DCM_BeamLimitingDeviceSequence, index++);
    put(item, DCM_RTBeamLimitingDeviceType, "MLCX");
    put(item, DCM_NumberOfLeafJawPairs, std::to_string(demo_linac::mlc_leaf_pairs));
    put(item, DCM_LeafPositionBoundaries, ds_list(leaf_boundaries_mm()));
  }
}

void write_jaw_positions(DcmItem& cp, const BeamSpec& beam, long& index) {
  const bool symmetric = beam.jaw_kind == JawKind::symmetric_xy;
  DcmItem& x = new_item(cp, DCM_BeamLimitingDevicePositionSequence, index++);
  put(x, DCM_RTBeamLimitingDeviceType, symmetric ? "X" : "ASYMX");
  put(x, DCM_LeafJawPositions, ds_list({beam.jaws_mm[0], beam.jaws_mm[1]}));
  DcmItem& y = new_item(cp, DCM_BeamLimitingDevicePositionSequence, index++);
  put(y, DCM_RTBeamLimitingDeviceType, symmetric ? "Y" : "ASYMY");
  put(y, DCM_LeafJawPositions, ds_list({beam.jaws_mm[2], beam.jaws_mm[3]}));
}

void write_control_points(DcmItem& beam_item, const PlanSpec& plan, const BeamSpec& beam) {
  const bool arc = beam.gantry_rotation != "NONE";
  for (std::size_t i = 0; i < beam.control_points.size(); ++i) {
    const auto& spec = beam.control_points[i];
    DcmItem& cp = new_item(beam_item, DCM_ControlPointSequence, static_cast<long>(i));
    put(cp, DCM_ControlPointIndex, std::to_string(i));
    const bool first = i == 0;
    const bool mlc_changes = beam.has_mlc && (first || spec.mlc_mm != beam.control_points[i - 1].mlc_mm);
    if (first) {
      put(cp, DCM_NominalBeamEnergy, ds(beam.energy_mv));
      put(cp, DCM_DoseRateSet, "600");
    }
    if (first && !beam.wedge_id.empty()) {
      DcmItem& wedge = new_item(cp, DCM_WedgePositionSequence, 0);
      put(wedge, DCM_ReferencedWedgeNumber, "1");
      put(wedge, DCM_WedgePosition, "IN");
    }
    long device_index = 0;
    if (first) write_jaw_positions(cp, beam, device_index);
    if (mlc_changes) {
      DcmItem& mlc = new_item(cp, DCM_BeamLimitingDevicePositionSequence, device_index++);
      put(mlc, DCM_RTBeamLimitingDeviceType, "MLCX");
      put(mlc, DCM_LeafJawPositions, ds_list(spec.mlc_mm));
    }
    // Later control points repeat only what changes (PS3.3 C.8.8.14); the reader carries the rest.
    if (first || arc) {
      put(cp, DCM_GantryAngle, ds(spec.gantry_deg));
      put(cp, DCM_GantryRotationDirection,
          (arc && i + 1 < beam.control_points.size()) ? beam.gantry_rotation : "NONE");
    }
    if (first) {
      put(cp, DCM_BeamLimitingDeviceAngle, ds(beam.collimator_deg));
      put(cp, DCM_BeamLimitingDeviceRotationDirection, "NONE");
      put(cp, DCM_PatientSupportAngle, ds(beam.couch_deg));
      put(cp, DCM_PatientSupportRotationDirection, "NONE");
      put(cp, DCM_TableTopEccentricAngle, "0");
      put(cp, DCM_TableTopEccentricRotationDirection, "NONE");
      put(cp, DCM_IsocenterPosition,
          ds_list({plan.isocenter_mm[0], plan.isocenter_mm[1], plan.isocenter_mm[2]}));
    }
    if (first || arc) put(cp, DCM_SourceToSurfaceDistance, ds(beam.ssd_mm));
    put(cp, DCM_CumulativeMetersetWeight, ds(beam.cumulative_weights[i]));
    if (beam.delivery_type == "TREATMENT") {
      DcmItem& coefficient = new_item(cp, DCM_ReferencedDoseReferenceSequence, 0);
      put(coefficient, DCM_CumulativeDoseReferenceCoefficient, ds(beam.cumulative_dose_fraction[i]));
      put(coefficient, DCM_ReferencedDoseReferenceNumber, "1");
    }
  }
}

void write_beam(DcmItem& item, const PlanSpec& plan, const BeamSpec& beam) {
  put(item, DCM_Manufacturer, "Fernhollow demo linac (INVENTED)");
  put(item, DCM_InstitutionName, "Fernhollow Radiotherapy Unit (INVENTED)");
  put(item, DCM_TreatmentMachineName, demo_linac::machine_name);
  put(item, DCM_PrimaryDosimeterUnit, "MU");
  put(item, DCM_SourceAxisDistance, ds(demo_linac::sad_cm * 10.0));
  write_devices(item, beam);
  put(item, DCM_BeamNumber, std::to_string(beam.number));
  put(item, DCM_BeamName, beam.name);
  put(item, DCM_BeamDescription, beam.description);
  const bool modulated = beam.control_points.size() > 2 || beam.gantry_rotation != "NONE";
  put(item, DCM_BeamType, modulated ? "DYNAMIC" : "STATIC");
  put(item, DCM_RadiationType, "PHOTON");
  put(item, DCM_TreatmentDeliveryType, beam.delivery_type);
  put(item, DCM_NumberOfWedges, beam.wedge_id.empty() ? "0" : "1");
  if (!beam.wedge_id.empty()) {
    const auto& model = demo_linac::beam_model(beam.energy_mv);
    DcmItem& wedge = new_item(item, DCM_WedgeSequence, 0);
    put(wedge, DCM_WedgeNumber, "1");
    put(wedge, DCM_WedgeType, "STANDARD");
    put(wedge, DCM_WedgeID, beam.wedge_id);
    put(wedge, DCM_WedgeAngle, ds(demo_linac::wedge_angle_deg(beam.wedge_id)));
    put(wedge, DCM_WedgeFactor, ds(demo_linac::wedge_factor(model, beam.wedge_id)));
    put(wedge, DCM_WedgeOrientation, ds(beam.wedge_orientation_deg));
  }
  put(item, DCM_NumberOfCompensators, "0");
  put(item, DCM_NumberOfBoli, "0");
  put(item, DCM_NumberOfBlocks, beam.tray_id.empty() ? "0" : "1");
  if (!beam.tray_id.empty()) {
    // One small corner shielding block on the tray (outside the dose point's neighbourhood).
    DcmItem& block = new_item(item, DCM_BlockSequence, 0);
    put(block, DCM_BlockTrayID, beam.tray_id);
    put(block, DCM_SourceToBlockTrayDistance, "650");
    put(block, DCM_BlockType, "SHIELDING");
    put(block, DCM_BlockDivergence, "PRESENT");
    put(block, DCM_BlockNumber, "1");
    put(block, DCM_BlockName, "CORNER");
    put(block, DCM_MaterialID, "DEMO-ALLOY");
    put(block, DCM_BlockThickness, "75");
    put(block, DCM_BlockTransmission, ds(corner_block_transmission));
    std::vector<double> points;
    for (const auto& vertex : corner_block_outline_mm(beam))
      points.insert(points.end(), vertex.begin(), vertex.end());
    put(block, DCM_BlockNumberOfPoints, std::to_string(points.size() / 2));
    put(block, DCM_BlockData, ds_list(points));
  }
  put(item, DCM_FinalCumulativeMetersetWeight, "1");
  put(item, DCM_NumberOfControlPoints, std::to_string(beam.control_points.size()));
  write_control_points(item, plan, beam);
  put(item, DCM_ReferencedPatientSetupNumber, "1");
  if (plan.layout == DosePointLayout::beam_level && beam.delivery_type == "TREATMENT") {
    DcmItem& ref = new_item(item, DCM_ReferencedDoseReferenceSequence, 0);
    put(ref, DCM_ReferencedDoseReferenceNumber, "1");
    put(ref, DCM_DepthValueAveragingFlag, "NO");
    // The RT Beams module asks for two or more items (PS3.3 C.8.8.14): the first and the last
    // control point of the beam.
    write_verification_item(new_item(ref, DCM_BeamDoseVerificationControlPointSequence, 0), beam, 0, true);
    write_verification_item(new_item(ref, DCM_BeamDoseVerificationControlPointSequence, 1), beam,
                            beam.control_points.size() - 1, true);
  }
}

}  // namespace

std::unique_ptr<DcmFileFormat> build_plan(const PlanSpec& plan) {
  auto file = std::make_unique<DcmFileFormat>();
  DcmDataset& dataset = *file->getDataset();
  write_header(dataset, plan);
  write_dose_reference(dataset, plan);
  write_fraction_group(dataset, plan);
  long index = 0;
  for (const auto& beam : plan.beams) write_beam(new_item(dataset, DCM_BeamSequence, index++), plan, beam);
  DcmItem& setup = new_item(dataset, DCM_PatientSetupSequence, 0);
  put(setup, DCM_PatientSetupNumber, "1");
  put(setup, DCM_PatientPosition, plan.patient_position);
  put(setup, DCM_SetupTechnique, plan.setup_technique);
  put(setup, DCM_SetupTechniqueDescription,
      plan.setup_technique == "FIXED_SSD" ? "extended SSD" : "isocentric");
  return file;
}

}  // namespace make_demo_plans
