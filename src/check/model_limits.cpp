#include "model_limits.hpp"

#include <countersign/util/units.hpp>

#include <fmt/format.h>

#include <algorithm>
#include <cmath>

namespace countersign::check {

namespace {

std::optional<Finding> buildup_finding(const engine::BeamDose& c, const TolerancePolicy& policy) {
  double shallowest_mm = c.depth.depth_mm;
  for (const engine::Segment& s : c.segments) {
    if (s.meterset_mu > 0.0) shallowest_mm = std::min(shallowest_mm, s.depth_mm);
  }
  const double dmax_mm = util::cm_to_mm(c.beam_data->dmax_cm);
  if (shallowest_mm >= dmax_mm + policy.buildup_margin_mm) return std::nullopt;
  return Finding{
      Reason::point_in_buildup,
      fmt::format("the dose point is {:.1f} mm deep, in the build-up region (dmax {:.1f} mm + policy "
                  "margin {:.1f} mm): the tables do not describe the dose there",
                  shallowest_mm, dmax_mm, policy.buildup_margin_mm)};
}

// The smallest field any of the beam's field-size tables covers.
double smallest_table_field_cm(const beamdata::BeamData& data) {
  double smallest = 0.0;
  const auto raise = [&](const std::vector<double>& axis) {
    if (!axis.empty()) smallest = std::max(smallest, axis.front());
  };
  raise(data.tmr.columns());
  raise(data.pdd.columns());
  raise(data.sp.axis());
  raise(data.sc.axis());
  return smallest;
}

// Static beams only: a modulated beam's small segments are judged through its sum and tolerance.
std::optional<Finding> small_field_finding(const engine::BeamDose& c, const TolerancePolicy& policy) {
  if (c.features.modulated) return std::nullopt;
  const double field_cm = c.inputs.field_at_isocentre_cm;
  const double table_cm = smallest_table_field_cm(*c.beam_data);
  const double limit_cm = std::max(policy.min_equivalent_square_cm, table_cm);
  if (field_cm >= limit_cm) return std::nullopt;
  return Finding{Reason::small_field,
                 fmt::format("equivalent square {:.2f} cm is below {:.2f} cm (policy minimum {:.1f} cm; the "
                             "tables' smallest field {:.1f} cm): small-field output is not modelled",
                             field_cm, limit_cm, policy.min_equivalent_square_cm, table_cm)};
}

std::optional<Finding> distance_finding(const engine::BeamDose& c, const TolerancePolicy& policy) {
  const beamdata::BeamData& data = *c.beam_data;
  std::vector<double> ssds_cm{util::mm_to_cm(c.ssd_mm.value_or(c.point.spd_mm - c.depth.depth_mm))};
  for (const engine::Segment& s : c.segments) {
    if (s.meterset_mu > 0.0 && s.ssd_mm > 0.0) ssds_cm.push_back(util::mm_to_cm(s.ssd_mm));
  }
  const auto [low, high] = std::minmax_element(ssds_cm.begin(), ssds_cm.end());
  if (data.ssd_range_cm) {
    const beamdata::SsdRange& range = *data.ssd_range_cm;
    if (range.contains(*low) && range.contains(*high)) return std::nullopt;
    const double outside = range.contains(*low) ? *high : *low;
    return Finding{Reason::ssd_out_of_range,
                   fmt::format("SSD {:.1f} cm is outside the library's ssd_range_cm [{:g}, {:g}] for beam {}",
                               outside, range.min_cm, range.max_cm, data.id)};
  }
  const double limit = policy.max_ssd_offset_without_range_cm;
  const double worst = std::abs(*low - data.pdd_ssd_cm) > std::abs(*high - data.pdd_ssd_cm) ? *low : *high;
  if (std::abs(worst - data.pdd_ssd_cm) <= limit) return std::nullopt;
  return Finding{Reason::extended_distance,
                 fmt::format("SSD {:.1f} cm is {:.1f} cm from the PDD table's {:g} cm; the library sets no "
                             "ssd_range_cm for beam {}, and the policy allows {:.1f} cm without one",
                             worst, std::abs(worst - data.pdd_ssd_cm), data.pdd_ssd_cm, data.id, limit)};
}

std::optional<Finding> formalism_finding(const engine::BeamDose& c, const TolerancePolicy& policy) {
  const engine::FormalismComparison& f = c.model.formalism;
  if (!f.computed || f.other_extrapolated) return std::nullopt;
  if (std::abs(f.difference_percent) <= policy.formalism_max_difference_percent) return std::nullopt;
  return Finding{
      Reason::beam_data_inconsistent_here,
      fmt::format("the {} form gives {:+.2f} % against the {} form used (policy limit {:.1f} %): the "
                  "library's PDD and TMR tables disagree at this point",
                  engine::to_code(f.other), f.difference_percent, engine::to_code(c.method),
                  policy.formalism_max_difference_percent)};
}

}  // namespace

std::optional<Finding> geometry_finding(const engine::BeamDose& c, const TolerancePolicy& policy) {
  const engine::GeometryConsistency& g = c.model.geometry;
  const double limit_mm = policy.geometry_consistency_max_mm;
  if (g.ray_mismatch_mm && std::abs(*g.ray_mismatch_mm) > limit_mm) {
    return Finding{
        Reason::geometry_inconsistent,
        fmt::format(
            "Beam Dose Point Depth (300A,0088) {:.1f} mm + Beam Dose Point SSD (300A,008A) {:.1f} mm "
            "differ from the source-to-point distance {:.1f} mm by {:+.1f} mm (policy limit {:.1f} mm): "
            "check the dose point, the depth and the SSD",
            *g.plan_depth_mm, *g.plan_dose_point_ssd_mm, g.ray_length_mm, *g.ray_mismatch_mm, limit_mm)};
  }
  if (g.ssd_mismatch_mm && std::abs(*g.ssd_mismatch_mm) > limit_mm) {
    return Finding{
        Reason::geometry_inconsistent,
        fmt::format(
            "Source to Surface Distance (300A,0130) {:.1f} mm differs from SPD - depth {:.1f} mm (flat "
            "surface, the plan's depth {:.1f} mm along the ray) by {:+.1f} mm (policy limit {:.1f} mm): "
            "check the SSD, the depth and the dose point",
            *g.plan_ssd_mm, *g.plan_ssd_mm - *g.ssd_mismatch_mm, *g.plan_depth_mm, *g.ssd_mismatch_mm,
            limit_mm)};
  }
  return std::nullopt;
}

std::optional<Finding> model_edge_finding(const engine::BeamDose& c, const TolerancePolicy& policy) {
  if (c.electron) return electron_edge_finding(c, policy);
  if (c.beam_data == nullptr) return std::nullopt;
  if (auto f = buildup_finding(c, policy)) return f;
  if (auto f = small_field_finding(c, policy)) return f;
  if (auto f = distance_finding(c, policy)) return f;
  return formalism_finding(c, policy);
}

}  // namespace countersign::check
