// The INVENTED demo phantoms. Geometry in mm, DICOM patient coordinates (x left, y posterior, z head).

#include "phantom.hpp"

#include <cmath>
#include <numbers>

namespace make_demo_studies {

bool inside(const std::vector<Polygon>& polygons, double x_mm, double y_mm) {
  bool in = false;
  for (const auto& polygon : polygons) {
    for (std::size_t a = 0, b = polygon.size() - 1; a < polygon.size(); b = a++) {
      const auto& p = polygon[a];
      const auto& q = polygon[b];
      if ((p[1] > y_mm) != (q[1] > y_mm) && x_mm < p[0] + (y_mm - p[1]) * (q[0] - p[0]) / (q[1] - p[1]))
        in = !in;
    }
  }
  return in;
}

int PhantomSpec::hu_at(double x_mm, double y_mm, double z_mm) const {
  return PlaneOutlines(*this, z_mm).hu_at(x_mm, y_mm);
}

PlaneOutlines::PlaneOutlines(const PhantomSpec& spec, double z_mm)
    : phantom(&spec), body(spec.body.outline(z_mm)) {
  for (const auto& region : spec.regions) regions.push_back(region.outline(z_mm));
}

int PlaneOutlines::hu_at(double x_mm, double y_mm) const {
  if (!inside(body, x_mm, y_mm)) return phantom->air_hu;
  int hu = phantom->body.hu;
  for (std::size_t r = 0; r < regions.size(); ++r) {
    if (inside(regions[r], x_mm, y_mm)) hu = phantom->regions[r].hu;
  }
  return hu;
}

double demo_density(int hu) {
  if (hu <= -1000) return 0.0;
  if (hu <= 0) return (hu + 1000) / 1000.0;
  if (hu <= 3000) return 1.0 + 1.5 * hu / 3000.0;
  return 2.5;
}

namespace {

Outline rectangle(double x1, double x2, double y1, double y2) {
  return [=](double) { return std::vector<Polygon>{{{x1, y1}, {x2, y1}, {x2, y2}, {x1, y2}}}; };
}

Polygon ellipse(double cx, double cy, double a, double b, int vertices) {
  Polygon polygon;
  for (int i = 0; i < vertices; ++i) {
    const double t = 2.0 * std::numbers::pi * i / vertices;
    polygon.push_back({cx + a * std::cos(t), cy + b * std::sin(t)});
  }
  return polygon;
}

// Water box 300 (x) x 200 (y) mm, a 40 mm lung-density slab 40 mm below the anterior surface.
// Every face lies on a voxel face of the 5 mm grid, so slab depths are exact on the CT.
PhantomSpec lung_slab() {
  PhantomSpec p;
  p.folder = "fern_lung_slab";
  p.uid_suffix = "201";
  p.patient_id = "FERN-PH-0201";
  p.patient_name = "PHANTOM^LUNGSLAB";
  p.description = "INVENTED water box with a lung-density slab";
  p.columns = p.rows = 64;
  p.slices = 20;
  p.pixel_mm = p.slice_mm = 5.0;
  p.first_centre_mm = {-157.5, -157.5, -47.5};
  p.body = {"BODY", "EXTERNAL", 0, rectangle(-150.0, 150.0, -100.0, 100.0)};
  p.regions = {{"LUNG-SLAB", "ORGAN", -700, rectangle(-150.0, 150.0, -60.0, -20.0)}};
  return p;
}

// A chest (ellipse) with a breast-like bump on the left anterior side whose size changes along z,
// and two lungs: for tangential beams with missing tissue.
PhantomSpec breast() {
  PhantomSpec p;
  p.folder = "fern_breast";
  p.uid_suffix = "202";
  p.patient_id = "FERN-PH-0202";
  p.patient_name = "PHANTOM^BREAST";
  p.description = "INVENTED curved breast-like phantom";
  p.columns = p.rows = 128;
  p.slices = 20;
  p.pixel_mm = 2.5;
  p.slice_mm = 5.0;
  p.first_centre_mm = {-158.75, -158.75, -47.5};
  p.body = {"SKIN", "EXTERNAL", 0, [](double z) {
              constexpr int vertices = 180;
              constexpr double cx = 0.0, cy = 10.0, a = 150.0, b = 95.0;
              const double peak = -std::numbers::pi / 3.0;  // left anterior
              const double amplitude = 45.0 * std::cos(std::numbers::pi * z / 140.0);
              Polygon polygon;
              for (int i = 0; i < vertices; ++i) {
                const double t = 2.0 * std::numbers::pi * i / vertices - std::numbers::pi;
                const double chest = a * b / std::hypot(b * std::cos(t), a * std::sin(t));
                const double from_peak = std::remainder(t - peak, 2.0 * std::numbers::pi) / 0.45;
                const double r = chest + amplitude * std::exp(-from_peak * from_peak);
                polygon.push_back({cx + r * std::cos(t), cy + r * std::sin(t)});
              }
              return std::vector<Polygon>{polygon};
            }};
  p.regions = {{"LUNG-L", "ORGAN", -750,
                [](double) { return std::vector<Polygon>{ellipse(60.0, 20.0, 45.0, 50.0, 72)}; }},
               {"LUNG-R", "ORGAN", -750,
                [](double) { return std::vector<Polygon>{ellipse(-60.0, 20.0, 45.0, 50.0, 72)}; }}};
  return p;
}

// A water block whose anterior surface is a plane tilted 20 degrees about z (y = -80 + x tan 20).
PhantomSpec oblique() {
  PhantomSpec p;
  p.folder = "fern_oblique";
  p.uid_suffix = "203";
  p.patient_id = "FERN-PH-0203";
  p.patient_name = "PHANTOM^OBLIQUE";
  p.description = "INVENTED water block with an oblique anterior surface";
  p.columns = p.rows = 64;
  p.slices = 16;
  p.pixel_mm = p.slice_mm = 5.0;
  p.first_centre_mm = {-157.5, -157.5, -37.5};
  const double slope = std::tan(20.0 * std::numbers::pi / 180.0);
  p.body = {"BODY", "EXTERNAL", 0, [slope](double) {
              return std::vector<Polygon>{{{-120.0, -80.0 - 120.0 * slope},
                                           {120.0, -80.0 + 120.0 * slope},
                                           {120.0, 100.0},
                                           {-120.0, 100.0}}};
            }};
  return p;
}

}  // namespace

std::vector<PhantomSpec> demo_phantoms() { return {lung_slab(), breast(), oblique()}; }

PhantomSpec bench_phantom(std::size_t slices) {
  PhantomSpec p;
  p.folder = "fern_bench_512";
  p.uid_suffix = "299";
  p.patient_id = "FERN-PH-0299";
  p.patient_name = "PHANTOM^BENCH";
  p.description = "INVENTED 512 x 512 phantom for the loading benchmark";
  p.columns = p.rows = 512;
  p.slices = slices;
  p.pixel_mm = 500.0 / 512.0;
  p.slice_mm = 2.5;
  p.first_centre_mm = {-250.0 + p.pixel_mm / 2.0, -250.0 + p.pixel_mm / 2.0,
                       -static_cast<double>(slices - 1) * p.slice_mm / 2.0};
  p.body = {"BODY", "EXTERNAL", 0,
            [](double) { return std::vector<Polygon>{ellipse(0.0, 0.0, 180.0, 120.0, 256)}; }};
  p.regions = {{"LUNG-L", "ORGAN", -750,
                [](double) { return std::vector<Polygon>{ellipse(70.0, 0.0, 60.0, 70.0, 96)}; }},
               {"LUNG-R", "ORGAN", -750,
                [](double) { return std::vector<Polygon>{ellipse(-70.0, 0.0, 60.0, 70.0, 96)}; }}};
  return p;
}

}  // namespace make_demo_studies
