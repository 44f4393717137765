#pragma once

// Hand-built test inputs for the engine and check tests: an INVENTED photon beam whose tables come
// from a small analytic model (common practice in shape, no source for the numbers), PDD derived
// from TMR and Sp through the PDD->TMR relation so that the two formalisms are consistent, and a
// hand-built plan::Plan. Nothing here reads a file; the demo library is not used.

#include <countersign/beamdata/conversions.hpp>
#include <countersign/beamdata/library.hpp>
#include <countersign/plan/plan.hpp>

#include <cmath>
#include <string>
#include <vector>

namespace countersign::test_fixtures {

inline constexpr const char* machine_name = "TEST-LINAC";
inline constexpr double dmax_cm = 1.5;

inline double model_sc(double s) {
  return (1.0 + 0.15 * (1.0 - std::exp(-s / 10.0))) / (1.0 + 0.15 * (1.0 - std::exp(-1.0)));
}
inline double model_sp(double s) {
  return (1.0 + 0.12 * (1.0 - std::exp(-s / 12.0))) / (1.0 + 0.12 * (1.0 - std::exp(-10.0 / 12.0)));
}
inline double model_tmr(double d, double s) {
  if (d <= dmax_cm) return 1.0;  // flat build-up keeps the test tables simple
  const double x = d - dmax_cm;
  return std::exp(-0.0485 * x) * (1.0 + 0.0436 * (1.0 - std::exp(-s / 11.1)) * x / (1.0 + x / 28.8));
}
inline double model_oar(double d, double r) { return 1.0 + (0.045 - 0.002 * d) * (r / 20.0) * (r / 20.0); }

inline const std::vector<double> field_nodes_cm{2, 3, 4, 5, 6, 8, 10, 12, 15, 20, 25, 30, 40, 50};
inline const std::vector<double> depth_nodes_cm{1.5, 2, 3, 4, 5, 6, 7, 8, 10, 12, 15, 20, 25, 30, 35};

inline beamdata::Table1D table_1d(const std::string& quantity, double (*f)(double)) {
  std::vector<double> values;
  values.reserve(field_nodes_cm.size());
  for (double s : field_nodes_cm) values.push_back(f(s));
  return beamdata::Table1D("test/" + quantity + ".csv", quantity, "field_cm", field_nodes_cm, values);
}

inline beamdata::BeamData test_beam() {
  beamdata::BeamData b;
  b.id = "6X";
  b.radiation = "PHOTON";
  b.energy_mv = 6.0;
  b.dmax_cm = dmax_cm;
  b.pdd_ssd_cm = 100.0;
  b.calibration = {1.0, 10.0, 100.0, dmax_cm};
  b.sc = table_1d("sc", model_sc);
  b.sp = table_1d("sp", model_sp);
  std::vector<double> tmr, pdd;
  for (double d : depth_nodes_cm) {
    for (double s : field_nodes_cm) {
      tmr.push_back(model_tmr(d, s));
      const double f = 100.0;
      const double s_d = s * (f + d) / f;
      const double s_dm = s * (f + dmax_cm) / f;
      pdd.push_back(beamdata::pdd_from_tmr(model_tmr(d, s_d), d, f, dmax_cm, model_sp(s_d), model_sp(s_dm)));
    }
  }
  b.tmr =
      beamdata::Table2D("test/tmr.csv", "tmr", "depth_cm", depth_nodes_cm, "field_cm", field_nodes_cm, tmr);
  b.pdd =
      beamdata::Table2D("test/pdd.csv", "pdd", "depth_cm", depth_nodes_cm, "field_cm", field_nodes_cm, pdd);
  const std::vector<double> oar_depths{0, 5, 10, 20, 30, 40};
  const std::vector<double> oar_radii{0, 2, 5, 10, 15, 20, 25};
  std::vector<double> oar;
  for (double d : oar_depths) {
    for (double r : oar_radii) oar.push_back(model_oar(d, r));
  }
  b.oar = beamdata::Table2D("test/oar.csv", "oar", "depth_cm", oar_depths, "off_axis_cm", oar_radii, oar);
  b.mlc_transmission = 0.015;
  b.mlc_leaf_end_offset_mm = 0.0;  // square leaf ends in the test beam (keeps hand calculations exact)
  b.wedges.push_back({"W30", 30.0, beamdata::WedgeKind::physical, 0.70, std::nullopt});
  b.wedges.push_back(
      {"W45", 45.0, beamdata::WedgeKind::physical, std::nullopt,
       beamdata::Table2D("test/wf_w45.csv", "wedge_factor", "depth_cm", {1.5, 10, 20}, "field_cm",
                         {5, 10, 20}, {0.55, 0.56, 0.57, 0.56, 0.57, 0.58, 0.57, 0.58, 0.59})});
  b.trays.push_back({"TRAY-T", 0.97});
  return b;
}

// An INVENTED wedged off-axis ratio for the test beam's W30 (beamdata/FORMAT.md: depth_cm x signed
// distance along the gradient at the isocentre plane, thin end negative, 1 on the axis): the same
// row at every depth, so that a hand calculation needs only the linear interpolation across distance.
inline const std::vector<double> wedge_profile_cm{-10, -5, 0, 5, 10};
inline const std::vector<double> wedge_profile_row{1.30, 1.14, 1.0, 0.877, 0.769};
inline beamdata::Table2D test_wedge_profile() {
  const std::vector<double> depths{0, 10, 20, 30};
  std::vector<double> values;
  for (std::size_t i = 0; i < depths.size(); ++i)
    values.insert(values.end(), wedge_profile_row.begin(), wedge_profile_row.end());
  return beamdata::Table2D("test/w30_profile.csv", "wedge_oar", "depth_cm", depths, "wedge_axis_cm",
                           wedge_profile_cm, values);
}

inline beamdata::Library test_library() {
  beamdata::Library library;
  library.root = "in-memory";
  library.sha256_hex = std::string(64, '0');
  beamdata::Machine m;
  m.name = machine_name;
  m.sad_cm = 100.0;
  m.beams.push_back(test_beam());
  library.machines.push_back(std::move(m));
  return library;
}

// One static beam, jaws +-half_field_mm, isocentre at the origin, HFS, gantry 0.
inline plan::Beam static_beam(int number, double gantry_deg, double half_x_mm = 50.0,
                              double half_y_mm = 50.0) {
  plan::Beam beam;
  beam.number = number;
  beam.name = "B" + std::to_string(number);
  beam.machine_name = machine_name;
  beam.radiation_type = plan::parse_term<plan::RadiationType>("PHOTON");
  beam.delivery_type = plan::parse_term<plan::DeliveryType>("TREATMENT");
  beam.beam_type = plan::parse_term<plan::BeamType>("STATIC");
  beam.primary_dosimeter_unit = plan::parse_term<plan::DosimeterUnit>("MU");
  beam.sad_mm = 1000.0;
  beam.final_cumulative_meterset_weight = 1.0;
  beam.referenced_patient_setup_number = 1;
  beam.beam_limiting_devices.push_back({plan::term(plan::DeviceType::asymx), std::nullopt, 1, {}});
  beam.beam_limiting_devices.push_back({plan::term(plan::DeviceType::asymy), std::nullopt, 1, {}});
  plan::ControlPoint cp0;
  cp0.index = 0;
  cp0.nominal_energy_mv = 6.0;
  cp0.gantry_deg = gantry_deg;
  cp0.collimator_deg = 0.0;
  cp0.couch_deg = 0.0;
  cp0.isocenter_mm = plan::PointMm{0, 0, 0};
  cp0.devices.push_back({plan::term(plan::DeviceType::asymx), {-half_x_mm, half_x_mm}});
  cp0.devices.push_back({plan::term(plan::DeviceType::asymy), {-half_y_mm, half_y_mm}});
  cp0.cumulative_meterset_weight = 0.0;
  plan::ControlPoint cp1 = cp0;
  cp1.index = 1;
  cp1.cumulative_meterset_weight = 1.0;
  cp1.dose_reference_coefficients.push_back({1, 1.0});
  beam.control_points = {cp0, cp1};
  return beam;
}

// A plan with one dose reference point at `point` and the given beams, each with its MU and dose.
struct BeamSpec {
  plan::Beam beam;
  double meterset_mu = 100.0;
  double dose_gy = 1.0;
  std::optional<double> depth_mm;  // Beam Dose Point Depth in the beam's Referenced Dose Reference item
};

inline plan::Plan make_plan(std::vector<BeamSpec> beams, plan::PointMm point = {0, 0, 0},
                            const std::string& technique = "ISOCENTRIC",
                            const std::string& position = "HFS") {
  plan::Plan p;
  p.source_file = "hand-built";
  p.sop_instance_uid = "2.25.1";
  p.label = "TEST";
  p.patient_setups.push_back({1, plan::parse_term<plan::PatientPosition>(position),
                              plan::parse_term<plan::SetupTechnique>(technique), ""});
  plan::DoseReference ref;
  ref.number = 1;
  ref.structure_type = plan::parse_term<plan::DoseReferenceStructure>("COORDINATES");
  ref.type = "TARGET";
  ref.point_mm = point;
  p.dose_references.push_back(ref);
  plan::FractionGroup fg;
  fg.number = 1;
  fg.fractions_planned = 1;
  fg.beam_dose_meaning = plan::parse_term<plan::BeamDoseMeaning>("BEAM_LEVEL");
  for (BeamSpec& spec : beams) {
    plan::ReferencedBeam rb;
    rb.beam_number = spec.beam.number;
    rb.meterset_mu = spec.meterset_mu;
    rb.dose_gy = spec.dose_gy;
    if (spec.depth_mm) {
      plan::BeamDoseReference bdr;
      bdr.dose_reference_number = 1;
      bdr.distances.depth_mm = spec.depth_mm;
      spec.beam.dose_references.push_back(bdr);
    }
    fg.beams.push_back(rb);
    p.beams.push_back(std::move(spec.beam));
  }
  p.fraction_groups.push_back(fg);
  return p;
}

inline void set_ssd(plan::Beam& beam, double ssd_mm) {
  for (plan::ControlPoint& cp : beam.control_points) cp.ssd_mm = ssd_mm;
}

}  // namespace countersign::test_fixtures
