// Irregular fields worked by hand, the way Clarkson's method (Clarkson 1941; Cunningham's
// scatter-air-ratio method, 1972) is worked on paper: radii drawn from the point every 10°, each
// radius's scatter-maximum ratio read from an SMR table, the blocked stretch of a radius subtracted,
// the sum divided by the number of radii. The procedure is the textbook one (Khan, The Physics of
// Radiation Therapy, chapter on irregular fields — from memory, the procedure only). A textbook's
// own worked example and its SAR/SMR table could not be checked against the book here, so the SMR
// table below is INVENTED (a plausible shape for a 6 MV beam at 10 cm depth) and every radius and
// table reading is written out by hand beside the test.
// Also: rounded leaf ends widen a 2 x 10 cm MLC field as the leaf-end offset predicts.

#include <countersign/engine/beam_dose.hpp>
#include <countersign/engine/sector_scatter.hpp>

#include "engine/fixtures.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <numbers>
#include <vector>

namespace countersign::engine {
namespace {

// INVENTED SMR(d = 10 cm, r) at the radii r (cm), and TMR(10, 0) = 0.700.
const std::vector<double> smr_radius_cm{0, 2, 4, 6, 8, 10, 12, 15, 20};
const std::vector<double> smr_value{0.0, 0.030, 0.055, 0.072, 0.085, 0.094, 0.101, 0.108, 0.115};
constexpr double tmr0 = 0.700;

// A beam whose tables reproduce that SMR table exactly: Sp = 1 for every field (so Sp(0) = 1) and
// TMR(d, s) = TMR(d, 0) + SMR(d, r) at the equal-area squares s = r·√π of the radii; the zero-field
// column s = 0 makes the linear extrapolation to the zero field exact. The same row at 5, 10 and
// 15 cm keeps the row at 10 cm exact.
beamdata::BeamData smr_beam() {
  beamdata::BeamData b = test_fixtures::test_beam();
  std::vector<double> sides;
  std::vector<double> ones;
  for (double r : smr_radius_cm) {
    sides.push_back(r * std::sqrt(std::numbers::pi));
    ones.push_back(1.0);
  }
  const std::vector<double> depths{5.0, 10.0, 15.0};
  std::vector<double> tmr;
  for (std::size_t d = 0; d < depths.size(); ++d) {
    for (double v : smr_value) tmr.push_back(tmr0 + v);
  }
  b.tmr = beamdata::Table2D("invented/tmr_from_smr.csv", "tmr", "depth_cm", depths, "field_cm", sides, tmr);
  b.sp = beamdata::Table1D("invented/sp_unity.csv", "sp", "field_cm", sides, ones);
  return b;
}

// A 20 x 10 cm field (X ±10 cm, Y ±5 cm) with a shielding strip 4 cm wide across it (x from 4 to
// 8 cm, transmission 5 %), the point at the centre. Radii every 10° (central rays at 5°, 15°, ...):
// the field edge lies at R(θ) = min(10 / cos θ, 5 / sin θ); on the right half a radius enters the
// strip at a = 4 / cos θ and leaves it at b = min(8 / cos θ, R). The four quadrants mirror each other
// (the strip is in the right two). By hand, first quadrant (SMR by linear interpolation in the table):
//
//    θ     R (cm)   SMR(R)    a (cm)   b (cm)   SMR(b) − SMR(a)
//    5°   10.038   0.09413    4.015    8.031    0.03001
//   15°   10.353   0.09523    4.141    8.282    0.03007
//   25°   11.034   0.09762    4.414    8.827    0.03021
//   35°    8.717   0.08823    4.883    8.717    0.02572
//   45°    7.071   0.07896    5.657    7.071    0.00988
//   55°    6.104   0.07268      -
//   65°    5.517   0.06789      -
//   75°    5.176   0.06500      -
//   85°    5.019   0.06366      -
//   sums          0.72341                       0.12589
//
// Open field: mean SMR = 4 · 0.72341 / 36 = 0.08038. With the strip: (4 · 0.72341 − 2 · 0.95 ·
// 0.12589) / 36 = 0.07373. Sp·TMR at the point = Sp(0)·[TMR(10, 0) + mean SMR] = 0.78038 and 0.77373.
TEST(ClarksonByHand, StripBlockedRectangleAtTheCentre) {
  const beamdata::BeamData b = smr_beam();
  const ScatterMaximumRatios smr(b, 10.0);
  EXPECT_NEAR(smr.tmr0(), tmr0, 1e-12);
  EXPECT_NEAR(smr.sp0(), 1.0, 1e-12);
  EXPECT_NEAR(smr.at_radius_cm(7.071), 0.07896, 1e-5);  // a table reading of the hand calculation

  const geometry::JawOpening jaws{-100.0, 100.0, -50.0, 50.0};
  const geometry::Aperture field(jaws, {{-50.0, 50.0, -100.0, 100.0}}, false);
  const SectorField open{&field, nullptr, 0.0, {}};
  const SectorScatter o = integrate_sectors(open, 0.0, 0.0, 1.0, smr, 10.0);
  EXPECT_EQ(o.sectors, 36);
  EXPECT_NEAR(o.smr, 0.08038, 2e-5);
  EXPECT_NEAR(o.sp_tmr(), 0.78038, 2e-5);

  const std::vector<BlockShape> strip{
      {{{40.0, -70.0}, {80.0, -70.0}, {80.0, 70.0}, {40.0, 70.0}}, false, 0.05}};
  const SectorField blocked{&field, &strip, 0.0, {}};
  const SectorScatter s = integrate_sectors(blocked, 0.0, 0.0, 1.0, smr, 10.0);
  EXPECT_NEAR(s.smr, 0.07373, 2e-5);
  EXPECT_DOUBLE_EQ(s.primary_transmission, 1.0);  // the point itself is open
  EXPECT_NEAR(s.sp_tmr(), 0.77373, 2e-5);
}

// The same field seen from a point under the strip, at (6, 0) cm: its primary is the strip's 5 %
// (T_point = 0.05), so Sp·TMR = Sp(0)·[0.05 · TMR(10, 0) + mean SMR], with the mean SMR less than
// the open field's scatter at that point and more than zero.
TEST(ClarksonByHand, PointUnderTheBlockKeepsTheTransmittedPrimary) {
  const beamdata::BeamData b = smr_beam();
  const ScatterMaximumRatios smr(b, 10.0);
  const geometry::JawOpening jaws{-100.0, 100.0, -50.0, 50.0};
  const geometry::Aperture field(jaws, {{-50.0, 50.0, -100.0, 100.0}}, false);
  const std::vector<BlockShape> strip{
      {{{40.0, -70.0}, {80.0, -70.0}, {80.0, 70.0}, {40.0, 70.0}}, false, 0.05}};
  const SectorField blocked{&field, &strip, 0.0, {}};
  const SectorField open{&field, nullptr, 0.0, {}};
  const SectorScatter s = integrate_sectors(blocked, 60.0, 0.0, 1.0, smr, 10.0);
  const SectorScatter o = integrate_sectors(open, 60.0, 0.0, 1.0, smr, 10.0);
  EXPECT_DOUBLE_EQ(s.primary_transmission, 0.05);
  EXPECT_NEAR(s.sp_tmr(), 0.05 * tmr0 + s.smr, 1e-12);
  EXPECT_GT(s.smr, 0.0);
  EXPECT_LT(s.smr, o.smr);
  // The point is 2 cm from either edge of the 4 cm strip: at least the radii straight along ±x cross
  // 2 cm of strip, so at least that much scatter is lost from them (hand: (1 − 0.05) · SMR(2 cm)
  // for each of the four sectors nearest ±x, i.e. ≥ 4 · 0.95 · 0.030 / 36 from the mean).
  EXPECT_LT(s.smr, o.smr - 4.0 * 0.95 * 0.030 / 36.0);
}

// Rounded leaf ends: a 2 x 10 cm MLC field (leaf tips at x = ±10 mm, ten 10 mm pairs, jaws 10 x 10
// cm) with an offset of 1 mm opens each tip by 1 mm, so it is the 2.2 x 10 cm field of square leaf
// ends at ±11 mm (FORMAT.md, mlc_leaf_end_offset_mm): the same opening, the same dose. Against
// square ends at ±10 mm the dose rises about as the tables' Sp·TMR from Sterling's 3.333 cm
// (2·2·10/12) to 3.607 cm (2·2.2·10/12.2) predicts: a sector sum and the equivalent square agree
// within 0.5 % for rectangles (sector_scatter_test), so the prediction holds within 1 %. The point
// is on the axis, where the OAR is 1.
struct LeafEnds : ::testing::Test {
  beamdata::Library library = test_fixtures::test_library();

