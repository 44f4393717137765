// The pencil-beam model of tools/pencil_beam (a tool for the demo plans and the tests, not part of
// the product): the kernel fit, and the time per dose point (fluence grid + convolution) for the
// demo's static MLC field and a mantle-sized field. It only needs to be fast enough for the demo-plan
// generator (about a hundred points per run).

#include <pencil_beam/pencil_beam.hpp>

#include <countersign/beamdata/library.hpp>

#include <benchmark/benchmark.h>

#include <cmath>
#include <cstdlib>

namespace {

const countersign::beamdata::BeamData& demo_6x() {
  static const countersign::beamdata::Library library = [] {
    auto loaded =
        countersign::beamdata::load_library(std::filesystem::path(COUNTERSIGN_BENCH_SOURCE_DIR) / "beamdata");
    if (!loaded) std::abort();
    return std::move(*loaded);
  }();
  return library.machines.front().beams.front();
}

// 72 pairs of 5 mm; the demo's rounded static MLC shape (tools/make_demo_plans/demo_plans.cpp).
pencil_beam::Opening static_mlc_opening() {
  pencil_beam::Opening o;
  o.jaws_mm = {-60.0, 60.0, -60.0, 60.0};
  for (int i = 0; i <= 72; ++i) o.leaf_boundaries_mm.push_back(-180.0 + 5.0 * i);
  std::vector<double> a, b;
  for (int i = 0; i < 72; ++i) {
    const double y = -177.5 + 5.0 * i;
    const double half = std::abs(y) < 50.0 ? std::sqrt(2500.0 - y * y) + 5.0 : 0.0;
    a.push_back(-half);
    b.push_back(half);
  }
  o.leaf_positions_mm = a;
  o.leaf_positions_mm.insert(o.leaf_positions_mm.end(), b.begin(), b.end());
  o.leaf_transmission = 0.015;
  o.leaf_end_offset_mm = 0.6;
  return o;
}

void fit_kernel(benchmark::State& state) {
  const auto& beam = demo_6x();
  for (auto _ : state) benchmark::DoNotOptimize(pencil_beam::fit_kernel(beam));
}
BENCHMARK(fit_kernel)->Unit(benchmark::kMillisecond);

void point_dose(benchmark::State& state, const pencil_beam::Opening& opening) {
  const auto& beam = demo_6x();
  const auto kernel = pencil_beam::fit_kernel(beam);
  const pencil_beam::PointGeometry point{0.0, 0.0, 8.0, 100.0};
  for (auto _ : state)
    benchmark::DoNotOptimize(pencil_beam::dose_per_mu_cgy(beam, kernel, opening, point, 100.0));
}
BENCHMARK_CAPTURE(point_dose, static_mlc_12x12cm, static_mlc_opening())->Unit(benchmark::kMicrosecond);
BENCHMARK_CAPTURE(point_dose, open_30x34cm,
                  pencil_beam::Opening{{-150.0, 150.0, -170.0, 170.0}, {}, {}, 0.0, 0.0, {}})
    ->Unit(benchmark::kMicrosecond);

}  // namespace
