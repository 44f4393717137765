// The engine: one beam's dose at its dose point from an already parsed plan and loaded library
// (target: at most 10 µs per static beam), and the bare point-dose formula.

#include "demo_inputs.hpp"

#include <countersign/check/calculation_words.hpp>
#include <countersign/engine/beam_dose.hpp>
#include <countersign/engine/dose_point.hpp>
#include <countersign/engine/point_dose.hpp>

#include <benchmark/benchmark.h>

namespace countersign::bench {
namespace {

// One beam of a demo plan with everything compute_beam_dose needs.
struct BeamCase {
  plan::Plan plan;
  const plan::Beam* beam = nullptr;
  const plan::ReferencedBeam* referenced = nullptr;
  engine::DosePoint point;
};

// The plan must outlive the pointers: the case is built in place and never moved afterwards.
void load_case(BeamCase& c, const std::string& file_name, int beam_number) {
  c.plan = demo_plan(file_name);
  for (const auto& group : c.plan.fraction_groups) {
    for (const auto& rb : group.beams) {
      if (rb.beam_number == beam_number) c.referenced = &rb;
    }
  }
  c.beam = c.plan.beam(beam_number);
  if (c.beam == nullptr || c.referenced == nullptr) std::abort();
  const auto point = engine::select_dose_point(c.plan, *c.beam, *c.referenced);
  if (!point) std::abort();
  c.point = *point;
}

void engine_beam(benchmark::State& state, const std::string& file_name, int beam_number) {
  BeamCase c;
  load_case(c, file_name, beam_number);
  const beamdata::Library& library = demo_library();
  const engine::EngineOptions options;
  for (auto _ : state) {
    engine::BeamDose dose =
        engine::compute_beam_dose(c.plan, *c.beam, *c.referenced, c.point, library, options);
    if (dose.problem) state.SkipWithError(check::finding_for(*dose.problem).sentence.c_str());
    benchmark::DoNotOptimize(dose);
  }
  state.counters["segments"] = static_cast<double>(
      engine::compute_beam_dose(c.plan, *c.beam, *c.referenced, c.point, library, options).segments.size());
}
// Static beams (two control points, one segment).
BENCHMARK_CAPTURE(engine_beam, static_open_box_ap, std::string{"fern_box_4field.dcm"}, 1)
    ->Unit(benchmark::kMicrosecond);
BENCHMARK_CAPTURE(engine_beam, static_wedged, std::string{"fern_wedged_pair.dcm"}, 1)
    ->Unit(benchmark::kMicrosecond);
BENCHMARK_CAPTURE(engine_beam, static_mlc, std::string{"fern_static_mlc.dcm"}, 1)
    ->Unit(benchmark::kMicrosecond);
BENCHMARK_CAPTURE(engine_beam, static_extended_ssd, std::string{"fern_extended_ssd.dcm"}, 1)
    ->Unit(benchmark::kMicrosecond);
// Modulated beams: step-and-shoot (6 control points) and an arc (18 control points).
BENCHMARK_CAPTURE(engine_beam, step_and_shoot, std::string{"fern_step_shoot.dcm"}, 1)
    ->Unit(benchmark::kMicrosecond);
BENCHMARK_CAPTURE(engine_beam, arc, std::string{"fern_two_arc.dcm"}, 1)->Unit(benchmark::kMicrosecond);

// The TG-71 formula alone, with the inputs the static open beam resolves to.
void point_dose_formula(benchmark::State& state) {
  BeamCase c;
  load_case(c, "fern_box_4field.dcm", 1);
  const engine::BeamDose dose = engine::compute_beam_dose(c.plan, *c.beam, *c.referenced, c.point,
                                                          demo_library(), engine::EngineOptions{});
  if (dose.beam_data == nullptr) std::abort();
  for (auto _ : state) {
    engine::PointDose point = engine::compute_point_dose(*dose.beam_data, dose.inputs);
    benchmark::DoNotOptimize(point);
  }
}
BENCHMARK(point_dose_formula)->Unit(benchmark::kNanosecond);

}  // namespace
}  // namespace countersign::bench
