// The electron point-dose formula of electron_dose.hpp (AAPM TG-71, electron section).

#include <countersign/engine/electron_dose.hpp>

#include <countersign/geometry/polygon.hpp>
#include <countersign/util/assert.hpp>
#include <countersign/util/units.hpp>

#include <algorithm>
#include <cmath>
#include <utility>

namespace countersign::engine {

namespace {

double squared(double x) { return x * x; }

// Two lookups of one quantity under the square-root rule: the value sqrt(a · b), the brackets of both
// (the second's field axis named as the second side), so that a report shows both and an
// extrapolation in either is seen.
beamdata::Lookup square_root_of(beamdata::Lookup a, const beamdata::Lookup& b) {
  a.value = std::sqrt(a.value * b.value);
  a.quantity += " (square-root rule)";
  if (!b.axes.empty()) {
    beamdata::AxisBracket second = b.axes.back();
    second.axis += " (second side)";
    a.axes.push_back(std::move(second));
  }
  return a;
}

Factor from_lookup(beamdata::Lookup lookup, double scale) {
  Factor f;
  f.value = lookup.value * scale;
  f.basis = FactorBasis::table;
  f.lookup = std::move(lookup);
  return f;
}

Factor cutout_factor(const beamdata::ApplicatorData& applicator, const CutoutSize& cutout) {
  switch (cutout.method) {
    case CutoutMethod::open_applicator:
      return Factor{1.0, FactorBasis::not_applicable, std::nullopt};
    case CutoutMethod::equivalent_square:
      return from_lookup(util::checked(applicator.cutout).at(cutout.equivalent_square_cm), 1.0);
    case CutoutMethod::square_root_rule: {
      const beamdata::Table1D& table = util::checked(applicator.cutout);
      return from_lookup(square_root_of(table.at(cutout.side_x_cm), table.at(cutout.side_y_cm)), 1.0);
    }
  }
  return {};
}

}  // namespace

std::string_view to_code(CutoutMethod method) {
  switch (method) {
    case CutoutMethod::open_applicator:
      return "open_applicator";
    case CutoutMethod::equivalent_square:
      return "equivalent_square";
    case CutoutMethod::square_root_rule:
      return "square_root_rule";
  }
  return "unknown";
}

double CutoutSize::smallest_lookup_cm() const {
  return method == CutoutMethod::square_root_rule ? std::min(side_x_cm, side_y_cm) : equivalent_square_cm;
}

std::optional<CutoutSize> cutout_size(const std::vector<std::array<double, 2>>& outline_mm,
                                      double scale_to_table_plane) {
  const double area_cm2 =
      util::mm2_to_cm2(geometry::polygon_area_mm2(outline_mm)) * squared(scale_to_table_plane);
  const double perimeter_cm =
      util::mm_to_cm(geometry::polygon_perimeter_mm(outline_mm)) * scale_to_table_plane;
  if (!(area_cm2 > 0.0) || !(perimeter_cm > 0.0)) return std::nullopt;
  CutoutSize size;
  size.area_cm2 = area_cm2;
  size.perimeter_cm = perimeter_cm;
  size.equivalent_square_cm = 4.0 * area_cm2 / perimeter_cm;
  size.method = CutoutMethod::equivalent_square;
  // The rectangle of the cutout's area whose sides are in the ratio of the cutout's extents along its
  // principal axes (the square root of the ratio of its principal second moments).
  const geometry::PrincipalMoments moments = geometry::polygon_principal_moments(outline_mm);
  if (moments.smaller_mm4 > 0.0) {
    const double aspect = std::sqrt(moments.larger_mm4 / moments.smaller_mm4);
    if (aspect > elongated_cutout_ratio) {
      size.method = CutoutMethod::square_root_rule;
      size.side_x_cm = std::sqrt(area_cm2 / aspect);
      size.side_y_cm = std::sqrt(area_cm2 * aspect);
    }
  }
  return size;
}

CutoutSize open_applicator_size(const beamdata::ApplicatorData& applicator) {
  CutoutSize size;
  size.method = CutoutMethod::open_applicator;
  size.equivalent_square_cm = applicator.field_cm;
  size.area_cm2 = squared(applicator.field_cm);
  size.perimeter_cm = 4.0 * applicator.field_cm;
  return size;
}

double effective_ssd_inverse_square(double effective_ssd_cm, double air_gap_cm, double dmax_cm) {
  return squared((effective_ssd_cm + dmax_cm) / (effective_ssd_cm + air_gap_cm + dmax_cm));
}

beamdata::Lookup electron_pdd(const beamdata::ApplicatorData& applicator, double depth_cm,
                              const CutoutSize& cutout) {
  if (cutout.method == CutoutMethod::square_root_rule) {
    return square_root_of(applicator.pdd.at(depth_cm, cutout.side_x_cm),
                          applicator.pdd.at(depth_cm, cutout.side_y_cm));
  }
  return applicator.pdd.at(depth_cm, cutout.equivalent_square_cm);
}

std::optional<double> depth_of_80_percent_cm(const beamdata::ElectronBeamData& beam,
                                             const beamdata::ApplicatorData& applicator,
                                             const CutoutSize& cutout) {
  const std::vector<double>& depths = applicator.pdd.rows();
  for (std::size_t i = 1; i < depths.size(); ++i) {
    if (depths[i] <= beam.dmax_cm) continue;
    const double shallow_cm = std::max(depths[i - 1], beam.dmax_cm);
    const double above = electron_pdd(applicator, shallow_cm, cutout).value;
    const double below = electron_pdd(applicator, depths[i], cutout).value;
    if (above >= 80.0 && below < 80.0) {
      return shallow_cm + (depths[i] - shallow_cm) * (above - 80.0) / (above - below);
    }
  }
  return std::nullopt;
}

PointDose compute_electron_dose(const beamdata::ElectronBeamData& beam,
                                const beamdata::ApplicatorData& applicator, const ElectronInputs& in) {
  PointDose result;
  result.method = Method::electron;
  result.fields.surface_cm = in.cutout.equivalent_square_cm;
  DoseFactors& f = result.factors;
  const beamdata::ElectronCalibration& cal = beam.calibration;
  f.output_cgy_per_mu = cal.output_cgy_per_mu;
  // The output is stated at the calibration depth of the reference applicator's open field.
  const beamdata::ApplicatorData* reference = beam.applicator(cal.applicator);
  const beamdata::ApplicatorData& ref = reference != nullptr ? *reference : applicator;
  f.calibration_depth = from_lookup(ref.pdd.at(cal.depth_cm, ref.field_cm), 0.01);
  f.applicator = Factor{applicator.factor, FactorBasis::manifest_constant, std::nullopt};
  f.cutout = cutout_factor(applicator, in.cutout);
  f.pdd = from_lookup(electron_pdd(applicator, in.depth_cm, in.cutout), 0.01);
  f.inverse_square = Factor{
      effective_ssd_inverse_square(applicator.effective_ssd_cm, in.ssd_cm - beam.pdd_ssd_cm, beam.dmax_cm),
      FactorBasis::formula, std::nullopt};
  f.oar = Factor{1.0, FactorBasis::on_axis_unity, std::nullopt};
  result.dose_per_mu_cgy = f.output_cgy_per_mu / f.calibration_depth.value * f.applicator.value *
                           f.cutout.value * f.pdd.value * f.inverse_square.value * f.oar.value;
  result.dose_cgy = in.meterset_mu * result.dose_per_mu_cgy;
  return result;
}

}  // namespace countersign::engine
