// A CT series (CT Image Storage, one slice per file) into one volume: headers first (checked for
// transverse orientation, consistency and even spacing), then the pixels of each slice in z order,
// rescaled to HU and reordered so that indices increase along +x, +y and +z.

#include <countersign/dicom/read_study.hpp>

#include "study_parts.hpp"

#include <dcmtk/dcmdata/dcdeftag.h>
#include <dcmtk/dcmdata/dcxfer.h>

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>

namespace countersign::dicom::detail {

using study::Result;

namespace {

using study::Problem;
using study::ProblemKind;

constexpr double cosine_tolerance = 1e-3;  // about 0.06 degrees
constexpr double pixel_spacing_tolerance_mm = 1e-4;

struct SliceHeader {
  std::filesystem::path path;
  std::unique_ptr<DcmFileFormat> file;
  std::string sop_instance_uid, frame_uid, study_uid, series_uid, station, manufacturer, patient_position;
  std::array<double, 3> position{};
  std::array<double, 6> orientation{};
  std::array<double, 2> pixel_spacing{};  // between rows (y), between columns (x)
  int rows = 0, columns = 0, bits_stored = 0, pixel_representation = 0;
  double slope = 1.0, intercept = 0.0;
};

Problem attribute_problem(ProblemKind kind, const SliceHeader& slice, const DcmTagKey& tag,
                          std::string detail) {
  return Problem{kind, slice.path.string(), keyword(tag), tag_text(tag), std::move(detail)};
}

// Pixel format: one 16-bit sample per pixel, single frame, uncompressed.
std::optional<Problem> check_pixel_format(const ItemReader& top, SliceHeader& slice) {
  const E_TransferSyntax xfer = slice.file->getDataset()->getOriginalXfer();
  const DcmXfer syntax(xfer);
  if (syntax.isEncapsulated()) {
    return attribute_problem(
        ProblemKind::ct_pixel_data_unsupported, slice, DCM_TransferSyntaxUID,
        fmt::format("compressed pixel data ({}) is not supported; export the CT uncompressed",
                    syntax.getXferName()));
  }
  const auto samples = top.integer(DCM_SamplesPerPixel, Need::required);
  const auto allocated = top.integer(DCM_BitsAllocated, Need::required);
  const auto stored = top.integer(DCM_BitsStored, Need::required);
  const auto high = top.integer(DCM_HighBit, Need::required);
  const auto representation = top.integer(DCM_PixelRepresentation, Need::required);
  const auto frames = top.integer(DCM_NumberOfFrames, Need::optional);
  if (top.failed()) return std::nullopt;
  if (*samples != 1 || *allocated != 16 || *stored < 1 || *stored > 16 || *high != *stored - 1 ||
      (*representation != 0 && *representation != 1) || frames.value_or(1) != 1) {
    return attribute_problem(
        ProblemKind::ct_pixel_data_unsupported, slice, DCM_BitsAllocated,
        fmt::format("pixel format not supported (samples {}, bits allocated {}, stored {}, high "
                    "bit {}, representation {}, frames {}); expected one 16-bit sample, one frame",
                    *samples, *allocated, *stored, *high, *representation, frames.value_or(1)));
  }
  slice.bits_stored = *stored;
  slice.pixel_representation = *representation;
  return std::nullopt;
}

Result<SliceHeader> read_slice_header(const std::filesystem::path& path) {
  auto file = load_part10(path, DCM_UndefinedTagKey);
  if (!file) return as_problem(file.error());
  SliceHeader slice;
  slice.path = path;
  slice.file = std::move(file.value());
  const std::string name = path.string();
  ErrorSink sink;
  const ItemReader top(*slice.file->getDataset(), name, "", sink);
  slice.sop_instance_uid = top.text(DCM_SOPInstanceUID, Need::required);
  slice.frame_uid = top.text(DCM_FrameOfReferenceUID, Need::required);
  slice.study_uid = top.text(DCM_StudyInstanceUID, Need::required);
  slice.series_uid = top.text(DCM_SeriesInstanceUID, Need::required);
  slice.station = top.text(DCM_StationName, Need::optional);
  slice.manufacturer = top.text(DCM_Manufacturer, Need::optional);
  slice.patient_position = top.text(DCM_PatientPosition, Need::optional);
  const auto position = top.numbers(DCM_ImagePositionPatient, Need::required, 3);
  const auto orientation = top.numbers(DCM_ImageOrientationPatient, Need::required, 6);
  const auto spacing = top.numbers(DCM_PixelSpacing, Need::required, 2);
  slice.rows = top.integer(DCM_Rows, Need::required).value_or(0);
  slice.columns = top.integer(DCM_Columns, Need::required).value_or(0);
  slice.slope = top.number(DCM_RescaleSlope, Need::required).value_or(1.0);
  slice.intercept = top.number(DCM_RescaleIntercept, Need::required).value_or(0.0);
  if (sink.failed()) return as_problem(sink.error());
  std::copy(position->begin(), position->end(), slice.position.begin());
  std::copy(orientation->begin(), orientation->end(), slice.orientation.begin());
  std::copy(spacing->begin(), spacing->end(), slice.pixel_spacing.begin());
  if (slice.rows < 1 || slice.columns < 1 || slice.pixel_spacing[0] <= 0.0 || slice.pixel_spacing[1] <= 0.0 ||
      slice.slope == 0.0) {
    return attribute_problem(
        ProblemKind::study_file_invalid, slice, DCM_PixelSpacing,
        fmt::format("rows {}, columns {}, pixel spacing {} x {} mm, rescale slope {}: not a "
                    "usable image geometry",
                    slice.rows, slice.columns, slice.pixel_spacing[0], slice.pixel_spacing[1], slice.slope));
  }
  if (auto problem = check_pixel_format(top, slice)) return *problem;
  if (sink.failed()) return as_problem(sink.error());
  return slice;
}

// +1 or -1 when the cosine is along +-axis only, 0 otherwise.
int axis_sign(const double* cosines, int axis) {
  for (int a = 0; a < 3; ++a) {
    const double expected = a == axis ? 1.0 : 0.0;
    if (std::abs(std::abs(cosines[a]) - expected) > cosine_tolerance) return 0;
  }
  return cosines[axis] > 0 ? 1 : -1;
}

struct Flips {
  bool x = false;
  bool y = false;
};

Result<Flips> transverse_flips(const SliceHeader& slice) {
  const int row_sign = axis_sign(slice.orientation.data(), 0);
  const int column_sign = axis_sign(slice.orientation.data() + 3, 1);
  if (row_sign == 0 || column_sign == 0) {
    const auto& o = slice.orientation;
    return attribute_problem(
        ProblemKind::ct_not_axial, slice, DCM_ImageOrientationPatient,
        fmt::format("{:g}\\{:g}\\{:g}\\{:g}\\{:g}\\{:g} is not a transverse slice (rows along "
                    "+-x, columns along +-y); only axial CT without gantry tilt is supported",
                    o[0], o[1], o[2], o[3], o[4], o[5]));
  }
  return Flips{row_sign < 0, column_sign < 0};
}

// Every slice like the first: size, spacing, orientation, pixel format, series, frame, x/y origin.
std::optional<Problem> check_consistent(const std::vector<SliceHeader>& slices) {
  const SliceHeader& first = slices.front();
  for (const SliceHeader& s : slices) {
    auto differs = [&](const DcmTagKey& tag, const std::string& what) -> std::optional<Problem> {
      return attribute_problem(
          ProblemKind::ct_slices_inconsistent, s, tag,
          fmt::format("{} differs from {} in the same series", what, first.path.string()));
    };
    if (s.rows != first.rows || s.columns != first.columns) return differs(DCM_Rows, "the image size");
    for (int a = 0; a < 2; ++a) {
      if (std::abs(s.pixel_spacing[a] - first.pixel_spacing[a]) > pixel_spacing_tolerance_mm)
        return differs(DCM_PixelSpacing, "the pixel spacing");
    }
    for (int a = 0; a < 6; ++a) {
      if (std::abs(s.orientation[a] - first.orientation[a]) > cosine_tolerance)
        return differs(DCM_ImageOrientationPatient, "the orientation");
    }
    if (s.bits_stored != first.bits_stored || s.pixel_representation != first.pixel_representation)
      return differs(DCM_BitsStored, "the pixel format");
    if (s.frame_uid != first.frame_uid) return differs(DCM_FrameOfReferenceUID, "the Frame of Reference UID");
    for (int a = 0; a < 2; ++a) {
      if (std::abs(s.position[a] - first.position[a]) > slice_position_tolerance_mm) {
        return attribute_problem(
            ProblemKind::ct_not_axial, s, DCM_ImagePositionPatient,
            fmt::format(
                "slices are not stacked along z: x, y of the first pixel ({:g}, {:g}) differ from {} ({:g}, "
                "{:g}) (a tilted or sheared stack is not supported)",
                s.position[0], s.position[1], first.path.string(), first.position[0], first.position[1]));
      }
    }
  }
  return std::nullopt;
}

// Slices sorted by z: the spacing, or why it is not even.
Result<double> slice_spacing(const std::vector<SliceHeader>& slices) {
  const auto& first = slices.front();
  if (slices.size() < 2) {
    return attribute_problem(ProblemKind::ct_slices_inconsistent, first, DCM_ImagePositionPatient,
                             "the CT series has a single slice; a volume needs two or more");
  }
  double smallest = std::numeric_limits<double>::max();
  for (std::size_t k = 1; k < slices.size(); ++k) {
    const double step = slices[k].position[2] - slices[k - 1].position[2];
    if (step <= slice_position_tolerance_mm) {
      return attribute_problem(ProblemKind::ct_slices_inconsistent, slices[k], DCM_ImagePositionPatient,
                               fmt::format("two slices at z = {:g} mm (also {})", slices[k].position[2],
                                           slices[k - 1].path.string()));
    }
    smallest = std::min(smallest, step);
  }
  for (std::size_t k = 1; k < slices.size(); ++k) {
    const SliceHeader& before = slices[k - 1];
    const SliceHeader& after = slices[k];
    const double step = after.position[2] - before.position[2];
    if (std::abs(step - smallest) <= slice_position_tolerance_mm) continue;
    const double multiple = std::round(step / smallest);
    if (multiple >= 2.0 && std::abs(step - multiple * smallest) <= slice_position_tolerance_mm) {
      return attribute_problem(
          ProblemKind::ct_slice_missing, after, DCM_ImagePositionPatient,
          fmt::format("slice positions jump from z = {:g} to {:g} mm ({:g} x the spacing of {:g} "
                      "mm): {:g} slice(s) missing",
                      before.position[2], after.position[2], multiple, smallest, multiple - 1));
    }
    return attribute_problem(
        ProblemKind::ct_spacing_uneven, after, DCM_ImagePositionPatient,
        fmt::format("slice positions are not evenly spaced: z = {:g} to {:g} mm is {:g} mm, "
                    "elsewhere {:g} mm",
                    before.position[2], after.position[2], step, smallest));
  }
  return (slices.back().position[2] - first.position[2]) / static_cast<double>(slices.size() - 1);
}

// The stored value of a pixel: its bits stored, sign-extended when the representation is signed.
struct StoredValue {
  std::uint32_t mask;
  std::int32_t sign_bit;  // 0 when unsigned
  std::int32_t operator()(Uint16 raw) const {
    const auto value = static_cast<std::int32_t>(raw & mask);
    return (value & sign_bit) ? value - 2 * sign_bit : value;
  }
};

std::int16_t clamped_hu(double hu, std::size_t& clamped) {
  if (hu < -32768.0 || hu > 32767.0) {
    ++clamped;
    hu = std::clamp(hu, -32768.0, 32767.0);
  }
  return static_cast<std::int16_t>(hu);
}

// Writes the slice's rows into slice k of the volume, converting each pixel with `hu_of`.
template <class Convert>
void fill_rows(const Uint16* words, const SliceHeader& slice, const Flips& flips, std::size_t k,
               study::CtVolume& ct, Convert hu_of) {
  const auto cols = static_cast<std::size_t>(slice.columns);
  const auto rows = static_cast<std::size_t>(slice.rows);
  for (std::size_t j = 0; j < rows; ++j) {
    std::int16_t* out = ct.hu.data() + ct.grid.index(0, flips.y ? rows - 1 - j : j, k);
    const Uint16* in = words + j * cols;
    if (flips.x) {
      for (std::size_t i = 0; i < cols; ++i) out[cols - 1 - i] = hu_of(in[i]);
    } else {
      for (std::size_t i = 0; i < cols; ++i) out[i] = hu_of(in[i]);
    }
  }
}

// The slice's pixels as HU into slice k of the volume: Rescale Slope and Intercept, rounded to
// 1 HU, clamped to int16 (clamps counted). Integer arithmetic when the slope is 1 and the
// intercept whole, as CT scanners write them.
std::optional<Problem> fill_slice(SliceHeader& slice, const Flips& flips, std::size_t k,
                                  study::CtVolume& ct) {
  const Uint16* words = nullptr;
  unsigned long count = 0;
  const auto pixels = static_cast<std::size_t>(slice.rows) * static_cast<std::size_t>(slice.columns);
  if (slice.file->getDataset()->findAndGetUint16Array(DCM_PixelData, words, &count).bad() ||
      words == nullptr || count < pixels) {
    return attribute_problem(ProblemKind::ct_pixel_data_unsupported, slice, DCM_PixelData,
                             fmt::format("cannot be read as {} 16-bit values", pixels));
  }
  const unsigned bits = static_cast<unsigned>(slice.bits_stored);
  const StoredValue stored{bits == 16 ? 0xFFFFu : (1u << bits) - 1u,
                           slice.pixel_representation == 1 ? std::int32_t{1} << (bits - 1) : 0};
  std::size_t& clamped = ct.clamped_voxel_count;
  if (slice.slope == 1.0 && slice.intercept == std::floor(slice.intercept) &&
      std::abs(slice.intercept) < 65536.0) {
    const auto intercept = static_cast<std::int32_t>(slice.intercept);
    fill_rows(words, slice, flips, k, ct, [&](Uint16 raw) {
      const std::int32_t hu = stored(raw) + intercept;
      return hu >= -32768 && hu <= 32767 ? static_cast<std::int16_t>(hu) : clamped_hu(hu, clamped);
    });
  } else {
    const double slope = slice.slope, intercept = slice.intercept;
    fill_rows(words, slice, flips, k, ct, [&](Uint16 raw) {
      return clamped_hu(std::floor(slope * stored(raw) + intercept + 0.5), clamped);
    });
  }
  slice.file.reset();  // the pixels are in the volume now
  return std::nullopt;
}

study::CtVolume empty_volume(const std::vector<SliceHeader>& slices, const Flips& flips, double spacing_z) {
  const SliceHeader& first = slices.front();
  study::CtVolume ct;
  auto& g = ct.grid;
  g.size = {static_cast<std::size_t>(first.columns), static_cast<std::size_t>(first.rows), slices.size()};
  g.spacing_mm = {first.pixel_spacing[1], first.pixel_spacing[0], spacing_z};
  g.origin_mm = {
      first.position[0] - (flips.x ? static_cast<double>(first.columns - 1) * g.spacing_mm[0] : 0.0),
      first.position[1] - (flips.y ? static_cast<double>(first.rows - 1) * g.spacing_mm[1] : 0.0),
      first.position[2]};
  ct.hu.resize(g.voxel_count());  // not zeroed: every slice is written
  ct.study_instance_uid = first.study_uid;
  ct.series_instance_uid = first.series_uid;
  ct.frame_of_reference_uid = first.frame_uid;
  ct.station_name = first.station;
  ct.manufacturer = first.manufacturer;
  ct.patient_position = first.patient_position;
  for (const auto& s : slices) {
    ct.slice_files.push_back(s.path.string());
    ct.slice_sop_instance_uids.push_back(s.sop_instance_uid);
  }
  return ct;
}

}  // namespace

Result<study::CtVolume> read_ct_series(const std::vector<std::filesystem::path>& files) {
  std::vector<SliceHeader> slices;
  slices.reserve(files.size());
  for (const auto& path : files) {
    auto slice = read_slice_header(path);
    if (!slice) return slice.problem();
    slices.push_back(std::move(slice.value()));
  }
  if (slices.empty())
    return Problem{ProblemKind::ct_series_not_found, "", "", "", "the CT series has no readable slice"};
  const auto flips = transverse_flips(slices.front());
  if (!flips) return flips.problem();
  if (auto problem = check_consistent(slices)) return *problem;
  std::sort(slices.begin(), slices.end(),
            [](const SliceHeader& a, const SliceHeader& b) { return a.position[2] < b.position[2]; });
  const auto spacing_z = slice_spacing(slices);
  if (!spacing_z) return spacing_z.problem();
  study::CtVolume ct = empty_volume(slices, *flips, *spacing_z);
  for (std::size_t k = 0; k < slices.size(); ++k) {
    if (auto problem = fill_slice(slices[k], *flips, k, ct)) return *problem;
  }
  return ct;
}

}  // namespace countersign::dicom::detail
