#include <countersign/engine/point_dose.hpp>

#include <countersign/beamdata/conversions.hpp>

#include <array>
#include <cmath>

namespace countersign::engine {

std::string_view to_code(Method method) {
  switch (method) {
    case Method::tmr:
      return "tmr";
    case Method::pdd:
      return "pdd";
    case Method::electron:
      return "electron";
  }
  return "unknown";
}

std::string_view to_code(FactorBasis basis) {
  switch (basis) {
    case FactorBasis::table:
      return "table";
    case FactorBasis::manifest_constant:
      return "manifest_constant";
    case FactorBasis::formula:
      return "formula";
    case FactorBasis::not_applicable:
      return "not_applicable";
    case FactorBasis::on_axis_unity:
      return "on_axis_unity";
  }
  return "unknown";
}

namespace {

Factor from_lookup(beamdata::Lookup lookup, double scale = 1.0) {
  Factor f;
  f.value = lookup.value * scale;
  f.basis = FactorBasis::table;
  f.lookup = std::move(lookup);
  return f;
}

Factor from_formula(double value) { return Factor{value, FactorBasis::formula, std::nullopt}; }

Factor wedge_factor(const beamdata::WedgeData* wedge, double depth_cm, double field_cm) {
  if (wedge == nullptr) return {};
  if (wedge->table) return from_lookup(wedge->table->at(depth_cm, field_cm));
  return Factor{wedge->factor.value_or(1.0), FactorBasis::manifest_constant, std::nullopt};
}

double squared(double x) { return x * x; }

}  // namespace

const Factor* PointDose::first_extrapolated() const {
  const std::array<const Factor*, 14> all{&factors.calibration_depth,
                                          &factors.applicator,
                                          &factors.cutout,
                                          &factors.calibration_sc,
                                          &factors.calibration_sp,
                                          &factors.sc,
                                          &factors.sp,
                                          &factors.tmr,
                                          &factors.pdd,
                                          &factors.oar,
                                          &factors.wedge,
                                          &factors.wedge_profile,
                                          &factors.tray,
                                          &factors.transmission};
  for (const Factor* f : all) {
    if (f->extrapolated()) return f;
  }
  return nullptr;
}

ReferenceConditions reference_conditions(const beamdata::BeamData& beam, double sad_cm) {
  const beamdata::Calibration& cal = beam.calibration;
  ReferenceConditions ref;
  ref.geometry = cal.geometry;
  ref.geometry_defaulted = cal.geometry_defaulted();
  ref.source_to_point_cm = cal.source_to_point_cm();
  if (cal.geometry == beamdata::CalibrationGeometry::ssd) {
    ref.field_at_surface_cm = cal.field_cm;
    ref.field_at_point_cm = cal.field_cm * ref.source_to_point_cm / cal.ssd_cm;
  } else {
    ref.field_at_point_cm = cal.field_cm;
    ref.field_at_surface_cm = cal.field_cm * cal.ssd_cm / ref.source_to_point_cm;
  }
  ref.collimator_field_cm = ref.field_at_point_cm * sad_cm / ref.source_to_point_cm;
  return ref;
}

PointDose compute_point_dose(const beamdata::BeamData& beam, const DoseInputs& in) {
  PointDose result;
  result.method = in.method;
  const beamdata::Calibration& cal = beam.calibration;
  const ReferenceConditions ref = reference_conditions(beam, in.sad_cm);
  result.reference = ref;
  DoseFactors& f = result.factors;
  FieldSizes& s = result.fields;

  s.collimator_cm = in.collimator_field_cm;
  s.isocentre_cm = in.field_at_isocentre_cm;
  s.surface_cm = in.field_at_isocentre_cm * in.ssd_cm / in.sad_cm;
  s.point_cm = in.field_at_isocentre_cm * in.spd_cm / in.sad_cm;
  s.normalisation_depth_cm = in.field_at_isocentre_cm * (in.ssd_cm + beam.dmax_cm) / in.sad_cm;

  f.output_cgy_per_mu = cal.output_cgy_per_mu;
  f.sc = from_lookup(beam.sc.at(s.collimator_cm));
  f.calibration_sc = from_lookup(beam.sc.at(ref.collimator_field_cm));
  f.wedge = wedge_factor(in.wedge, in.depth_cm, s.isocentre_cm);
  if (in.tray != nullptr) f.tray = Factor{in.tray->factor, FactorBasis::manifest_constant, std::nullopt};
  if (in.transmission != 1.0)
    f.transmission = Factor{in.transmission, FactorBasis::manifest_constant, std::nullopt};
  const bool wedge_profile = in.wedge_axes && in.wedge != nullptr && in.wedge->orientation_table;
  const double oar_distance_cm = wedge_profile ? std::abs(in.wedge_axes->across_cm) : in.off_axis_cm;
  if (beam.oar) {
    f.oar = from_lookup(beam.oar->at(in.depth_cm, oar_distance_cm));
  } else {
    f.oar = Factor{1.0, FactorBasis::on_axis_unity, std::nullopt};
  }
  if (wedge_profile)
    f.wedge_profile =
        from_lookup(in.wedge->orientation_table->at(in.depth_cm, in.wedge_axes->towards_thick_cm));

  double depth_term = 0.0;
  if (in.method == Method::tmr) {
    f.calibration_depth = from_lookup(beam.tmr.at(cal.depth_cm, ref.field_at_point_cm));
    f.calibration_sp = from_lookup(beam.sp.at(ref.field_at_point_cm));
    f.sp = from_lookup(beam.sp.at(s.point_cm));
    f.tmr = from_lookup(beam.tmr.at(in.depth_cm, s.point_cm));
    f.inverse_square = from_formula(squared(cal.source_to_point_cm() / in.spd_cm));
    depth_term = f.tmr.value;
  } else {
    const double cal_f = beamdata::mayneord_f_factor(cal.ssd_cm, beam.pdd_ssd_cm, beam.dmax_cm, cal.depth_cm);
    f.calibration_depth = from_lookup(beam.pdd.at(cal.depth_cm, ref.field_at_surface_cm), cal_f / 100.0);
    f.calibration_sp =
        from_lookup(beam.sp.at(ref.field_at_surface_cm * (cal.ssd_cm + beam.dmax_cm) / cal.ssd_cm));
    f.sp = from_lookup(beam.sp.at(s.normalisation_depth_cm));
    f.pdd = from_lookup(beam.pdd.at(in.depth_cm, s.surface_cm), 0.01);
    f.mayneord_f =
        from_formula(beamdata::mayneord_f_factor(in.ssd_cm, beam.pdd_ssd_cm, beam.dmax_cm, in.depth_cm));
    f.inverse_square = from_formula(squared((cal.ssd_cm + beam.dmax_cm) / (in.ssd_cm + beam.dmax_cm)));
    depth_term = f.pdd.value * f.mayneord_f.value;
  }

  const double reference = f.calibration_depth.value * f.calibration_sc.value * f.calibration_sp.value;
  result.dose_per_mu_cgy = f.output_cgy_per_mu / reference * f.sc.value * f.sp.value * depth_term *
                           f.oar.value * f.wedge.value * f.wedge_profile.value * f.tray.value *
                           f.transmission.value * f.inverse_square.value;
  result.dose_cgy = in.meterset_mu * result.dose_per_mu_cgy;
  return result;
}

}  // namespace countersign::engine
