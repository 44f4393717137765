#include "write_study.hpp"

#include <make_demo_plans/write_plan.hpp>

#include <dcmtk/config/osconfig.h>
#include <dcmtk/dcmdata/dcdeftag.h>
#include <dcmtk/dcmdata/dcfilefo.h>
#include <dcmtk/dcmdata/dcuid.h>

#include <fmt/format.h>

#include <cmath>
#include <stdexcept>

namespace make_demo_studies {

namespace {

constexpr const char* scan_date = "20260112";
constexpr const char* scan_time = "141500";

void put(DcmItem& item, const DcmTagKey& tag, const std::string& value) {
  if (item.putAndInsertString(tag, value.c_str()).bad())
    throw std::runtime_error("cannot write " + DcmTag(tag).toString() + " = " + value);
}

// A decimal string (DS) of at most 16 characters, no negative zero.
std::string ds(double value) {
  if (std::abs(value) < 5e-10) value = 0.0;
  for (int precision = 10; precision > 0; --precision) {
    std::string text = fmt::format("{:.{}g}", value, precision);
    if (text.size() <= 16) return text;
  }
  throw std::logic_error("value does not fit a DS");
}

DcmItem& new_item(DcmItem& parent, const DcmTagKey& sequence, long index) {
  DcmItem* item = nullptr;
  if (parent.findOrCreateSequenceItem(sequence, item, index).bad() || item == nullptr)
    throw std::runtime_error("cannot create sequence item");
  return *item;
}

void save(DcmFileFormat& file, const std::filesystem::path& path) {
  if (file.saveFile(path.c_str(), EXS_LittleEndianExplicit).bad())
    throw std::runtime_error("cannot write " + path.string());
}

// Patient, General Study and General Equipment, shared by the CT and the structure set.
void write_common(DcmItem& ds_, const PhantomSpec& phantom) {
  put(ds_, DCM_SpecificCharacterSet, "ISO_IR 100");
  put(ds_, DCM_InstanceCreationDate, scan_date);
  put(ds_, DCM_InstanceCreationTime, scan_time);
  put(ds_, DCM_StudyDate, scan_date);
  put(ds_, DCM_StudyTime, scan_time);
  put(ds_, DCM_AccessionNumber, "");
  put(ds_, DCM_Manufacturer, "Fernhollow demo generator (INVENTED)");
  put(ds_, DCM_InstitutionName, "Fernhollow Radiotherapy Unit (INVENTED)");
  put(ds_, DCM_ReferringPhysicianName, "");
  put(ds_, DCM_PatientName, phantom.patient_name);
  put(ds_, DCM_PatientID, phantom.patient_id);
  put(ds_, DCM_PatientBirthDate, "");
  put(ds_, DCM_PatientSex, "O");
  put(ds_, DCM_StudyInstanceUID, study_uid(phantom, 2));
  put(ds_, DCM_StudyID, "FERN-DEMO");
  put(ds_, DCM_SoftwareVersions, "countersign demo 1");
}

std::vector<Uint16> slice_pixels(const PhantomSpec& phantom, std::size_t k) {
  std::vector<Uint16> pixels(phantom.columns * phantom.rows);
  const PlaneOutlines plane(phantom, phantom.z_mm(k));
  for (std::size_t j = 0; j < phantom.rows; ++j) {
    const double y = phantom.first_centre_mm[1] + static_cast<double>(j) * phantom.pixel_mm;
    for (std::size_t i = 0; i < phantom.columns; ++i) {
      const double x = phantom.first_centre_mm[0] + static_cast<double>(i) * phantom.pixel_mm;
      pixels[j * phantom.columns + i] = static_cast<Uint16>(plane.hu_at(x, y) + 1024);  // intercept -1024
    }
  }
  return pixels;
}

void write_ct_slice(const PhantomSpec& phantom, std::size_t k, const std::filesystem::path& path) {
  DcmFileFormat file;
  DcmDataset& d = *file.getDataset();
  write_common(d, phantom);
  put(d, DCM_SOPClassUID, UID_CTImageStorage);
  put(d, DCM_SOPInstanceUID, study_uid(phantom, 8, static_cast<int>(k + 1)));
  put(d, DCM_ImageType, "ORIGINAL\\PRIMARY\\AXIAL");
  put(d, DCM_Modality, "CT");
  put(d, DCM_StationName, phantom.station_name);
  put(d, DCM_ManufacturerModelName, "make_demo_studies");
  put(d, DCM_SeriesDescription, phantom.description);
  put(d, DCM_BodyPartExamined, "CHEST");  // unpaired, so no Laterality (0020,0060)
  put(d, DCM_SliceThickness, ds(phantom.slice_mm));
  put(d, DCM_KVP, "120");
  put(d, DCM_PatientPosition, "HFS");
  put(d, DCM_SeriesInstanceUID, study_uid(phantom, 7));
  put(d, DCM_SeriesNumber, "2");
  put(d, DCM_AcquisitionNumber, "1");
  put(d, DCM_InstanceNumber, std::to_string(k + 1));
  const auto& c = phantom.first_centre_mm;
  put(d, DCM_ImagePositionPatient, ds(c[0]) + "\\" + ds(c[1]) + "\\" + ds(phantom.z_mm(k)));
  put(d, DCM_ImageOrientationPatient, "1\\0\\0\\0\\1\\0");
  put(d, DCM_FrameOfReferenceUID, study_uid(phantom, 4));
  put(d, DCM_PositionReferenceIndicator, "");
  put(d, DCM_SliceLocation, ds(phantom.z_mm(k)));
  put(d, DCM_SamplesPerPixel, "1");
  put(d, DCM_PhotometricInterpretation, "MONOCHROME2");
  put(d, DCM_Rows, std::to_string(phantom.rows));
  put(d, DCM_Columns, std::to_string(phantom.columns));
  put(d, DCM_PixelSpacing, ds(phantom.pixel_mm) + "\\" + ds(phantom.pixel_mm));
  put(d, DCM_BitsAllocated, "16");
  put(d, DCM_BitsStored, "12");
  put(d, DCM_HighBit, "11");
  put(d, DCM_PixelRepresentation, "0");
  put(d, DCM_RescaleIntercept, "-1024");
  put(d, DCM_RescaleSlope, "1");
  put(d, DCM_RescaleType, "HU");
  const auto pixels = slice_pixels(phantom, k);
  if (d.putAndInsertUint16Array(DCM_PixelData, pixels.data(), static_cast<unsigned long>(pixels.size()))
          .bad())
    throw std::runtime_error("cannot write pixel data");
  save(file, path);
}

std::string contour_data(const Polygon& polygon, double z_mm) {
  std::string text;
  for (const auto& p : polygon) {
    if (!text.empty()) text += '\\';
    text += ds(p[0]) + "\\" + ds(p[1]) + "\\" + ds(z_mm);
  }
  return text;
}

void write_references(DcmDataset& d, const PhantomSpec& phantom) {
  DcmItem& frame = new_item(d, DCM_ReferencedFrameOfReferenceSequence, 0);
  put(frame, DCM_FrameOfReferenceUID, study_uid(phantom, 4));
  DcmItem& study = new_item(frame, DCM_RTReferencedStudySequence, 0);
  put(study, DCM_ReferencedSOPClassUID, "1.2.840.10008.3.1.2.3.1");  // Detached Study Management (retired)
  put(study, DCM_ReferencedSOPInstanceUID, study_uid(phantom, 2));
  DcmItem& series = new_item(study, DCM_RTReferencedSeriesSequence, 0);
  put(series, DCM_SeriesInstanceUID, study_uid(phantom, 7));
  for (std::size_t k = 0; k < phantom.slices; ++k) {
    DcmItem& image = new_item(series, DCM_ContourImageSequence, static_cast<long>(k));
    put(image, DCM_ReferencedSOPClassUID, UID_CTImageStorage);
    put(image, DCM_ReferencedSOPInstanceUID, study_uid(phantom, 8, static_cast<int>(k + 1)));
  }
}

// ROI `number` (1-based) with one contour per polygon per slice.
void write_roi(DcmDataset& d, const PhantomSpec& phantom, const Region& region, int number) {
  const long index = number - 1;
  DcmItem& roi = new_item(d, DCM_StructureSetROISequence, index);
  put(roi, DCM_ROINumber, std::to_string(number));
  put(roi, DCM_ReferencedFrameOfReferenceUID, study_uid(phantom, 4));
  put(roi, DCM_ROIName, region.roi_name);
  put(roi, DCM_ROIGenerationAlgorithm, "MANUAL");
  DcmItem& contours = new_item(d, DCM_ROIContourSequence, index);
  put(contours, DCM_ROIDisplayColor, region.interpreted_type == "EXTERNAL" ? "0\\255\\0" : "255\\0\\255");
  long c = 0;
  for (std::size_t k = 0; k < phantom.slices; ++k) {
    for (const Polygon& polygon : region.outline(phantom.z_mm(k))) {
      DcmItem& contour = new_item(contours, DCM_ContourSequence, c++);
      DcmItem& image = new_item(contour, DCM_ContourImageSequence, 0);
      put(image, DCM_ReferencedSOPClassUID, UID_CTImageStorage);
      put(image, DCM_ReferencedSOPInstanceUID, study_uid(phantom, 8, static_cast<int>(k + 1)));
      put(contour, DCM_ContourGeometricType, "CLOSED_PLANAR");
      put(contour, DCM_NumberOfContourPoints, std::to_string(polygon.size()));
      put(contour, DCM_ContourNumber, std::to_string(c));
      put(contour, DCM_ContourData, contour_data(polygon, phantom.z_mm(k)));
    }
  }
  put(contours, DCM_ReferencedROINumber, std::to_string(number));
  DcmItem& observation = new_item(d, DCM_RTROIObservationsSequence, index);
  put(observation, DCM_ObservationNumber, std::to_string(number));
  put(observation, DCM_ReferencedROINumber, std::to_string(number));
  put(observation, DCM_RTROIInterpretedType, region.interpreted_type);
  put(observation, DCM_ROIInterpreter, "");
}

}  // namespace

std::string study_uid(const PhantomSpec& phantom, int kind, int number) {
  return fmt::format("{}.{}.{}.{}", make_demo_plans::uid_root, phantom.uid_suffix, kind, number);
}

std::vector<std::string> write_ct_series(const PhantomSpec& phantom, const std::filesystem::path& dir) {
  std::vector<std::string> names;
  for (std::size_t k = 0; k < phantom.slices; ++k) {
    names.push_back(fmt::format("CT{:03d}.dcm", k + 1));
    write_ct_slice(phantom, k, dir / names.back());
  }
  return names;
}

void write_structure_set(const PhantomSpec& phantom, const std::filesystem::path& dir) {
  DcmFileFormat file;
  DcmDataset& d = *file.getDataset();
  write_common(d, phantom);
  put(d, DCM_SOPClassUID, UID_RTStructureSetStorage);
  put(d, DCM_SOPInstanceUID, study_uid(phantom, 6));
  put(d, DCM_Modality, "RTSTRUCT");
  put(d, DCM_StationName, "FERN-TPS-DEMO");
  put(d, DCM_ManufacturerModelName, "make_demo_studies");
  put(d, DCM_SeriesInstanceUID, study_uid(phantom, 9));
  put(d, DCM_SeriesNumber, "3");
  put(d, DCM_OperatorsName, "");
  put(d, DCM_InstanceNumber, "1");
  put(d, DCM_FrameOfReferenceUID, study_uid(phantom, 4));
  put(d, DCM_PositionReferenceIndicator, "");
  put(d, DCM_StructureSetLabel, "FERN-DEMO");
  put(d, DCM_StructureSetName, phantom.description);
  put(d, DCM_StructureSetDate, scan_date);
  put(d, DCM_StructureSetTime, scan_time);
  write_references(d, phantom);
  // Regions first, the body last: the reader must find the body by its type, not its position.
  int number = 1;
  for (const Region& region : phantom.regions) write_roi(d, phantom, region, number++);
  write_roi(d, phantom, phantom.body, number);
  save(file, dir / "RS.dcm");
}

}  // namespace make_demo_studies
