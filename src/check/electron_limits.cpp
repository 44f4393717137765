// The edges of the electron model (model_limits.hpp): where the tables and the TG-71 electron
// formula no longer describe the dose, the beam is not checked.

#include "model_limits.hpp"

#include <countersign/util/assert.hpp>

#include <fmt/format.h>

#include <cmath>

namespace countersign::check {

namespace {

std::optional<Finding> electron_distance_finding(const engine::ElectronFacts& e,
                                                 const beamdata::ElectronBeamData& data,
                                                 const TolerancePolicy& policy) {
  const double ssd_cm = e.entrance_ssd_cm;
  if (data.ssd_range_cm) {
    if (data.ssd_range_cm->contains(ssd_cm)) return std::nullopt;
    return Finding{Reason::ssd_out_of_range,
                   fmt::format("SSD {:.1f} cm (the surface the beam enters) is outside the library's "
                               "ssd_range_cm [{:g}, {:g}] for electron beam {}",
                               ssd_cm, data.ssd_range_cm->min_cm, data.ssd_range_cm->max_cm, data.id)};
  }
  const double offset_cm = std::abs(ssd_cm - data.pdd_ssd_cm);
  if (offset_cm <= policy.max_ssd_offset_without_range_cm) return std::nullopt;
  return Finding{
      Reason::extended_distance,
      fmt::format("SSD {:.1f} cm is {:.1f} cm from the tables' {:g} cm; the library sets no "
                  "ssd_range_cm for electron beam {}, and the policy allows {:.1f} cm without one",
                  ssd_cm, offset_cm, data.pdd_ssd_cm, data.id, policy.max_ssd_offset_without_range_cm)};
}

std::optional<Finding> cutout_finding(const engine::ElectronFacts& e) {
  const double size_cm = e.cutout.smallest_lookup_cm();
  if (size_cm >= e.smallest_table_cutout_cm) return std::nullopt;
  const bool rule = e.cutout.method == engine::CutoutMethod::square_root_rule;
  return Finding{Reason::cutout_below_table,
                 fmt::format("the cutout's {} {:.2f} cm is smaller than the smallest field {:g} cm of the "
                             "tables of applicator {}: lateral electron equilibrium may be lost, the output "
                             "and depth dose are not described",
                             rule ? "shorter side (square-root rule)" : "equivalent square", size_cm,
                             e.smallest_table_cutout_cm, e.applicator_id)};
}

std::optional<Finding> r80_finding(const engine::ElectronFacts& e) {
  if (!e.r80_cm || e.depth_cm <= *e.r80_cm) return std::nullopt;
  return Finding{
      Reason::point_beyond_eighty_percent_depth,
      fmt::format("the point is {:.2f} cm deep{}, beyond the depth of 80 % dose R80 {:.2f} cm: the dose "
                  "falls steeply there and depends on millimetres",
                  e.depth_cm, e.bolus_thickness_cm ? " (bolus included)" : "", *e.r80_cm)};
}

std::optional<Finding> obliquity_finding(const engine::ElectronFacts& e, const TolerancePolicy& policy) {
  if (!e.obliquity_deg || *e.obliquity_deg <= policy.electron_max_obliquity_deg) return std::nullopt;
  return Finding{Reason::oblique_incidence,
                 fmt::format("the beam meets the body surface {:.1f} degrees from its normal (policy limit "
                             "{:.1f} degrees): the tables are for normal incidence",
                             *e.obliquity_deg, policy.electron_max_obliquity_deg)};
}

}  // namespace

std::optional<Finding> electron_edge_finding(const engine::BeamDose& c, const TolerancePolicy& policy) {
  const engine::ElectronFacts& e = util::checked(c.electron);
  if (auto f = electron_distance_finding(e, util::checked(c.electron_data), policy)) return f;
  if (auto f = cutout_finding(e)) return f;
  if (auto f = r80_finding(e)) return f;
  return obliquity_finding(e, policy);
}

}  // namespace countersign::check
