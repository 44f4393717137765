// The sensitivity search against hand calculations. The beam here is INVENTED and deliberately
// simple (tables linear or constant along each axis, so bilinear interpolation is exact) so that each
// reconciling change has a closed form that can be worked out on paper from the formulas of
// AAPM TG-71 (2014), eq. for the isocentric (TMR) and SSD (PDD) forms as written in DEVELOPERS.md, "Physics".

#include <countersign/engine/sensitivity.hpp>

#include <gtest/gtest.h>

#include <cmath>
#include <vector>

namespace countersign::engine {
namespace {

// TMR(d) = 1 - 0.03 (d - 1.5), the same for every field; PDD(d) = 100 (1 - 0.04 (d - 1.5)) likewise;
// Sc(s) = 0.95 + 0.005 s; Sp = 1; no OAR table (on-axis point). Calibration 1 cGy/MU, 10x10,
// SSD 100 cm, depth 1.5 cm (= dmax), so the calibration-depth term is 1.
beamdata::BeamData linear_beam() {
  beamdata::BeamData b;
  b.id = "LIN";
  b.radiation = "PHOTON";
  b.energy_mv = 6.0;
  b.dmax_cm = 1.5;
  b.pdd_ssd_cm = 100.0;
  b.calibration = {1.0, 10.0, 100.0, 1.5};
  const std::vector<double> depths{0.0, 1.5, 5.0, 10.0, 15.0, 20.0, 30.0};
  const std::vector<double> fields{1.0, 10.0, 60.0};
  std::vector<double> tmr, pdd;
  for (double d : depths) {
    for (std::size_t c = 0; c < fields.size(); ++c) {
      tmr.push_back(1.0 - 0.03 * (d - 1.5));
      pdd.push_back(100.0 * (1.0 - 0.04 * (d - 1.5)));
    }
  }
  b.tmr = beamdata::Table2D("lin/tmr.csv", "tmr", "depth_cm", depths, "field_cm", fields, tmr);
  b.pdd = beamdata::Table2D("lin/pdd.csv", "pdd", "depth_cm", depths, "field_cm", fields, pdd);
  b.sc = beamdata::Table1D("lin/sc.csv", "sc", "field_cm", {1.0, 10.0, 60.0}, {0.955, 1.0, 1.25});
  b.sp = beamdata::Table1D("lin/sp.csv", "sp", "field_cm", {1.0, 60.0}, {1.0, 1.0});
  return b;
}

DoseInputs tmr_inputs() {
  DoseInputs in;
  in.method = Method::tmr;
  in.meterset_mu = 100.0;
  in.depth_cm = 10.0;
  in.spd_cm = 100.0;
  in.ssd_cm = 90.0;
  in.sad_cm = 100.0;
  in.collimator_field_cm = 10.0;
  in.field_at_isocentre_cm = 10.0;
  return in;
}

TEST(Sensitivity, BaselineMatchesHandCalculation) {
  // D = 100 MU x 1 cGy/MU x Sc(10)=1 x Sp=1 x TMR(10)=0.745 x (101.5/100)^2=1.030225 = 76.7517625 cGy.
  const auto beam = linear_beam();
  const DoseInputs in = tmr_inputs();
  EXPECT_NEAR(compute_point_dose(beam, in).dose_cgy, 76.7517625, 1e-9);
}

TEST(Sensitivity, TmrFormChangesMatchHandCalculation) {
  const auto beam = linear_beam();
  const std::vector<DoseInputs> parts{tmr_inputs()};
  const Sensitivity s = reconcile(beam, parts, 80.0);
  ASSERT_EQ(s.changes.size(), 3u);
  EXPECT_NEAR(s.baseline_dose_cgy, 76.7517625, 1e-9);

  // Depth: 74.5 x 1.030225 x TMR(d')/0.745 = 80  =>  TMR(d') = 80/103.0225 = 0.7765293
  //        d' = 1.5 + (1 - 0.7765293)/0.03 = 8.949020 cm  =>  change -1.050980 cm.
  const double tmr_needed = 80.0 / 103.0225;
  const double depth_change = 1.5 + (1.0 - tmr_needed) / 0.03 - 10.0;
  EXPECT_NEAR(depth_change, -1.050980, 1e-6);  // the hand value itself
  ASSERT_TRUE(s.changes[0].change_cm);
  EXPECT_EQ(s.changes[0].quantity, SensitivityQuantity::depth);
  EXPECT_NEAR(*s.changes[0].change_cm, depth_change, 1e-6);
  EXPECT_DOUBLE_EQ(s.changes[0].baseline_cm, 10.0);
  EXPECT_FALSE(s.changes[0].extrapolated);

  // SSD (and SPD with it): only the inverse square depends on it here (TMR and Sp are the same for
  // every field):  74.5 (101.5/SPD')^2 = 80  =>  SPD' = 101.5 sqrt(74.5/80) = 97.948815 cm.
  const double ssd_change = 101.5 * std::sqrt(74.5 / 80.0) - 100.0;
  EXPECT_NEAR(ssd_change, -2.051185, 1e-6);
  ASSERT_TRUE(s.changes[1].change_cm);
  EXPECT_NEAR(*s.changes[1].change_cm, ssd_change, 1e-6);
  EXPECT_DOUBLE_EQ(s.changes[1].baseline_cm, 90.0);

  // Field: Sc(s') = 80/76.7517625 = 1.0423215  =>  s' = (1.0423213 - 0.95)/0.005 = 18.464268 cm
  // (Sc between the 10 and 60 cm nodes is 1 + 0.005 (s - 10), the same line).
  const double field_change = (80.0 / 76.7517625 - 0.95) / 0.005 - 10.0;
  EXPECT_NEAR(field_change, 8.464268, 1e-6);
  ASSERT_TRUE(s.changes[2].change_cm);
  EXPECT_NEAR(*s.changes[2].change_cm, field_change, 1e-6);
}

TEST(Sensitivity, PddFormSsdChangeIsInverseSquareToThePoint) {
  // SSD form: F(SSD) x ((SSDref + dm)/(SSD + dm))^2 = ((SSDt + d)/(SSD + d))^2 ((SSDref + dm)/(SSDt + dm))^2,
  // so with PDD and Sp independent of field the dose goes as 1/(SSD + d)^2 (Mayneord F as in DEVELOPERS.md, "Physics").
  const auto beam = linear_beam();
  DoseInputs in = tmr_inputs();
  in.method = Method::pdd;
  in.ssd_cm = 100.0;
  in.spd_cm = 110.0;
  const double base = compute_point_dose(beam, in).dose_cgy;
  // By hand: 100 MU x Sc 1 x PDD(10)/100 = 0.66 x F(100) = 1 x ISQ 1 = 66.0 cGy.
  EXPECT_NEAR(base, 66.0, 1e-9);
  const std::vector<DoseInputs> parts{in};
  const Sensitivity s = reconcile(beam, parts, 60.0);
  // 66 (110/(SSD' + 10))^2 = 60  =>  SSD' = 110 sqrt(66/60) - 10 = 105.368973 cm.
  const double ssd_change = 110.0 * std::sqrt(66.0 / 60.0) - 10.0 - 100.0;
  EXPECT_NEAR(ssd_change, 5.368973, 1e-6);
  ASSERT_TRUE(s.changes[1].change_cm);
  EXPECT_NEAR(*s.changes[1].change_cm, ssd_change, 1e-6);
  // Depth at fixed SSD: checked by substituting back, the dose at the reported depth is the target.
  ASSERT_TRUE(s.changes[0].change_cm);
  const DoseInputs moved = with_change(in, SensitivityQuantity::depth, *s.changes[0].change_cm);
  EXPECT_NEAR(compute_point_dose(beam, moved).dose_cgy, 60.0, 1e-6);
  EXPECT_NEAR(moved.spd_cm - moved.depth_cm, 100.0, 1e-12);  // the SSD stays
}

TEST(Sensitivity, SaysWhenNoChangeInRangeReconciles) {
  const auto beam = linear_beam();
  const std::vector<DoseInputs> parts{tmr_inputs()};
  // Twice the dose: TMR would have to reach 1.49 (depth below zero); the search stops at 0.1 cm.
  const Sensitivity s = reconcile(beam, parts, 2.0 * 76.7517625);
  ASSERT_FALSE(s.changes[0].change_cm);
  EXPECT_NEAR(s.changes[0].search_min_change_cm, -9.9, 1e-12);
  EXPECT_NEAR(s.changes[0].search_max_change_cm, 10.0, 1e-12);
}

TEST(Sensitivity, AgreeingDosesNeedNoChange) {
  const auto beam = linear_beam();
  const std::vector<DoseInputs> parts{tmr_inputs()};
  const Sensitivity s = reconcile(beam, parts, 76.7517625);
  for (const Reconciliation& r : s.changes) {
    ASSERT_TRUE(r.change_cm);
    EXPECT_NEAR(*r.change_cm, 0.0, 1e-9);
  }
}

TEST(Sensitivity, PartsAreSummedLikeTheBeam) {
  // Two half-meterset parts give the same answers as one part with the whole meterset.
  const auto beam = linear_beam();
  DoseInputs half = tmr_inputs();
  half.meterset_mu = 50.0;
  const std::vector<DoseInputs> parts{half, half};
  const Sensitivity s = reconcile(beam, parts, 80.0);
  ASSERT_TRUE(s.changes[0].change_cm);
  EXPECT_NEAR(*s.changes[0].change_cm, -1.050980, 1e-6);
}

TEST(Sensitivity, MarksAReconcilingValueOutsideTheTables) {
  // 10 cGy needs TMR = 10/103.0225 = 0.097066, i.e. depth 1.5 + 0.902934/0.03 = 31.598 cm: beyond the
  // last TMR row (30 cm).
  const auto beam = linear_beam();
  const std::vector<DoseInputs> parts{tmr_inputs()};
  SensitivityLimits limits;
  limits.depth_cm = 25.0;
  const Sensitivity s = reconcile(beam, parts, 10.0, limits);
  ASSERT_TRUE(s.changes[0].change_cm);
  EXPECT_NEAR(10.0 + *s.changes[0].change_cm, 31.597794, 1e-5);
  EXPECT_GT(10.0 + *s.changes[0].change_cm, 30.0);
  EXPECT_TRUE(s.changes[0].extrapolated);
}

}  // namespace
}  // namespace countersign::engine
