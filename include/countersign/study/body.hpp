#pragma once

// The body (external outline) on the CT grid, from the structure set's EXTERNAL ROI (contours
// rasterised slice by slice, holes by the even-odd rule) or, without one, from the CT by a stated
// HU threshold and the largest connected component.

#include <countersign/study/body_mask.hpp>
#include <countersign/study/problem.hpp>
#include <countersign/study/volume.hpp>

#include <array>
#include <cstdint>
#include <span>
#include <string>
#include <string_view>
#include <vector>

namespace countersign::study {

// A closed polygon in one transverse plane: x, y vertices in mm (the closing edge is implicit).
using Polygon = std::vector<std::array<double, 2>>;

// One contour as the structure set gives it.
struct PlanarContour {
  double z_mm = 0.0;  // the plane's z (all points share it within planar_tolerance_mm)
  Polygon points_mm;
};

enum class BodySource { rtstruct_external, ct_threshold };
[[nodiscard]] std::string_view code(BodySource source);  // "rtstruct_external" / "ct_threshold"

// Voxels at or above this CT number belong to the body when no EXTERNAL ROI exists
// (common practice, no source: between lung (about -700 HU) and fat (about -100 HU)).
inline constexpr double body_threshold_hu = -350.0;
// Tolerance for "all points of a contour share one z" (DS values carry rounding).
inline constexpr double planar_tolerance_mm = 0.05;

struct Body {
  BodySource source = BodySource::rtstruct_external;
  BodyMask mask;                // on the CT grid; a voxel's centre decides
  std::size_t voxel_count = 0;  // voxels inside
  // The outline per CT slice (index k), for exact ray intersections; the union of all polygons of a
  // slice under the even-odd rule. Empty for the threshold body (rays then use the mask).
  std::vector<std::vector<Polygon>> slice_polygons;
  int roi_number = 0;              // the EXTERNAL ROI (rtstruct_external)
  std::string roi_name;            // its ROI Name (3006,0026)
  double threshold_hu = 0;         // ct_threshold: the threshold used
  std::vector<std::string> notes;  // what was done that a physicist should know (stated methods)
};

// Whether (x, y) lies inside the polygons under the even-odd rule (boundary points may go either way).
[[nodiscard]] bool inside_even_odd(std::span<const Polygon> polygons, double x_mm, double y_mm);

// Sets the rows of slice k to the voxels whose centres lie inside the polygons (even-odd rule).
// Slices are rasterised in increasing k (BodyMask::set_row).
void rasterise_slice(const VoxelGrid& grid, std::size_t k, std::span<const Polygon> polygons, BodyMask& mask);

// The body from the EXTERNAL ROI's contours: each contour's plane goes to the nearest slice; a plane
// outside the CT, or two planes on one slice, is noted. Problems: no contour on the CT
// (body_contour_invalid).
[[nodiscard]] Result<Body> body_from_contours(const VoxelGrid& grid, std::span<const PlanarContour> contours,
                                              int roi_number, std::string roi_name);

// The body from the CT alone: voxels >= threshold_hu, the largest 6-connected component, with
// cavities enclosed in a slice (lungs, bowel gas) filled. Problem: nothing above the threshold
// (body_not_found).
[[nodiscard]] Result<Body> body_from_threshold(const CtVolume& ct, double threshold_hu = body_threshold_hu);

}  // namespace countersign::study
