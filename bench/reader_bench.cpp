// The RT Plan reader (DCMTK parse + strict plan model) and the beam-data loader.

#include "demo_inputs.hpp"

#include <countersign/beamdata/library.hpp>
#include <countersign/dicom/read_plan.hpp>

#include <benchmark/benchmark.h>

namespace countersign::bench {
namespace {

void read_plan_bytes(benchmark::State& state, const std::string& file_name) {
  const std::vector<std::byte> bytes = demo_plan_bytes(file_name);
  for (auto _ : state) {
    auto plan = dicom::read_plan_bytes(bytes, file_name);
    if (!plan) state.SkipWithError(plan.error().message().c_str());
    benchmark::DoNotOptimize(plan);
  }
  state.SetBytesProcessed(static_cast<std::int64_t>(state.iterations()) * static_cast<std::int64_t>(bytes.size()));
}
BENCHMARK_CAPTURE(read_plan_bytes, two_arc, std::string{"fern_two_arc.dcm"})->Unit(benchmark::kMicrosecond);
BENCHMARK_CAPTURE(read_plan_bytes, box_4field, std::string{"fern_box_4field.dcm"})
    ->Unit(benchmark::kMicrosecond);

void read_plan_file(benchmark::State& state) {
  const auto path = demo_plan_path("fern_two_arc.dcm");
  for (auto _ : state) {
    auto plan = dicom::read_plan_file(path);
    if (!plan) state.SkipWithError(plan.error().message().c_str());
    benchmark::DoNotOptimize(plan);
  }
}
BENCHMARK(read_plan_file)->Unit(benchmark::kMicrosecond);

// Done once per process by the CLI and once per service start by the watcher.
void load_demo_library(benchmark::State& state) {
  const auto folder = source_dir() / "beamdata";
  for (auto _ : state) {
    auto library = beamdata::load_library(folder);
    if (!library) state.SkipWithError(library.error().message().c_str());
    benchmark::DoNotOptimize(library);
  }
}
BENCHMARK(load_demo_library)->Unit(benchmark::kMicrosecond);

}  // namespace
}  // namespace countersign::bench