  BeamDose run(double tip_mm, double offset_mm) {
    library.machines[0].beams[0].mlc_leaf_end_offset_mm = offset_mm;
    plan::Beam beam = test_fixtures::static_beam(1, 0.0);
    plan::BeamLimitingDevice mlc{plan::term(plan::DeviceType::mlcx), std::nullopt, 10, {}};
    for (int i = 0; i <= 10; ++i) mlc.leaf_boundaries_mm.push_back(-50.0 + 10.0 * i);
    beam.beam_limiting_devices.push_back(mlc);
    std::vector<double> positions(20);
    for (int i = 0; i < 10; ++i) {
      positions[i] = -tip_mm;
      positions[10 + i] = tip_mm;
    }
    for (plan::ControlPoint& cp : beam.control_points)
      cp.devices.push_back({plan::term(plan::DeviceType::mlcx), positions});
    const plan::Plan plan = test_fixtures::make_plan({{beam, 100.0, 1.0, 100.0}});
    const plan::ReferencedBeam& rb = plan.fraction_groups.front().beams.front();
    const auto point = select_dose_point(plan, *plan.beam(1), rb);
    EXPECT_TRUE(point.has_value());
    return compute_beam_dose(plan, *plan.beam(1), rb, *point, library, {});
  }
};

TEST_F(LeafEnds, OffsetWidensATwoByTenFieldByTwiceTheOffset) {
  const BeamDose rounded = run(10.0, 1.0);
  const BeamDose square_wider = run(11.0, 0.0);
  const BeamDose square = run(10.0, 0.0);
  ASSERT_FALSE(rounded.problem);
  ASSERT_FALSE(square_wider.problem);
  ASSERT_FALSE(square.problem);
  EXPECT_NEAR(rounded.aperture.area_mm2(), 22.0 * 100.0, 1e-9);  // 2.2 x 10 cm (hand)
  EXPECT_NEAR(square.aperture.area_mm2(), 20.0 * 100.0, 1e-9);
  EXPECT_EQ(rounded.segments.front().scatter_method, ScatterMethod::sector_integration);
  EXPECT_NEAR(rounded.computed_dose_gy, square_wider.computed_dose_gy, 1e-12);

  const auto sp_tmr = [&](double side_cm) {
    const beamdata::BeamData& b = library.machines[0].beams[0];
    return b.sp.at(side_cm).value * b.tmr.at(10.0, side_cm).value;
  };
  const double predicted = sp_tmr(2.0 * 2.2 * 10.0 / 12.2) / sp_tmr(2.0 * 2.0 * 10.0 / 12.0);
  EXPECT_GT(predicted, 1.0);
  EXPECT_NEAR(rounded.computed_dose_gy / square.computed_dose_gy, predicted, 0.01 * predicted);
  EXPECT_GT(rounded.computed_dose_gy, square.computed_dose_gy);
}

}  // namespace
}  // namespace countersign::engine
