// Stage 9, consistency: facts on how far the model can be trusted at this point. The plan's own
// distances against each other, the formalism not used (static beams), and an estimated standard
// uncertainty of the calculation. It never stops the calculation; the check decides.

#include "stages.hpp"

#include <countersign/util/units.hpp>

#include <algorithm>
#include <cmath>

namespace countersign::engine::stages {

namespace {

// Largest error of linear interpolation at `query` between its bracketing nodes: h^2 |f''| / 8,
// with f'' from the second difference over three neighbouring nodes (numerical analysis,
// common practice, no source). 0 with fewer than three nodes.
double linear_interpolation_error(const std::vector<double>& axis, const std::vector<double>& values,
                                  double query) {
  const std::size_t n = axis.size();
  if (n < 3 || values.size() != n) return 0.0;
  const auto upper = std::upper_bound(axis.begin(), axis.end(), query);
  const std::size_t lower = std::clamp<std::size_t>(
      upper == axis.begin() ? 0 : static_cast<std::size_t>(upper - axis.begin()) - 1, 0, n - 2);
  const double h = axis[lower + 1] - axis[lower];
  const std::size_t j = std::clamp<std::size_t>(lower, 1, n - 2);
  const double slope_right = (values[j + 1] - values[j]) / (axis[j + 1] - axis[j]);
  const double slope_left = (values[j] - values[j - 1]) / (axis[j] - axis[j - 1]);
  const double second = 2.0 * (slope_right - slope_left) / (axis[j + 1] - axis[j - 1]);
  return h * h * std::abs(second) / 8.0;
}

std::size_t nearest_index(const std::vector<double>& axis, double query) {
  std::size_t best = 0;
  for (std::size_t i = 1; i < axis.size(); ++i) {
    if (std::abs(axis[i] - query) < std::abs(axis[best] - query)) best = i;
  }
  return best;
}

// Relative (fraction) interpolation error of a 2D lookup: along rows and along columns, in quadrature.
double table_error(const beamdata::Table2D& table, double row, double column, double value) {
  if (table.rows().empty() || table.columns().empty() || !(std::abs(value) > 0.0)) return 0.0;
  const std::size_t c = nearest_index(table.columns(), column);
  const std::size_t r = nearest_index(table.rows(), row);
  std::vector<double> along_rows;
  std::vector<double> along_columns;
  for (std::size_t i = 0; i < table.rows().size(); ++i) along_rows.push_back(table.cell(i, c));
  for (std::size_t i = 0; i < table.columns().size(); ++i) along_columns.push_back(table.cell(r, i));
  const double e_rows = linear_interpolation_error(table.rows(), along_rows, row);
  const double e_columns = linear_interpolation_error(table.columns(), along_columns, column);
  return std::hypot(e_rows, e_columns) / std::abs(value);
}

double table_error(const beamdata::Table1D& table, double x, double value) {
  if (!(std::abs(value) > 0.0)) return 0.0;
  return linear_interpolation_error(table.axis(), table.values(), x) / std::abs(value);
}

// Standard uncertainty (percent) of the table interpolations of one part: the largest error taken
// as the half-width of a uniform distribution (/sqrt(3)), the tables combined in quadrature.
double interpolation_percent(const beamdata::BeamData& data, const DoseInputs& in, const PointDose& dose) {
  const FieldSizes& s = dose.fields;
  const DoseFactors& f = dose.factors;
  double sum = 0.0;
  const auto add = [&](double fraction) { sum += fraction * fraction; };
  add(table_error(data.sc, s.collimator_cm, f.sc.value));
  if (dose.method == Method::tmr) {
    add(table_error(data.tmr, in.depth_cm, s.point_cm, f.tmr.value));
    add(table_error(data.sp, s.point_cm, f.sp.value));
  } else {
    add(table_error(data.pdd, in.depth_cm, s.surface_cm, f.pdd.value * 100.0));
    add(table_error(data.sp, s.normalisation_depth_cm, f.sp.value));
  }
  if (data.oar && in.off_axis_cm > 0.1) add(table_error(*data.oar, in.depth_cm, in.off_axis_cm, f.oar.value));
  return 100.0 * std::sqrt(sum) / std::sqrt(3.0);
}

GeometryConsistency geometry_consistency(const plan::Beam& beam, const plan::ReferencedBeam& referenced,
                                         const DosePoint& point, const BeamDose& r) {
  GeometryConsistency g;
  g.ray_length_mm = r.point.ray_length_mm;
  g.spd_mm = r.point.spd_mm;
  g.plan_ssd_mm = r.ssd_mm;
  const PlanDistances distances = plan_distances_for(beam, referenced, point);
  if (distances.distances != nullptr) {
    g.plan_depth_mm = distances.distances->depth_mm;
    g.plan_dose_point_ssd_mm = distances.distances->ssd_mm;
  }
  if (g.plan_depth_mm && g.plan_dose_point_ssd_mm)
    g.ray_mismatch_mm = *g.plan_depth_mm + *g.plan_dose_point_ssd_mm - g.ray_length_mm;
  if (g.plan_depth_mm && g.plan_ssd_mm && g.ray_length_mm > 0.0) {
    // The depth along the ray projected on the axis, for a flat surface perpendicular to it.
    const double axial_depth_mm = *g.plan_depth_mm * g.spd_mm / g.ray_length_mm;
    g.ssd_mismatch_mm = *g.plan_ssd_mm - (g.spd_mm - axial_depth_mm);
  }
  return g;
}

FormalismComparison compare_formalisms(const BeamDose& r) {
  FormalismComparison c;
  if (r.features.modulated || r.beam_data == nullptr || !(r.dose.dose_per_mu_cgy > 0.0)) return c;
  // Both forms on the same inputs in homogeneous water at the geometric depth, with the equivalent
  // square: the question is whether the tables agree at this point, not what the heterogeneity or
  // the sector integration add (the PDD form's inverse square belongs to the geometric depth).
  DoseInputs used = r.inputs;
  if (r.depth.geometric_depth_mm) used.depth_cm += util::mm_to_cm(*r.depth.geometric_depth_mm - r.depth.depth_mm);
  if (!(used.depth_cm > 0.0)) return c;
  const PointDose used_dose = compute_point_dose(*r.beam_data, used);
  if (!(used_dose.dose_per_mu_cgy > 0.0)) return c;
  DoseInputs other = used;
  other.method = r.method == Method::tmr ? Method::pdd : Method::tmr;
  const PointDose dose = compute_point_dose(*r.beam_data, other);
  c.computed = true;
  c.other = other.method;
  c.used_dose_per_mu_cgy = used_dose.dose_per_mu_cgy;
  c.other_dose_per_mu_cgy = dose.dose_per_mu_cgy;
  c.difference_percent = 100.0 * (dose.dose_per_mu_cgy - used_dose.dose_per_mu_cgy) / used_dose.dose_per_mu_cgy;
  c.other_extrapolated = dose.first_extrapolated() != nullptr;
  return c;
}

// The whole change of the first part's dose when the plan's equivalent depth replaces the depth
// used (or the other way round): what ignoring (or trusting) the heterogeneity may cost.
double heterogeneity_percent(const BeamDose& r) {
  const auto& equivalent = r.depth.plan_equivalent_depth_mm;
  const auto& geometric = r.depth.plan_depth_mm;
  if (!equivalent || !geometric || r.segments.empty() || r.beam_data == nullptr) return 0.0;
  const Segment& first = r.segments.front();
  if (!(first.dose.dose_per_mu_cgy > 0.0)) return 0.0;
  const double other_depth_mm = std::abs(r.depth.depth_mm - *equivalent) < 1e-6 ? *geometric : *equivalent;
  DoseInputs moved = first.inputs;
  moved.depth_cm = first.inputs.depth_cm + util::mm_to_cm(other_depth_mm - r.depth.depth_mm);
  if (!(moved.depth_cm > 0.0)) return 0.0;
  const PointDose dose = compute_point_dose(*r.beam_data, moved);
  return 100.0 * std::abs(dose.dose_per_mu_cgy / first.dose.dose_per_mu_cgy - 1.0);
}

UncertaintyEstimate estimate_uncertainty(const BeamDose& r) {
  UncertaintyEstimate u;
  double weighted = 0.0;
  double total = 0.0;
  for (const Segment& s : r.segments) {
    weighted += s.dose.dose_cgy * interpolation_percent(*r.beam_data, s.inputs, s.dose);
    total += s.dose.dose_cgy;
  }
  u.interpolation_percent = total > 0.0 ? weighted / total : 0.0;
  if (r.model.formalism.computed) u.formalism_percent = std::abs(r.model.formalism.difference_percent) / 2.0;
  u.sector_percent = std::abs(r.sector_vs_equivalent_square_percent) / 2.0;
  u.heterogeneity_percent = heterogeneity_percent(r);
  u.combined_percent = std::sqrt(
      u.interpolation_percent * u.interpolation_percent + u.formalism_percent * u.formalism_percent +
      u.sector_percent * u.sector_percent + u.heterogeneity_percent * u.heterogeneity_percent);
  return u;
}

}  // namespace

void assess_model(const plan::Beam& beam, const plan::ReferencedBeam& referenced, const DosePoint& point,
                  BeamDose& r) {
  r.model.geometry = geometry_consistency(beam, referenced, point, r);
  if (!r.dose_computed) return;
  r.model.formalism = compare_formalisms(r);
  r.model.uncertainty = estimate_uncertainty(r);
}

void assess_electron_model(const plan::Beam& beam, const plan::ReferencedBeam& referenced,
                           const DosePoint& point, BeamDose& r) {
  r.model.geometry = geometry_consistency(beam, referenced, point, r);
}

}  // namespace countersign::engine::stages
