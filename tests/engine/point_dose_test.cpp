// The point-dose formulas. Hand calculations: the formulas are those of AAPM TG-71 (2014) as
// written in DEVELOPERS.md, "Physics"; the table values are invented, of typical magnitude for 6 MV (from
// memory), and placed on table nodes so the expected numbers are plain products.

#include <countersign/engine/point_dose.hpp>

#include "engine/fixtures.hpp"

#include <gtest/gtest.h>

namespace countersign::engine {
namespace {

// A small explicit beam: Sc, Sp at 5/10/15/20 cm; TMR and PDD at depths 1.5/5/10/15 cm.
beamdata::BeamData hand_beam() {
  beamdata::BeamData b;
  b.id = "6X";
  b.radiation = "PHOTON";
  b.energy_mv = 6.0;
  b.dmax_cm = 1.5;
  b.pdd_ssd_cm = 100.0;
  b.calibration = {1.000, 10.0, 100.0, 1.5};
  const std::vector<double> fields{5, 10, 15, 20};
  const std::vector<double> depths{1.5, 5, 10, 15};
  b.sc = beamdata::Table1D("sc.csv", "sc", "field_cm", fields, {0.970, 1.000, 1.020, 1.030});
  b.sp = beamdata::Table1D("sp.csv", "sp", "field_cm", fields, {0.980, 1.000, 1.010, 1.020});
  b.tmr = beamdata::Table2D("tmr.csv", "tmr", "depth_cm", depths, "field_cm", fields,
                            {1.000, 1.000, 1.000, 1.000,  //
                             0.900, 0.910, 0.915, 0.920,  //
                             0.760, 0.780, 0.800, 0.810,  //
                             0.640, 0.660, 0.680, 0.690});
  b.pdd = beamdata::Table2D("pdd.csv", "pdd", "depth_cm", depths, "field_cm", fields,
                            {100.0, 100.0, 100.0, 100.0,  //
                             84.0, 86.0, 87.0, 87.5,      //
                             64.0, 66.8, 68.5, 69.5,      //
                             48.0, 51.0, 53.0, 54.0});
  b.wedges.push_back({"W30", 30.0, beamdata::WedgeKind::physical, 0.700, std::nullopt});
  b.trays.push_back({"TRAY-T", 0.970});
  return b;
}

DoseInputs isocentric_15x15_at_10cm() {
  DoseInputs in;
  in.method = Method::tmr;
  in.meterset_mu = 100.0;
  in.depth_cm = 10.0;
  in.spd_cm = 100.0;
  in.ssd_cm = 90.0;
  in.sad_cm = 100.0;
  in.collimator_field_cm = 15.0;
  in.field_at_isocentre_cm = 15.0;
  return in;
}

// The calibration (10 x 10 at the surface, SSD 100, depth 1.5: "SSD" geometry by FORMAT.md's default
// rule) puts 10 x 101.5/100 = 10.15 cm at the calibration point; the output is divided by the
// factors there (TG-71: the formula gives Ḋref at the calibration conditions): Sc(10) 1.000,
// TMR(1.5, 10.15) 1.000 and Sp(10.15) = 1.000 + 0.010 · 0.15/5 = 1.0003 (linear between 10 and 15).
constexpr double reference_sp = 1.0003;

// Hand calculation, TG-71 isocentric form: D/MU = 1.000 / 1.0003 · Sc(15) 1.020 · Sp(15) 1.010
// · TMR(10,15) 0.800 · (101.5/100)² = 0.848815 cGy/MU; 200 cGy need 235.62 MU.
TEST(PointDose, IsocentricHandCalculation) {
  const PointDose d = compute_point_dose(hand_beam(), isocentric_15x15_at_10cm());
  EXPECT_NEAR(d.dose_per_mu_cgy, 0.848815, 5e-6);
  EXPECT_NEAR(200.0 / d.dose_per_mu_cgy, 235.62, 0.01);
  EXPECT_NEAR(d.dose_cgy, 84.8815, 5e-4);
  EXPECT_EQ(d.reference.geometry, beamdata::CalibrationGeometry::ssd);
  EXPECT_TRUE(d.reference.geometry_defaulted);
  EXPECT_NEAR(d.reference.field_at_point_cm, 10.15, 1e-12);
  EXPECT_NEAR(d.factors.calibration_sp.value, reference_sp, 1e-12);
  EXPECT_EQ(d.factors.sc.basis, FactorBasis::table);
  ASSERT_TRUE(d.factors.tmr.lookup);
  EXPECT_EQ(d.factors.tmr.lookup->table_file, "tmr.csv");
  EXPECT_DOUBLE_EQ(d.factors.tmr.value, 0.800);
  EXPECT_DOUBLE_EQ(d.factors.calibration_depth.value, 1.0);
  EXPECT_EQ(d.factors.oar.basis, FactorBasis::on_axis_unity);
  EXPECT_NEAR(d.factors.inverse_square.value, 1.030225, 1e-9);
  EXPECT_EQ(d.first_extrapolated(), nullptr);
}

// Hand calculation, TG-71 SSD form at the table's SSD: 10x10 at the isocentre = 10x10 at the
// surface (SSD 100), depth 10 cm. Sp at s_d0 = 10 (100 + 1.5)/100 = 10.15 cm is interpolated
// between 1.000 (10) and 1.010 (15): 1.0003; the reference field is the same 10 x 10 at the surface
// with the same Sp(10.15), so D/MU = 1.000 / 1.0003 · 1.0003 · 0.668 = 0.668 cGy/MU: the PDD itself.
TEST(PointDose, FixedSsdHandCalculation) {
  DoseInputs in = isocentric_15x15_at_10cm();
  in.method = Method::pdd;
  in.ssd_cm = 100.0;
  in.spd_cm = 110.0;
  in.collimator_field_cm = 10.0;
  in.field_at_isocentre_cm = 10.0;
  const PointDose d = compute_point_dose(hand_beam(), in);
  EXPECT_NEAR(d.fields.surface_cm, 10.0, 1e-12);
  EXPECT_NEAR(d.fields.normalisation_depth_cm, 10.15, 1e-12);
  EXPECT_NEAR(d.factors.sp.value, 1.0003, 1e-12);
  EXPECT_NEAR(d.factors.pdd.value, 0.668, 1e-12);
  EXPECT_DOUBLE_EQ(d.factors.mayneord_f.value, 1.0);
  EXPECT_DOUBLE_EQ(d.factors.inverse_square.value, 1.0);
  EXPECT_NEAR(d.dose_per_mu_cgy, 0.668, 1e-9);
}

// Extended SSD 120 cm: Mayneord F = [(120+1.5)/(100+1.5) · (100+10)/(120+10)]² = 1.025933 (> 1, as
// it must be for SSD beyond the table's: common practice) and inverse square (101.5/121.5)².
TEST(PointDose, ExtendedSsdUsesMayneordAndInverseSquare) {
  DoseInputs in = isocentric_15x15_at_10cm();
  in.method = Method::pdd;
  in.ssd_cm = 120.0;
  in.spd_cm = 130.0;
  in.collimator_field_cm = 10.0;
  in.field_at_isocentre_cm = 10.0 * 100.0 / 120.0;  // 10x10 at the surface
  const PointDose d = compute_point_dose(hand_beam(), in);
  EXPECT_NEAR(d.fields.surface_cm, 10.0, 1e-12);
  EXPECT_NEAR(d.factors.mayneord_f.value, 1.025933, 1e-6);
  EXPECT_GT(d.factors.mayneord_f.value, 1.0);
  EXPECT_NEAR(d.factors.inverse_square.value, (101.5 / 121.5) * (101.5 / 121.5), 1e-12);
  const double sp = 1.0 + 0.010 * (10.0 * 121.5 / 120.0 - 10.0) / 5.0;  // Sp(s_d0 = 10.125 cm)
  EXPECT_NEAR(d.dose_per_mu_cgy,
              1.0 / reference_sp * sp * 0.668 * 1.025933 * (101.5 / 121.5) * (101.5 / 121.5), 1e-6);
}

// Hand calculation: the isocentric case above, 1.000 · 1.020 · 1.010 · 0.800 · (101.5/100)², times the
// wedge factor 0.700, the tray factor 0.970 and a transmission of 0.015 (TG-71: each multiplies).
TEST(PointDose, WedgeTrayAndTransmissionMultiply) {
  const beamdata::BeamData b = hand_beam();
  DoseInputs in = isocentric_15x15_at_10cm();
  in.wedge = b.wedge("W30");
  in.tray = b.tray("TRAY-T");
  in.transmission = 0.015;
  const PointDose d = compute_point_dose(b, in);
  EXPECT_EQ(d.factors.wedge.basis, FactorBasis::manifest_constant);
  EXPECT_NEAR(d.dose_per_mu_cgy, 1.020 * 1.010 * 0.800 * 1.015 * 1.015 / reference_sp * 0.700 * 0.970 * 0.015,
              1e-12);
}

TEST(PointDose, WedgeFactorTableIsLookedUp) {
  beamdata::BeamData b = hand_beam();
  b.wedges.push_back({"W45", 45.0, beamdata::WedgeKind::physical, std::nullopt,
                      beamdata::Table2D("wf.csv", "wedge_factor", "depth_cm", {1.5, 20}, "field_cm", {5, 20},
                                        {0.50, 0.53, 0.52, 0.55})});
  DoseInputs in = isocentric_15x15_at_10cm();
  in.wedge = b.wedge("W45");
  const PointDose d = compute_point_dose(b, in);
  ASSERT_TRUE(d.factors.wedge.lookup);
  // Bilinear: depth weight (10-1.5)/18.5, field weight 10/15.
  const double wd = 8.5 / 18.5;
  const double wf = 10.0 / 15.0;
  const double expected = (1 - wd) * ((1 - wf) * 0.50 + wf * 0.53) + wd * ((1 - wf) * 0.52 + wf * 0.55);
  EXPECT_NEAR(d.factors.wedge.value, expected, 1e-12);
}

TEST(PointDose, ExtrapolationIsMarked) {
  DoseInputs in = isocentric_15x15_at_10cm();
  in.depth_cm = 20.0;  // beyond the 15 cm table
  const PointDose d = compute_point_dose(hand_beam(), in);
  const Factor* f = d.first_extrapolated();
  ASSERT_NE(f, nullptr);
  EXPECT_EQ(f->lookup->quantity, "tmr");
}

// A library calibrated at 10 cm depth, SSD 90 (10x10 at the isocentre): the dose per MU at the
// calibration point must come out as the calibration output (definition of the calibration).
TEST(PointDose, CalibrationAtDepthReproducesTheOutput) {
  beamdata::BeamData b = hand_beam();
  b.calibration = {0.800, 10.0, 90.0, 10.0};
  b.calibration.stated_geometry = beamdata::CalibrationGeometry::sad;
  b.calibration.geometry = beamdata::CalibrationGeometry::sad;
  DoseInputs in = isocentric_15x15_at_10cm();
  in.collimator_field_cm = 10.0;
  in.field_at_isocentre_cm = 10.0;
  EXPECT_NEAR(compute_point_dose(b, in).dose_per_mu_cgy, 0.800, 1e-12);
}

beamdata::Calibration calibration(double output, double ssd_cm, double depth_cm,
                                  beamdata::CalibrationGeometry geometry) {
  beamdata::Calibration c{output, 10.0, ssd_cm, depth_cm};
  c.stated_geometry = geometry;
  c.geometry = geometry;
  return c;
}

// Issue 12 ("a different but equally valid calibration shifts doses"): the same machine described
// by three libraries calibrated differently gives the same dose. The hand beam's "truth" is its own
// TMR-form model, D/MU = K · Sc · Sp · TMR / SPD², with K fixed by library A:
//   A: 1.000 cGy/MU, 10 x 10 at the surface, SSD 100, depth 1.5 ("SSD"): K = 1.000 · 101.5² / Sp(10.15)
//   B: 10 x 10 at the point, SSD 90, depth 10 ("SAD"): Ḋ = K · Sc(10) Sp(10) TMR(10, 10) / 100²
//      = 1.030225 / 1.0003 · 0.780 = 0.803339 cGy/MU
//   C: 10 x 10 at the surface, SSD 100, depth 10 ("SSD"): field 11 at the point, Sp(11) = 1.002,
//      TMR(10, 11) = 0.784, Ḋ = K · 1.002 · 0.784 / 110²
// The old rule (field_cm always at the calibration point) gave C a dose 0.5 % off.
TEST(PointDose, CalibrationGeometryDoesNotChangeTheDose) {
  const double k = 101.5 * 101.5 / reference_sp;
  beamdata::BeamData a = hand_beam();
  a.calibration = calibration(1.000, 100.0, 1.5, beamdata::CalibrationGeometry::ssd);
  beamdata::BeamData b = hand_beam();
  b.calibration = calibration(k * 0.780 / (100.0 * 100.0), 90.0, 10.0, beamdata::CalibrationGeometry::sad);
  EXPECT_NEAR(b.calibration.output_cgy_per_mu, 0.803339, 5e-6);
  beamdata::BeamData c = hand_beam();
  c.calibration =
      calibration(k * 1.002 * 0.784 / (110.0 * 110.0), 100.0, 10.0, beamdata::CalibrationGeometry::ssd);
  const DoseInputs in = isocentric_15x15_at_10cm();
  const double expected = 0.848815;  // IsocentricHandCalculation
  EXPECT_NEAR(compute_point_dose(a, in).dose_per_mu_cgy, expected, 5e-6);
  EXPECT_NEAR(compute_point_dose(b, in).dose_per_mu_cgy, expected, 5e-6);
  EXPECT_NEAR(compute_point_dose(c, in).dose_per_mu_cgy, expected, 5e-6);
  EXPECT_NEAR(compute_point_dose(c, in).reference.field_at_point_cm, 11.0, 1e-12);
}

// The PDD form, on the fixture whose PDD is derived from its TMR and Sp: an SSD-calibrated and an
// SAD-calibrated library (output from the TMR model at the SAD point, hand-computed as above) agree
// within 0.3 % (the fixture's interpolation; common practice, no source).
TEST(PointDose, CalibrationGeometryInThePddForm) {
  beamdata::BeamData ssd = test_fixtures::test_beam();
  ssd.calibration = calibration(1.0, 100.0, test_fixtures::dmax_cm, beamdata::CalibrationGeometry::ssd);
  beamdata::BeamData sad = test_fixtures::test_beam();
  const double reference_sp_fixture =
      1.0 + (10.15 - 10.0) / 2.0 * (test_fixtures::model_sp(12.0) - 1.0);  // linear, nodes 10 and 12
  const double k = 101.5 * 101.5 / reference_sp_fixture;
  sad.calibration = calibration(k * test_fixtures::model_tmr(10.0, 10.0) / (100.0 * 100.0), 90.0, 10.0,
                                beamdata::CalibrationGeometry::sad);
  DoseInputs in;
  in.method = Method::pdd;
  in.meterset_mu = 100.0;
  in.depth_cm = 10.0;
  in.ssd_cm = 100.0;
  in.spd_cm = 110.0;
  in.collimator_field_cm = 10.0;
  in.field_at_isocentre_cm = 10.0;
  const double d_ssd = compute_point_dose(ssd, in).dose_cgy;
  const double d_sad = compute_point_dose(sad, in).dose_cgy;
  EXPECT_NEAR(d_sad / d_ssd, 1.0, 0.003);
  in.method = Method::tmr;
  EXPECT_NEAR(compute_point_dose(sad, in).dose_cgy / compute_point_dose(ssd, in).dose_cgy, 1.0, 1e-9);
}

// With PDD, TMR and Sp consistent (the fixture derives PDD from TMR and Sp), the two formalisms give
// the same dose at the same point within 1 % (DEVELOPERS.md, "Physics"; the remaining difference is
// interpolation and, off the table's SSD, the Mayneord approximation).
TEST(PointDose, FormalismsAgreeForConsistentData) {
  const beamdata::BeamData b = test_fixtures::test_beam();
  for (double ssd_cm : {100.0, 90.0, 120.0}) {
    for (double depth_cm : {3.0, 5.0, 10.0, 20.0}) {
      for (double field_cm : {5.0, 10.0, 20.0}) {
        DoseInputs in;
        in.meterset_mu = 100.0;
        in.depth_cm = depth_cm;
        in.ssd_cm = ssd_cm;
        in.spd_cm = ssd_cm + depth_cm;
        in.collimator_field_cm = field_cm;
        in.field_at_isocentre_cm = field_cm;
        in.method = Method::tmr;
        const double tmr = compute_point_dose(b, in).dose_cgy;
        in.method = Method::pdd;
        const double pdd = compute_point_dose(b, in).dose_cgy;
        EXPECT_NEAR(pdd / tmr, 1.0, 0.01)
            << "SSD " << ssd_cm << " depth " << depth_cm << " field " << field_cm;
        if (ssd_cm == 100.0) {
          EXPECT_NEAR(pdd / tmr, 1.0, 0.003);
        }
      }
    }
  }
}

}  // namespace
}  // namespace countersign::engine
