// The body from the EXTERNAL ROI: contour planes to CT slices, then scanline rasterisation.

#include <countersign/study/body.hpp>

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <map>

namespace countersign::study {

std::string_view code(BodySource source) {
  return source == BodySource::rtstruct_external ? "rtstruct_external" : "ct_threshold";
}

namespace {

// Contours of one plane, and the plane's distance from the slice it was given to.
struct SlicePlane {
  double z_mm = 0.0;
  double offset_mm = 0.0;
  std::vector<Polygon> polygons;
};

// Groups contours by plane and gives each plane to the nearest slice; keeps, per slice, the plane
// nearest its centre. Counts what was left out so that it can be stated.
struct PlaneAssignment {
  std::map<std::size_t, SlicePlane> by_slice;
  std::size_t planes_beyond_ct = 0;
  std::size_t planes_displaced = 0;  // a second plane on a slice that already had a nearer one
  double largest_offset_mm = 0.0;
};

PlaneAssignment assign_planes(const VoxelGrid& grid, std::span<const PlanarContour> contours) {
  PlaneAssignment out;
  const double dz = grid.spacing_mm[2];
  const auto slices = static_cast<long long>(grid.size[2]);
  std::map<std::size_t, std::vector<SlicePlane>> candidates;
  for (const PlanarContour& contour : contours) {
    const auto k = static_cast<long long>(std::llround((contour.z_mm - grid.origin_mm[2]) / dz));
    if (k < 0 || k >= slices) {
      ++out.planes_beyond_ct;  // counted per contour; planes are a stated summary only
      continue;
    }
    const auto slice = static_cast<std::size_t>(k);
    auto& planes = candidates[slice];
    auto same = std::find_if(planes.begin(), planes.end(), [&](const SlicePlane& p) {
      return std::abs(p.z_mm - contour.z_mm) <= planar_tolerance_mm;
    });
    if (same == planes.end()) {
      planes.push_back({contour.z_mm, contour.z_mm - grid.centre_mm(2, slice), {}});
      same = planes.end() - 1;
    }
    same->polygons.push_back(contour.points_mm);
  }
  for (auto& [slice, planes] : candidates) {
    std::sort(planes.begin(), planes.end(), [](const SlicePlane& a, const SlicePlane& b) {
      return std::abs(a.offset_mm) < std::abs(b.offset_mm);
    });
    out.planes_displaced += planes.size() - 1;
    out.largest_offset_mm = std::max(out.largest_offset_mm, std::abs(planes.front().offset_mm));
    out.by_slice[slice] = std::move(planes.front());
  }
  return out;
}

}  // namespace

Result<Body> body_from_contours(const VoxelGrid& grid, std::span<const PlanarContour> contours,
                                int roi_number, std::string roi_name) {
  const PlaneAssignment planes = assign_planes(grid, contours);
  if (planes.by_slice.empty()) {
    return Problem{
        ProblemKind::body_contour_invalid, "", "", "",
        fmt::format("the EXTERNAL ROI {} \"{}\" has no closed planar contour within the CT's z range "
                    "{:.2f} to {:.2f} mm",
                    roi_number, roi_name, grid.lower_edge_mm(2), grid.upper_edge_mm(2))};
  }
  Body body;
  body.source = BodySource::rtstruct_external;
  body.roi_number = roi_number;
  body.roi_name = std::move(roi_name);
  body.mask = BodyMask(grid);
  body.slice_polygons.assign(grid.size[2], {});
  for (auto& [slice, plane] : planes.by_slice) {
    body.slice_polygons[slice] = plane.polygons;
    rasterise_slice(grid, slice, body.slice_polygons[slice], body.mask);
  }
  body.voxel_count = body.mask.voxel_count();

  body.notes.push_back(fmt::format(
      "body: ROI {} \"{}\" (RT ROI Interpreted Type EXTERNAL), contours on {} of {} CT slices, voxel centres "
      "inside by the even-odd rule",
      body.roi_number, body.roi_name, planes.by_slice.size(), grid.size[2]));
  const std::size_t first = planes.by_slice.begin()->first;
  const std::size_t last = planes.by_slice.rbegin()->first;
  if (last - first + 1 != planes.by_slice.size()) {
    body.notes.push_back(fmt::format(
        "body: {} slices between z = {:.2f} and {:.2f} mm have no EXTERNAL contour; "
        "the body is empty there",
        last - first + 1 - planes.by_slice.size(), grid.centre_mm(2, first), grid.centre_mm(2, last)));
  }
  if (planes.planes_beyond_ct > 0)
    body.notes.push_back(
        fmt::format("body: {} contours beyond the CT's z range ignored", planes.planes_beyond_ct));
  if (planes.planes_displaced > 0)
    body.notes.push_back(
        fmt::format("body: {} contour planes shared a slice with a nearer plane and were ignored",
                    planes.planes_displaced));
  if (planes.largest_offset_mm > 0.25 * grid.spacing_mm[2])
    body.notes.push_back(fmt::format("body: contour planes lie up to {:.2f} mm from the nearest CT slice",
                                     planes.largest_offset_mm));
  return body;
}

}  // namespace countersign::study
