// The whole one-plan pipeline as the watcher runs it: library loaded once, then per plan
// bytes -> plan -> check. And check_plan alone on an already parsed plan.

#include "demo_inputs.hpp"

#include <countersign/check/check_plan.hpp>
#include <countersign/dicom/read_plan.hpp>

#include <benchmark/benchmark.h>

namespace countersign::bench {
namespace {

void check_only(benchmark::State& state, const std::string& file_name) {
  const plan::Plan plan = demo_plan(file_name);
  const beamdata::Library& library = demo_library();
  const check::CheckOptions options;
  for (auto _ : state) {
    check::PlanCheck result = check::check_plan(plan, library, options);
    benchmark::DoNotOptimize(result);
  }
}
BENCHMARK_CAPTURE(check_only, two_arc, std::string{"fern_two_arc.dcm"})->Unit(benchmark::kMicrosecond);
BENCHMARK_CAPTURE(check_only, box_4field, std::string{"fern_box_4field.dcm"})->Unit(benchmark::kMicrosecond);

void read_and_check(benchmark::State& state, const std::string& file_name) {
  const std::vector<std::byte> bytes = demo_plan_bytes(file_name);
  const beamdata::Library& library = demo_library();
  const check::CheckOptions options;
  for (auto _ : state) {
    auto plan = dicom::read_plan_bytes(bytes, file_name);
    if (!plan) {
      state.SkipWithError(plan.error().message().c_str());
      break;
    }
    check::PlanCheck result = check::check_plan(*plan, library, options);
    benchmark::DoNotOptimize(result);
  }
}
BENCHMARK_CAPTURE(read_and_check, two_arc, std::string{"fern_two_arc.dcm"})->Unit(benchmark::kMicrosecond);
BENCHMARK_CAPTURE(read_and_check, box_4field, std::string{"fern_box_4field.dcm"})
    ->Unit(benchmark::kMicrosecond);

}  // namespace
}  // namespace countersign::bench
