// compute_beam_dose: the stages of stages.hpp run in order. Each stage fills its part of the result
// (so a report can show what was found before a problem) or returns what stopped the calculation.

#include <countersign/engine/beam_dose.hpp>

#include "stages.hpp"

#include <countersign/util/units.hpp>

#include <algorithm>
#include <cmath>

namespace countersign::engine {

namespace {

using namespace stages;

// The approximations known once the dose is summed (modulation, arcs, shapes, distances).
void add_beam_approximations(const ResolvedBeam& resolved, const MetersetSplit& split, BeamDose& r) {
  const beamdata::BeamData& data = *resolved.data;
  if (r.features.modulated) {
    Approximation a{ApproximationKind::modulated_sum};
    a.part_count = r.segments.size();
    a.mlc_transmission = data.mlc_transmission.value_or(0.0);
    r.approximations.push_back(a);
  }
  if (split.moving) {
    Approximation a{ApproximationKind::arc_steps};
    a.max_step_deg = max_arc_step_deg;
    r.approximations.push_back(a);
  }
  const auto sectored = std::find_if(r.segments.begin(), r.segments.end(), [](const Segment& s) {
    return s.scatter_method == ScatterMethod::sector_integration;
  });
  if (sectored != r.segments.end()) {
    Approximation a{ApproximationKind::sector_integration};
    a.part_count = static_cast<std::size_t>(sectored->sectors->sectors);
    a.max_step_deg = 360.0 / sectored->sectors->sectors;
    a.beyond_largest_field = std::any_of(r.segments.begin(), r.segments.end(), [](const Segment& s) {
      return s.sectors && s.sectors->beyond_largest_field;
    });
    r.approximations.push_back(a);
  }
  const auto truncated = std::count_if(r.segments.begin(), r.segments.end(), [](const Segment& s) {
    return s.sectors && s.sectors->rays_ended_at_body > 0;
  });
  if (truncated > 0) {
    Approximation a{ApproximationKind::scatter_at_body_outline};
    a.part_count = static_cast<std::size_t>(truncated);
    r.approximations.push_back(a);
  }
  if (r.aperture.jaws().x_source == geometry::JawSource::mlc_envelope ||
      r.aperture.jaws().y_source == geometry::JawSource::mlc_envelope) {
    r.approximations.push_back({ApproximationKind::mlc_envelope_as_collimator});
  }
  if (r.features.blocks) r.approximations.push_back({ApproximationKind::blocks_as_outlines});
  const double ssd0_cm = util::mm_to_cm(surface_distance_mm(r));
  if (r.method == Method::pdd && std::abs(ssd0_cm - data.pdd_ssd_cm) > 0.05) {
    Approximation a{ApproximationKind::mayneord_f_factor};
    a.ssd_cm = ssd0_cm;
    a.table_ssd_cm = data.pdd_ssd_cm;
    r.approximations.push_back(a);
  }
}

// Control point 0's opening, where the point lies in it, and the shape facts the policy sorts by.
StageResult<void> open_field(const plan::Beam& beam, const ResolvedBeam& resolved, BeamDose& r) {
  const plan::ControlPoint& cp0 = beam.control_points.front();
  TRY_ASSIGN(r.aperture, aperture_at(beam, cp0, 0, *resolved.data));
  r.point_in_field =
      in_open_field(r.aperture, resolved.blocks, r.point.iso_plane_x_mm, r.point.iso_plane_y_mm);
  r.edge_distance_mm = open_field_edge_distance_mm(r.aperture, resolved.blocks, r.point.iso_plane_x_mm,
                                                   r.point.iso_plane_y_mm);
  r.features.jaw_centre_offset_mm = r.aperture.jaws().centre_offset_mm();
  const double jaw_area_mm2 = r.aperture.jaws().width_mm() * r.aperture.jaws().length_mm();
  r.features.open_to_jaw_area_ratio = jaw_area_mm2 > 0.0 ? r.aperture.area_mm2() / jaw_area_mm2 : 0.0;
  r.outline = beam_outline(beam, r.aperture, resolved.blocks, false);
  r.ssd_mm = cp0.ssd_mm;
  return {};
}

// Electron beams: stages 2 and 3 as for photons, the applicator's opening, then the electron formula
// (one static part) and the plan's geometry against itself.
StageResult<void> run_electron_stages(const plan::Beam& beam, const plan::ReferencedBeam& referenced,
                                      const DosePoint& point, const ResolvedBeam& resolved,
                                      const EngineOptions& options, BeamDose& r) {
  TRY(locate_point(beam, resolved, point, r));              // 2. geometry
  electron_opening(beam, resolved, r);                      // 4. the applicator's opening
  TRY(choose_depth(beam, referenced, point, options, r));   // 3. depth (plan or CT)
  TRY(compute_electron_beam(resolved, point, options, r));  // 7. the electron formula
  assess_electron_model(beam, referenced, point, r);        // 9. consistency (geometry)
  return {};
}

StageResult<void> run_stages(const plan::Plan& plan, const plan::Beam& beam,
                             const plan::ReferencedBeam& referenced, const DosePoint& point,
                             const beamdata::Library& library, const EngineOptions& options, BeamDose& r) {
  ResolvedBeam resolved;
  TRY_ASSIGN(resolved, resolve_beam(plan, beam, referenced, library, r));  // 1. resolve
  if (resolved.electron != nullptr) return run_electron_stages(beam, referenced, point, resolved, options, r);
  TRY(locate_point(beam, resolved, point, r));                             // 2. geometry
  TRY(open_field(beam, resolved, r));                                      //    (control point 0's opening)
  TRY(choose_depth(beam, referenced, point, options, r));                  // 3. depth (plan or CT)
  choose_method(resolved, options.method, r);                              // 7. formula: the formalism
  if (!r.ssd_mm && r.method == Method::pdd)
    r.approximations.push_back({ApproximationKind::ssd_from_spd_minus_depth});

  MetersetSplit split;
  TRY_ASSIGN(split, split_meterset(beam, resolved.meterset_mu));  // 8. segments: the parts
  r.features.modulated = split.moving || split.parts.size() > 1;
  if (r.features.modulated) r.outline = beam_outline(beam, r.aperture, resolved.blocks, true);
  TRY(compute_segments(beam, point, resolved, split, options, r));  // 4-7 per part, summed

  r.inputs = r.segments.front().inputs;
  r.dose = r.segments.front().dose;
  r.dose_computed = true;
  add_beam_approximations(resolved, split, r);
  assess_model(beam, referenced, point, r);  // 9. consistency
  return {};
}

}  // namespace

std::string_view to_code(ScatterMethod method) {
  return method == ScatterMethod::sector_integration ? "sector_integration" : "equivalent_square";
}

std::string_view to_code(WedgeProfile profile) {
  switch (profile) {
    case WedgeProfile::not_wedged:
      return "not_wedged";
    case WedgeProfile::orientation_table:
      return "orientation_table";
    case WedgeProfile::no_table:
      return "no_table";
    case WedgeProfile::no_orientation:
      return "no_orientation";
  }
  return "unknown";
}

const Factor* BeamDose::first_extrapolated() const {
  for (const Segment& s : segments) {
    if (const Factor* f = s.dose.first_extrapolated()) return f;
  }
  return nullptr;
}

BeamDose compute_beam_dose(const plan::Plan& plan, const plan::Beam& beam,
                           const plan::ReferencedBeam& referenced, const DosePoint& point,
                           const beamdata::Library& library, const EngineOptions& options) {
  BeamDose r;
  r.dose_point = point;
  if (auto done = run_stages(plan, beam, referenced, point, library, options, r); !done) {
    r.problem = std::move(done).error();
  }
  return r;
}

}  // namespace countersign::engine
