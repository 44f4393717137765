// The engine: one beam's dose at its dose point from an already parsed plan and loaded library
// (targets: at most 10 µs per static beam, 20 µs for a static MLC field with 36 sectors, 5 ms for
// an arc of 180 control points), and the bare point-dose formula.

#include "demo_inputs.hpp"

#include <countersign/check/calculation_words.hpp>
#include <countersign/engine/beam_dose.hpp>
#include <countersign/engine/dose_point.hpp>
#include <countersign/engine/point_dose.hpp>

#include <benchmark/benchmark.h>

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <vector>

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

// Sectors of the first part that used sector integration (0: none), for the report beside the time.
double sectors_of(const engine::BeamDose& dose) {
  for (const engine::Segment& s : dose.segments) {
    if (s.sectors) return static_cast<double>(s.sectors->sectors);
  }
  return 0.0;
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
  const engine::BeamDose once =
      engine::compute_beam_dose(c.plan, *c.beam, *c.referenced, c.point, library, options);
  state.counters["segments"] = static_cast<double>(once.segments.size());
  state.counters["sectors"] = sectors_of(once);
}
// The arc's gantry angles unwrapped along its direction of rotation (CW increasing, CC decreasing).
std::vector<double> unwrapped_gantry_deg(const plan::Beam& beam) {
  std::vector<double> angles;
  for (const plan::ControlPoint& cp : beam.control_points) {
    const double g = cp.gantry_deg.value_or(angles.empty() ? 0.0 : angles.back());
    if (angles.empty()) {
      angles.push_back(g);
      continue;
    }
    double step = std::fmod(g - std::fmod(angles.back(), 360.0), 360.0);
    const plan::RotationDirection direction = beam.control_points.front().gantry_rotation.value;
    if (direction == plan::RotationDirection::cw && step < 0.0) step += 360.0;
    if (direction == plan::RotationDirection::cc && step > 0.0) step -= 360.0;
    angles.push_back(angles.back() + step);
  }
  return angles;
}

// The beam resampled to `count` control points: gantry angle, jaw and leaf positions and meterset
// weight interpolated linearly between the plan's own control points (a denser arc of the same shape).
plan::Beam resampled_arc(const plan::Beam& beam, int count) {
  const std::vector<double> gantry = unwrapped_gantry_deg(beam);
  const std::size_t n = beam.control_points.size();
  plan::Beam out = beam;
  out.control_points.clear();
  for (int k = 0; k < count; ++k) {
    const double u = static_cast<double>(k) / (count - 1) * static_cast<double>(n - 1);
    const std::size_t i = std::min(static_cast<std::size_t>(u), n - 2);
    const double t = u - static_cast<double>(i);
    const plan::ControlPoint& a = beam.control_points[i];
    const plan::ControlPoint& b = beam.control_points[i + 1];
    plan::ControlPoint c = k == count - 1 ? b : a;
    c.index = k;
    c.gantry_rotation = beam.control_points.front().gantry_rotation;
    c.gantry_deg = std::fmod(gantry[i] + t * (gantry[i + 1] - gantry[i]) + 720.0, 360.0);
    c.cumulative_meterset_weight =
        a.cumulative_meterset_weight.value_or(0.0) +
        t * (b.cumulative_meterset_weight.value_or(0.0) - a.cumulative_meterset_weight.value_or(0.0));
    c.devices = a.devices;
    for (plan::DevicePositions& d : c.devices) {
      const plan::DevicePositions* other = b.device(d.type);
      if (other == nullptr || other->positions_mm.size() != d.positions_mm.size()) continue;
      for (std::size_t j = 0; j < d.positions_mm.size(); ++j)
        d.positions_mm[j] += t * (other->positions_mm[j] - d.positions_mm[j]);
    }
    out.control_points.push_back(std::move(c));
  }
  return out;
}

// The demo's first arc with 180 control points: 179 parts, each shaped by the leaves (sector
// integration in every part).
void engine_arc_180_control_points(benchmark::State& state) {
  BeamCase c;
  load_case(c, "fern_two_arc.dcm", 1);
  for (plan::Beam& beam : c.plan.beams) {
    if (beam.number == 1) beam = resampled_arc(beam, 180);
  }
  c.beam = c.plan.beam(1);
  const beamdata::Library& library = demo_library();
  const engine::EngineOptions options;
  const engine::BeamDose once =
      engine::compute_beam_dose(c.plan, *c.beam, *c.referenced, c.point, library, options);
  if (once.problem) {
    state.SkipWithError(check::finding_for(*once.problem).sentence.c_str());
    return;
  }
  for (auto _ : state) {
    engine::BeamDose dose =
        engine::compute_beam_dose(c.plan, *c.beam, *c.referenced, c.point, library, options);
    benchmark::DoNotOptimize(dose);
  }
  state.counters["control_points"] = static_cast<double>(c.beam->control_points.size());
  state.counters["segments"] = static_cast<double>(once.segments.size());
  state.counters["sectors"] = sectors_of(once);
}
BENCHMARK(engine_arc_180_control_points)->Unit(benchmark::kMillisecond);

// Static beams (two control points, one segment).
BENCHMARK_CAPTURE(engine_beam, static_open_box_ap, std::string{"fern_box_4field.dcm"}, 1)
    ->Unit(benchmark::kMicrosecond);
BENCHMARK_CAPTURE(engine_beam, static_wedged, std::string{"fern_wedged_pair.dcm"}, 1)
    ->Unit(benchmark::kMicrosecond);
// The static MLC field: sector integration with 36 sectors of 10° (target ≤ 20 µs).
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
