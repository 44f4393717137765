#pragma once

// The INVENTED demo phantoms of the fictional Fernhollow Radiotherapy Unit as plain geometry: a body
// outline and inner regions per transverse plane (polygons, even-odd rule), each region of one CT
// number, and the CT grid they are scanned on. Nothing here describes a real person or scanner.

#include <array>
#include <functional>
#include <string>
#include <vector>

namespace make_demo_studies {

using Point2 = std::array<double, 2>;  // x, y in mm (DICOM patient coordinates)
using Polygon = std::vector<Point2>;   // closed; the closing edge is implicit
using Outline = std::function<std::vector<Polygon>(double z_mm)>;

struct Region {
  std::string roi_name;
  std::string interpreted_type;  // RT ROI Interpreted Type (3006,00A4), e.g. "EXTERNAL", "ORGAN"
  int hu = 0;                    // CT number inside (regions listed later win)
  Outline outline;
};

struct PhantomSpec {
  std::string folder;      // testdata/studies/<folder>
  std::string uid_suffix;  // shared with its plans (make_demo_plans UID scheme)
  std::string patient_id;
  std::string patient_name;
  std::string description;
  std::string station_name = "FERN-CT-1";  // Station Name (0008,1010) of the invented scanner
  std::size_t columns = 64;
  std::size_t rows = 64;
  std::size_t slices = 20;
  double pixel_mm = 5.0;
  double slice_mm = 5.0;
  std::array<double, 3> first_centre_mm{};  // centre of the first pixel of the first (lowest z) slice
  int air_hu = -1000;
  Region body;                  // interpreted type EXTERNAL
  std::vector<Region> regions;  // inside the body

  [[nodiscard]] double z_mm(std::size_t k) const {
    return first_centre_mm[2] + static_cast<double>(k) * slice_mm;
  }
  // CT number at a point of slice plane z: body and regions by the even-odd rule.
  [[nodiscard]] int hu_at(double x_mm, double y_mm, double z_mm) const;
};

// The outlines of one plane, evaluated once (for filling a whole slice).
struct PlaneOutlines {
  const PhantomSpec* phantom = nullptr;
  std::vector<Polygon> body;
  std::vector<std::vector<Polygon>> regions;

  PlaneOutlines(const PhantomSpec& spec, double z_mm);
  [[nodiscard]] int hu_at(double x_mm, double y_mm) const;
};

[[nodiscard]] bool inside(const std::vector<Polygon>& polygons, double x_mm, double y_mm);

// The relative electron density the stand-in planner uses (INVENTED table, linear between rows):
// -1000 HU -> 0.00, 0 HU -> 1.00, 3000 HU -> 2.50.
[[nodiscard]] double demo_density(int hu);

// The phantoms written to testdata/studies/ (water box with a lung slab, breast-like, oblique surface).
[[nodiscard]] std::vector<PhantomSpec> demo_phantoms();
// A 512 x 512 x `slices` phantom for the loading benchmark (not committed).
[[nodiscard]] PhantomSpec bench_phantom(std::size_t slices);

}  // namespace make_demo_studies
