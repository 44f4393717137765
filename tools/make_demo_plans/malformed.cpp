#include "malformed.hpp"

#include "write_plan.hpp"

#include <demo_linac/model.hpp>

#include <dcmtk/dcmdata/dcdeftag.h>
#include <dcmtk/dcmdata/dcistrmb.h>
#include <dcmtk/dcmdata/dcostrmb.h>
#include <dcmtk/dcmdata/dcuid.h>
#include <dcmtk/dcmdata/dcwcache.h>

#include <fmt/format.h>

#include <fstream>
#include <functional>
#include <stdexcept>

namespace make_demo_plans {

namespace {

struct Defect {
  std::string file;       // written into the corpus folder
  std::string base_plan;  // demo plan file it starts from
  std::string keyword;    // attribute the error must name ("-" when no attribute applies)
  std::string tag;        // "(GGGG,EEEE)" or "-"
  std::string kind;       // the ErrorKind the reader should report
  std::string what;       // one line for the manifest
  std::function<void(DcmDataset&)> mutate;
  std::function<std::string(const std::string&)> raw;  // replaces the file bytes instead
};

DcmItem& item_at(DcmItem& parent, const DcmTagKey& sequence, unsigned long index) {
  DcmItem* item = nullptr;
  if (parent.findAndGetSequenceItem(sequence, item, static_cast<int>(index)).bad() || item == nullptr) {
    throw std::runtime_error("corpus: missing sequence item");
  }
  return *item;
}
DcmItem& beam(DcmDataset& ds, unsigned long i = 0) { return item_at(ds, DCM_BeamSequence, i); }
DcmItem& cp(DcmDataset& ds, unsigned long c, unsigned long b = 0) {
  return item_at(beam(ds, b), DCM_ControlPointSequence, c);
}
DcmItem& group(DcmDataset& ds) { return item_at(ds, DCM_FractionGroupSequence, 0); }
DcmItem& ref_beam(DcmDataset& ds, unsigned long i = 0) {
  return item_at(group(ds), DCM_ReferencedBeamSequence, i);
}
DcmItem& device_position(DcmDataset& ds, const char* type) {
  DcmItem& point = cp(ds, 0);
  for (unsigned long i = 0;; ++i) {
    DcmItem& item = item_at(point, DCM_BeamLimitingDevicePositionSequence, i);
    OFString value;
    item.findAndGetOFString(DCM_RTBeamLimitingDeviceType, value);
    if (value == type) return item;
  }
}

void set(DcmItem& item, const DcmTagKey& tag, const std::string& value) {
  if (item.putAndInsertString(tag, value.c_str()).bad()) throw std::runtime_error("corpus: cannot set value");
}
void remove(DcmItem& item, const DcmTagKey& tag) {
  if (item.findAndDeleteElement(tag).bad()) throw std::runtime_error("corpus: cannot delete element");
}

std::string tag_text(const DcmTagKey& tag) {
  return fmt::format("({:04X},{:04X})", tag.getGroup(), tag.getElement());
}

std::string save_and_read(DcmFileFormat& file, E_FileWriteMode mode) {
  // Serialise through a temporary file: simple, and the same writer as the demo plans.
  const auto path = std::filesystem::temp_directory_path() / "make_demo_plans_corpus.tmp";
  if (file.saveFile(path.c_str(), EXS_LittleEndianExplicit, EET_ExplicitLength, EGL_recalcGL, EPD_noChange, 0,
                    0, mode)
          .bad()) {
    throw std::runtime_error("corpus: cannot write");
  }
  std::ifstream in(path, std::ios::binary);
  std::string bytes((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
  std::filesystem::remove(path);
  return bytes;
}

// The intact plan is saved first so its meta header is complete; the defect is then applied to
// the dataset only (otherwise DCMTK would invent a fresh UID for a missing SOP Instance UID).
std::string defective_bytes(DcmFileFormat& file, const std::function<void(DcmDataset&)>& mutate) {
  std::string bytes = save_and_read(file, EWM_fileformat);
  if (!mutate) return bytes;
  auto sop_class = [&file] {
    OFString uid;
    file.getDataset()->findAndGetOFString(DCM_SOPClassUID, uid);
    return std::string(uid.c_str());
  };
  const std::string before = sop_class();
  mutate(*file.getDataset());
  // A changed SOP class goes into the meta header too, as a real RT Dose or CT file would have it.
  const bool sop_class_changed = file.getDataset()->tagExists(DCM_SOPClassUID) && sop_class() != before;
  return save_and_read(file, sop_class_changed ? EWM_createNewMeta : EWM_dontUpdateMeta);
}

std::vector<Defect> defects() {
  using D = DcmDataset;
  const std::string mlc = "fern_static_mlc.dcm";
  auto attr = [](const std::string& file, const std::string& base, const DcmTagKey& tag,
                 const std::string& keyword, const std::string& kind, const std::string& what,
                 std::function<void(D&)> mutate) {
    return Defect{file, base, keyword, tag_text(tag), kind, what, std::move(mutate), {}};
  };
  return {
      Defect{"empty.dcm",
             mlc,
             "-",
             "-",
             "not_dicom",
             "zero bytes",
             {},
             [](const std::string&) { return std::string{}; }},
      Defect{"not_dicom.dcm",
             mlc,
             "-",
             "-",
             "not_dicom",
             "a text file",
             {},
             [](const std::string&) {
               return std::string{"Fernhollow Radiotherapy Unit: this is a text note, not DICOM.\n"};
             }},
      Defect{"truncated.dcm",
             mlc,
             "-",
             "-",
             "truncated",
             "the plan cut at 60 % of its length",
             {},
             [](const std::string& bytes) { return bytes.substr(0, bytes.size() * 6 / 10); }},
      attr("rt_dose_sop_class.dcm", mlc, DCM_SOPClassUID, "SOPClassUID", "wrong_sop_class",
           "SOP class RT Dose Storage", [](D& ds) { set(ds, DCM_SOPClassUID, UID_RTDoseStorage); }),
      attr("ct_sop_class.dcm", mlc, DCM_SOPClassUID, "SOPClassUID", "wrong_sop_class",
           "SOP class CT Image Storage", [](D& ds) { set(ds, DCM_SOPClassUID, UID_CTImageStorage); }),
      attr("ion_plan_sop_class.dcm", mlc, DCM_SOPClassUID, "SOPClassUID", "wrong_sop_class",
           "SOP class RT Ion Plan Storage", [](D& ds) { set(ds, DCM_SOPClassUID, UID_RTIonPlanStorage); }),
      attr("missing_sop_class_uid.dcm", mlc, DCM_SOPClassUID, "SOPClassUID", "missing_attribute",
           "no SOP Class UID", [](D& ds) { remove(ds, DCM_SOPClassUID); }),
      attr("missing_sop_instance_uid.dcm", mlc, DCM_SOPInstanceUID, "SOPInstanceUID", "missing_attribute",
           "no SOP Instance UID", [](D& ds) { remove(ds, DCM_SOPInstanceUID); }),
      attr("missing_rt_plan_label.dcm", mlc, DCM_RTPlanLabel, "RTPlanLabel", "missing_attribute",
           "no RT Plan Label", [](D& ds) { remove(ds, DCM_RTPlanLabel); }),
      attr("missing_beam_sequence.dcm", mlc, DCM_BeamSequence, "BeamSequence", "missing_attribute",
           "no Beam Sequence", [](D& ds) { remove(ds, DCM_BeamSequence); }),
      attr("missing_fraction_group_sequence.dcm", mlc, DCM_FractionGroupSequence, "FractionGroupSequence",
           "missing_attribute", "no Fraction Group Sequence",
           [](D& ds) { remove(ds, DCM_FractionGroupSequence); }),
      attr("missing_control_point_sequence.dcm", mlc, DCM_ControlPointSequence, "ControlPointSequence",
           "missing_attribute", "beam without Control Point Sequence",
           [](D& ds) { remove(beam(ds), DCM_ControlPointSequence); }),
      attr("missing_beam_number.dcm", mlc, DCM_BeamNumber, "BeamNumber", "missing_attribute",
           "beam without Beam Number", [](D& ds) { remove(beam(ds), DCM_BeamNumber); }),
      attr("control_point_count_mismatch.dcm", mlc, DCM_NumberOfControlPoints, "NumberOfControlPoints",
           "inconsistent", "Number of Control Points 3 with 2 items",
           [](D& ds) { set(beam(ds), DCM_NumberOfControlPoints, "3"); }),
      attr("control_point_index_wrong.dcm", mlc, DCM_ControlPointIndex, "ControlPointIndex", "inconsistent",
           "second control point has index 5", [](D& ds) { set(cp(ds, 1), DCM_ControlPointIndex, "5"); }),
      attr("duplicate_beam_number.dcm", "fern_box_4field.dcm", DCM_BeamNumber, "BeamNumber", "inconsistent",
           "two beams numbered 1", [](D& ds) { set(beam(ds, 1), DCM_BeamNumber, "1"); }),
      attr("fraction_group_missing_beam.dcm", mlc, DCM_ReferencedBeamNumber, "ReferencedBeamNumber",
           "inconsistent", "fraction group refers to beam 7, which does not exist",
           [](D& ds) { set(ref_beam(ds), DCM_ReferencedBeamNumber, "7"); }),
      attr("number_of_beams_mismatch.dcm", mlc, DCM_NumberOfBeams, "NumberOfBeams", "inconsistent",
           "Number of Beams 2 with 1 referenced beam", [](D& ds) { set(group(ds), DCM_NumberOfBeams, "2"); }),
      attr("non_numeric_meterset.dcm", mlc, DCM_BeamMeterset, "BeamMeterset", "bad_value",
           "Beam Meterset \"12a.5\"", [](D& ds) { set(ref_beam(ds), DCM_BeamMeterset, "12a.5"); }),
      attr("negative_meterset.dcm", mlc, DCM_BeamMeterset, "BeamMeterset", "bad_value", "Beam Meterset -5",
           [](D& ds) { set(ref_beam(ds), DCM_BeamMeterset, "-5"); }),
      attr("nan_beam_dose.dcm", mlc, DCM_BeamDose, "BeamDose", "bad_value", "Beam Dose \"NaN\"",
           [](D& ds) { set(ref_beam(ds), DCM_BeamDose, "NaN"); }),
      attr("infinite_sad.dcm", mlc, DCM_SourceAxisDistance, "SourceAxisDistance", "bad_value",
           "Source-Axis Distance \"inf\"", [](D& ds) { set(beam(ds), DCM_SourceAxisDistance, "inf"); }),
      attr("non_numeric_energy.dcm", mlc, DCM_NominalBeamEnergy, "NominalBeamEnergy", "bad_value",
           "Nominal Beam Energy \"six\"", [](D& ds) { set(cp(ds, 0), DCM_NominalBeamEnergy, "six"); }),
      attr("missing_gantry_angle.dcm", mlc, DCM_GantryAngle, "GantryAngle", "missing_attribute",
           "first control point without Gantry Angle", [](D& ds) { remove(cp(ds, 0), DCM_GantryAngle); }),
      attr("gantry_angle_out_of_range.dcm", mlc, DCM_GantryAngle, "GantryAngle", "bad_value",
           "Gantry Angle 400", [](D& ds) { set(cp(ds, 0), DCM_GantryAngle, "400"); }),
      attr("isocenter_two_values.dcm", mlc, DCM_IsocenterPosition, "IsocenterPosition", "bad_value",
           "Isocenter Position with two values",
           [](D& ds) { set(cp(ds, 0), DCM_IsocenterPosition, "5\\40"); }),
      attr("missing_device_positions.dcm", mlc, DCM_BeamLimitingDevicePositionSequence,
           "BeamLimitingDevicePositionSequence", "missing_attribute",
           "first control point without jaw/MLC positions",
           [](D& ds) { remove(cp(ds, 0), DCM_BeamLimitingDevicePositionSequence); }),
      attr("leaf_jaw_count_mismatch.dcm", mlc, DCM_LeafJawPositions, "LeafJawPositions", "bad_value",
           fmt::format("MLCX with {} leaf positions for {} pairs", 2 * demo_linac::mlc_leaf_pairs - 2,
                       demo_linac::mlc_leaf_pairs),
           [](D& ds) {
             DcmItem& item = device_position(ds, "MLCX");
             OFString all;
             item.findAndGetOFStringArray(DCM_LeafJawPositions, all);
             std::string text(all.c_str());
             text = text.substr(0, text.rfind('\\'));
             text = text.substr(0, text.rfind('\\'));
             set(item, DCM_LeafJawPositions, text);
           }),
      attr("leaves_crossed.dcm", mlc, DCM_LeafJawPositions, "LeafJawPositions", "bad_value",
           "bank A beyond bank B in one leaf pair",
           [](D& ds) {
             DcmItem& item = device_position(ds, "MLCX");
             std::string text;
             const int pairs = demo_linac::mlc_leaf_pairs;
             for (int i = 0; i < 2 * pairs; ++i) {
               OFString value;
               item.findAndGetOFString(DCM_LeafJawPositions, value, i);
               if (i == 30) value = "25";
               if (i == pairs + 30) value = "-25";
               text += (i ? "\\" : "") + std::string(value.c_str());
             }
             set(item, DCM_LeafJawPositions, text);
           }),
      attr("undeclared_device_type.dcm", mlc, DCM_RTBeamLimitingDeviceType, "RTBeamLimitingDeviceType",
           "inconsistent", "control point positions for MLCY, which the beam does not declare",
           [](D& ds) { set(device_position(ds, "MLCX"), DCM_RTBeamLimitingDeviceType, "MLCY"); }),
      attr("leaf_boundaries_count_mismatch.dcm", mlc, DCM_LeafPositionBoundaries, "LeafPositionBoundaries",
           "inconsistent", fmt::format("{0} leaf boundaries for {0} pairs", demo_linac::mlc_leaf_pairs),
           [](D& ds) {
             DcmItem& device = item_at(beam(ds), DCM_BeamLimitingDeviceSequence, 2);
             OFString all;
             device.findAndGetOFStringArray(DCM_LeafPositionBoundaries, all);
             std::string text(all.c_str());
             set(device, DCM_LeafPositionBoundaries, text.substr(0, text.rfind('\\')));
           }),
      attr("final_weight_mismatch.dcm", mlc, DCM_FinalCumulativeMetersetWeight,
           "FinalCumulativeMetersetWeight", "inconsistent",
           "Final Cumulative Meterset Weight 2 while the last control point has 1",
           [](D& ds) { set(beam(ds), DCM_FinalCumulativeMetersetWeight, "2"); }),
      attr("decreasing_meterset_weight.dcm", "fern_step_shoot.dcm", DCM_CumulativeMetersetWeight,
           "CumulativeMetersetWeight", "inconsistent",
           "cumulative meterset weight going down between control points",
           [](D& ds) { set(cp(ds, 2), DCM_CumulativeMetersetWeight, "0.9"); }),
      attr("number_of_wedges_mismatch.dcm", "fern_wedged_pair.dcm", DCM_NumberOfWedges, "NumberOfWedges",
           "inconsistent", "Number of Wedges 2 with one wedge item",
           [](D& ds) { set(beam(ds), DCM_NumberOfWedges, "2"); }),
      attr("wedge_position_unknown_wedge.dcm", "fern_wedged_pair.dcm", DCM_ReferencedWedgeNumber,
           "ReferencedWedgeNumber", "inconsistent", "wedge position for wedge 3, which does not exist",
           [](D& ds) {
             set(item_at(cp(ds, 0), DCM_WedgePositionSequence, 0), DCM_ReferencedWedgeNumber, "3");
           }),
      attr("missing_patient_setup.dcm", mlc, DCM_ReferencedPatientSetupNumber, "ReferencedPatientSetupNumber",
           "inconsistent", "beam refers to patient setup 9",
           [](D& ds) { set(beam(ds), DCM_ReferencedPatientSetupNumber, "9"); }),
      attr("missing_dose_reference.dcm", mlc, DCM_ReferencedDoseReferenceNumber,
           "ReferencedDoseReferenceNumber", "inconsistent", "control point refers to dose reference 4",
           [](D& ds) {
             set(item_at(cp(ds, 1), DCM_ReferencedDoseReferenceSequence, 0),
                 DCM_ReferencedDoseReferenceNumber, "4");
           }),
      attr("nan_dose_point_depth.dcm", mlc, DCM_BeamDosePointDepth, "BeamDosePointDepth", "bad_value",
           "Beam Dose Point Depth (FL) not a number",
           [](D& ds) {
             DcmItem& ref = item_at(beam(ds), DCM_ReferencedDoseReferenceSequence, 0);
             DcmItem& verification = item_at(ref, DCM_BeamDoseVerificationControlPointSequence, 0);
             verification.putAndInsertFloat32(DCM_BeamDosePointDepth,
                                              std::numeric_limits<Float32>::quiet_NaN());
           }),
  };
}

}  // namespace

void write_malformed_corpus(const std::vector<PlanSpec>& plans, const std::filesystem::path& dir) {
  std::filesystem::create_directories(dir);
  std::ofstream manifest(dir / "EXPECTED.tsv");
  manifest
      << "# Malformed-input corpus written by tools/make_demo_plans (INVENTED data, one defect per file).\n"
         "# Each file must be rejected with exit code 3 and a one-line message naming the file and,\n"
         "# where a keyword is given, that DICOM attribute keyword and tag. kind = expected ErrorKind.\n"
         "file\tkeyword\ttag\tkind\tdefect\n";
  for (const auto& defect : defects()) {
    const auto base = std::find_if(plans.begin(), plans.end(),
                                   [&](const PlanSpec& p) { return p.file_name == defect.base_plan; });
    if (base == plans.end()) throw std::logic_error("corpus: unknown base plan " + defect.base_plan);
    auto file = build_plan(*base);
    std::string bytes = defective_bytes(*file, defect.mutate);
    if (defect.raw) bytes = defect.raw(bytes);
    std::ofstream out(dir / defect.file, std::ios::binary);
    out.write(bytes.data(), static_cast<std::streamsize>(bytes.size()));
    manifest << defect.file << '\t' << defect.keyword << '\t' << defect.tag << '\t' << defect.kind << '\t'
             << defect.what << '\n';
  }
}

}  // namespace make_demo_plans
