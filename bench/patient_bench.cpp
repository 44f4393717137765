// Rays through a clinical-size CT (512 x 512 x 100 voxels of 0.98 x 0.98 x 2.5 mm, made in memory:
// an elliptical body with two lungs, the body outline a 256-vertex contour on every slice).
// Target (issue 14): at most 50 µs per ray for depth and radiological depth.

#include <countersign/patient/patient_model.hpp>

#include <benchmark/benchmark.h>

#include <cmath>
#include <numbers>
#include <random>

namespace countersign::bench {
namespace {

study::Polygon ellipse(double cx, double cy, double a, double b, int vertices) {
  study::Polygon polygon;
  for (int n = 0; n < vertices; ++n) {
    const double t = 2.0 * std::numbers::pi * n / vertices;
    polygon.push_back({cx + a * std::cos(t), cy + b * std::sin(t)});
  }
  return polygon;
}

const study::Study& clinical_size_study() {
  static const study::Study s = [] {
    study::Study out;
    auto& g = out.ct.grid;
    g.size = {512, 512, 100};
    g.spacing_mm = {500.0 / 512.0, 500.0 / 512.0, 2.5};
    g.origin_mm = {-250.0 + g.spacing_mm[0] / 2, -250.0 + g.spacing_mm[1] / 2, -123.75};
    out.ct.hu.resize(g.voxel_count());
    const std::vector<study::Polygon> body{ellipse(0.0, 0.0, 180.0, 120.0, 256)};
    const std::vector<study::Polygon> lungs{ellipse(70.0, 0.0, 60.0, 70.0, 96),
                                            ellipse(-70.0, 0.0, 60.0, 70.0, 96)};
    std::vector<study::PlanarContour> contours;
    for (std::size_t k = 0; k < g.size[2]; ++k) {
      contours.push_back({g.centre_mm(2, k), body.front()});
      for (std::size_t j = 0; j < g.size[1]; ++j) {
        for (std::size_t i = 0; i < g.size[0]; ++i) {
          const double x = g.centre_mm(0, i), y = g.centre_mm(1, j);
          const bool in_body = study::inside_even_odd(body, x, y);
          out.ct.hu[g.index(i, j, k)] =
              static_cast<std::int16_t>(!in_body ? -1000 : (study::inside_even_odd(lungs, x, y) ? -750 : 20));
        }
      }
    }
    out.body = study::body_from_contours(g, contours, 1, "BODY").value();
    return out;
  }();
  return s;
}

// Made once per study, as the engine will.
const patient::PatientModel& model() {
  static const patient::PatientModel m(
      clinical_size_study(), patient::piecewise_linear_density({{-1000.0, 0.0}, {0.0, 1.0}, {3000.0, 2.5}}));
  return m;
}

// Coplanar rays from a source 1000 mm away at changing gantry angles to points inside the body.
struct RayCase {
  Eigen::Vector3d source;
  Eigen::Vector3d point;
};

std::vector<RayCase> rays(bool non_coplanar) {
  std::mt19937 random(7);
  std::uniform_real_distribution<double> unit(-1.0, 1.0);
  std::vector<RayCase> out;
  for (int n = 0; n < 256; ++n) {
    const Eigen::Vector3d point(60.0 * unit(random), 40.0 * unit(random), 40.0 * unit(random));
    const double g = std::numbers::pi * unit(random);
    const double tilt = non_coplanar ? 0.3 * unit(random) : 0.0;
    const Eigen::Vector3d direction = Eigen::Vector3d(-std::sin(g), std::cos(g), tilt).normalized();
    out.push_back({point - 1000.0 * direction, point});
  }
  return out;
}

void ray_depth(benchmark::State& state, bool non_coplanar) {
  const auto& patient = model();
  const auto cases = rays(non_coplanar);
  std::size_t n = 0;
  for (auto _ : state) {
    const auto& c = cases[n++ % cases.size()];
    auto depth = patient.depth(c.source, c.point);
    if (!depth) state.SkipWithError(depth.problem().message().c_str());
    benchmark::DoNotOptimize(depth);
  }
}
BENCHMARK_CAPTURE(ray_depth, coplanar, false)->Unit(benchmark::kMicrosecond);
BENCHMARK_CAPTURE(ray_depth, non_coplanar, true)->Unit(benchmark::kMicrosecond);

void siddon_only(benchmark::State& state) {
  const auto& study = clinical_size_study();
  const auto cases = rays(false);
  std::vector<patient::VoxelCrossing> crossings;
  std::size_t n = 0;
  for (auto _ : state) {
    const auto& c = cases[n++ % cases.size()];
    benchmark::DoNotOptimize(patient::trace_voxels(study.ct.grid, c.source, c.point, crossings));
  }
}
BENCHMARK(siddon_only)->Unit(benchmark::kMicrosecond);

void central_axis(benchmark::State& state) {
  const auto& patient = model();
  const auto cases = rays(false);
  std::size_t n = 0;
  for (auto _ : state) {
    const auto& c = cases[n++ % cases.size()];
    benchmark::DoNotOptimize(patient::surface_along(patient.outline(), c.source, c.point - c.source));
  }
}
BENCHMARK(central_axis)->Unit(benchmark::kMicrosecond);

// A 100 x 100 mm field at the point's plane, 0.5 mm rows (200 segment-body intersections).
void missing_tissue_10x10(benchmark::State& state) {
  const auto& patient = model();
  patient::FieldPlane plane;
  plane.centre_mm = {150.0, 0.0, 0.0};
  plane.u_axis = {1.0, 0.0, 0.0};
  plane.v_axis = {0.0, 0.0, 1.0};
  const auto field = patient::rectangle_mm(-50.0, 50.0, -50.0, 50.0);
  for (auto _ : state) benchmark::DoNotOptimize(patient.missing_tissue(plane, field));
}
BENCHMARK(missing_tissue_10x10)->Unit(benchmark::kMicrosecond);

}  // namespace
}  // namespace countersign::bench
