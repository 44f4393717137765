// Sector integration of scatter (Clarkson 1941; Cunningham's scatter-air-ratio method, 1972) on the
// test fixture's analytic tables. Expected values come from the tables or from the geometry written
// out by hand beside each test, never from the code under test.

#include <countersign/engine/sector_scatter.hpp>

#include "fixtures.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <numbers>
#include <vector>

namespace countersign::engine {
namespace {

using test_fixtures::model_sp;
using test_fixtures::model_tmr;

geometry::Aperture rectangle(double x1, double x2, double y1, double y2) {
  geometry::JawOpening jaws{x1, x2, y1, y2};
  return geometry::Aperture(jaws, {{y1, y2, x1, x2}}, false);
}

// Sp·TMR of a square field from the tables (what the equivalent-square calculation uses).
double table_sp_tmr(const beamdata::BeamData& b, double depth_cm, double side_cm) {
  return b.sp.at(side_cm).value * b.tmr.at(depth_cm, side_cm).value;
}

double sector_sp_tmr(const SectorField& field, const beamdata::BeamData& b, double depth_cm, double x = 0.0,
                     double y = 0.0, double max_sector_deg = 10.0) {
  const ScatterMaximumRatios smr(b, depth_cm);
  return integrate_sectors(field, x, y, 1.0, smr, max_sector_deg).sp_tmr();
}

TEST(CircleToSquare, EqualAreaSide) {
  // A circle of radius r and a square of side r·sqrt(pi) have the same area (hand calculation);
  // the textbook rule "side ~ 1.8 r" (Khan, The Physics of Radiation Therapy, from memory) agrees to 2 %.
  EXPECT_NEAR(circle_equivalent_square_cm(5.0), 5.0 * 1.7724539, 1e-6);
  EXPECT_NEAR(circle_equivalent_square_cm(5.0) / (1.8 * 5.0), 1.0, 0.02);
}

TEST(ZeroField, LinearThroughTheTwoSmallestFields) {
  // Hand calculation: through (3, 0.80) and (4, 0.82) the line meets s = 0 at 0.80 - 3 * 0.02 = 0.74.
  EXPECT_NEAR(extrapolate_to_zero_field(3.0, 0.80, 4.0, 0.82), 0.74, 1e-12);
  const beamdata::BeamData b = test_fixtures::test_beam();
  const ScatterMaximumRatios smr(b, 10.0);
  // The fixture's smallest fields are 2 and 3 cm: TMR(10, 0) = TMR(10, 2) - 2 (TMR(10, 3) - TMR(10, 2)).
  EXPECT_NEAR(smr.tmr0(), 3.0 * model_tmr(10.0, 2.0) - 2.0 * model_tmr(10.0, 3.0), 1e-9);
  EXPECT_NEAR(smr.sp0(), 3.0 * model_sp(2.0) - 2.0 * model_sp(3.0), 1e-9);
  EXPECT_LT(smr.tmr0(), model_tmr(10.0, 2.0));  // less scatter than the smallest field
}

TEST(ScatterMaximumRatio, DefinitionFromTmrAndSp) {
  // SMR(d, r) = TMR(d, s_r) Sp(s_r) / Sp(0) - TMR(d, 0) with s_r = r sqrt(pi); at r with s_r = 10 cm
  // (a tabulated field) the value follows from the tables directly.
  const beamdata::BeamData b = test_fixtures::test_beam();
  const ScatterMaximumRatios smr(b, 10.0);
  const double r = 10.0 / std::sqrt(std::numbers::pi);
  const double expected = model_tmr(10.0, 10.0) * model_sp(10.0) / smr.sp0() - smr.tmr0();
  EXPECT_NEAR(smr.at_radius_cm(r), expected, 2e-4);
  EXPECT_NEAR(smr.at_radius_cm(0.0), 0.0, 1e-12);
  EXPECT_GT(smr.at_radius_cm(2.0 * r), smr.at_radius_cm(r));  // more field, more scatter
}

TEST(SectorIntegration, SquareAtTheCentreMatchesTheTablesWithinHalfAPercent) {
  // Acceptance rule of the method: a rectangle reproduces the tables' Sp·TMR within 0.5 %
  // (Clarkson's sums and equivalent squares agree to about 1 % for regular fields: Khan, from memory).
  const beamdata::BeamData b = test_fixtures::test_beam();
  for (double side : {4.0, 10.0, 20.0}) {
    for (double depth : {5.0, 10.0, 20.0}) {
      const geometry::Aperture a = rectangle(-5.0 * side, 5.0 * side, -5.0 * side, 5.0 * side);
      const SectorField field{&a, nullptr, 0.015, {}};
      EXPECT_NEAR(sector_sp_tmr(field, b, depth) / table_sp_tmr(b, depth, side), 1.0, 0.005)
          << side << " cm at " << depth << " cm";
    }
  }
}

TEST(SectorIntegration, RectanglesMatchSterlingsEquivalentSquareWithinHalfAPercent) {
  const beamdata::BeamData b = test_fixtures::test_beam();
  for (auto [w, l] : {std::pair{5.0, 20.0}, std::pair{10.0, 20.0}, std::pair{6.0, 15.0}}) {
    const geometry::Aperture a = rectangle(-5.0 * w, 5.0 * w, -5.0 * l, 5.0 * l);
    const SectorField field{&a, nullptr, 0.015, {}};
    const double eq = 2.0 * w * l / (w + l);  // Sterling's 4A/P (Sterling 1964)
    EXPECT_NEAR(sector_sp_tmr(field, b, 10.0) / table_sp_tmr(b, 10.0, eq), 1.0, 0.005) << w << " x " << l;
  }
}

TEST(SectorIntegration, CircleCentreIsTheCircleItself) {
  // A circular APERTURE block of radius 6 cm inside open jaws: every ray has the same length, so the
  // sum is exactly SMR of that circle (Clarkson 1941: the sector sum reduces to one circle), i.e.
  // the table's Sp·TMR at the equal-area square 6·sqrt(pi) = 10.63 cm, whatever the sector count.
  const beamdata::BeamData b = test_fixtures::test_beam();
  const geometry::Aperture open = rectangle(-150, 150, -150, 150);
  std::vector<BlockShape> blocks(1);
  for (int i = 0; i < 720; ++i) {
    const double a = i * std::numbers::pi / 360.0;
    blocks[0].outline_mm.push_back({60.0 * std::cos(a), 60.0 * std::sin(a)});
  }
  blocks[0].aperture = true;
  blocks[0].transmission = 0.0;
  const SectorField field{&open, &blocks, 0.0, {}};
  const double side = 6.0 * std::sqrt(std::numbers::pi);
  for (double sector_deg : {10.0, 5.0, 2.0}) {
    EXPECT_NEAR(sector_sp_tmr(field, b, 10.0, 0, 0, sector_deg) / table_sp_tmr(b, 10.0, side), 1.0, 0.002);
  }
}

TEST(SectorIntegration, EightSectorsOfASquareByHand) {
  // 8 sectors of 45 degrees, central rays at 22.5 + k·45 degrees, from the centre of a 10 x 10 cm
  // square: every ray ends at the edge at 5 / cos(22.5 deg) = 5.412 cm (hand calculation), so the
  // sum is SMR at that radius: Sp(0)·[TMR(d,0) + SMR(d, 5.412)] = Sp(s)·TMR(d, s), s = 5.412·sqrt(pi).
  const beamdata::BeamData b = test_fixtures::test_beam();
  const geometry::Aperture a = rectangle(-50, 50, -50, 50);
  const SectorField field{&a, nullptr, 0.0, {}};
  const double r = 5.0 / std::cos(22.5 * std::numbers::pi / 180.0);
  const double s = r * std::sqrt(std::numbers::pi);
  EXPECT_NEAR(sector_sp_tmr(field, b, 10.0, 0, 0, 45.0) / table_sp_tmr(b, 10.0, s), 1.0, 0.001);
}

TEST(SectorIntegration, RayLeavingAndReenteringCountsBothParts) {
  // Two 4 cm wide strips 6 cm apart (a U without its base), the point in the middle of one. Scatter
  // from the far strip reaches the point: more than from the one strip alone, less than the whole.
  const beamdata::BeamData b = test_fixtures::test_beam();
  geometry::JawOpening jaws{-80, 80, -100, 100};
  const geometry::Aperture one(jaws, {{-100, 100, -80, -40}}, true);
  std::vector<geometry::ApertureRow> rows;
  for (int i = 0; i < 20; ++i) {
    const double y = -100.0 + 10.0 * i;
    rows.push_back({y, y + 10.0, -80, -40});
  }
  // The second strip is made with a SHIELDING block over the middle of an open 16 cm wide field.
  const geometry::Aperture wide(jaws, {{-100, 100, -80, 80}}, true);
  std::vector<BlockShape> middle{{{{-40, -100}, {40, -100}, {40, 100}, {-40, 100}}, false, 0.0}};
  const SectorField one_field{&one, nullptr, 0.0, {}};
  const SectorField two_field{&wide, &middle, 0.0, {}};
  const SectorField whole{&wide, nullptr, 0.0, {}};
  const double s1 = sector_sp_tmr(one_field, b, 10.0, -60, 0);
  const double s2 = sector_sp_tmr(two_field, b, 10.0, -60, 0);
  const double s3 = sector_sp_tmr(whole, b, 10.0, -60, 0);
  EXPECT_GT(s2, s1 * 1.002);
  EXPECT_LT(s2, s3);
}

TEST(SectorIntegration, BlockedPointSeesTransmittedPrimary) {
  // A point under a 4 x 4 cm shielding block (transmission 3 %) at the centre of a 15 x 15 cm field:
  // its primary is 3 % of the open primary, its scatter comes from the open field around the block.
  const beamdata::BeamData b = test_fixtures::test_beam();
  const geometry::Aperture a = rectangle(-75, 75, -75, 75);
  std::vector<BlockShape> block{{{{-20, -20}, {20, -20}, {20, 20}, {-20, 20}}, false, 0.03}};
  const SectorField field{&a, &block, 0.0, {}};
  const ScatterMaximumRatios smr(b, 10.0);
  const SectorScatter s = integrate_sectors(field, 0, 0, 1.0, smr, 10.0);
  EXPECT_DOUBLE_EQ(s.primary_transmission, 0.03);
  // Scatter of the block's field is SMR(15 x 15) minus 97 % of SMR of the blocked part: between the
  // 15 x 15 cm field's scatter and that minus the whole 4 x 4 cm square's.
  const double smr_open = table_sp_tmr(b, 10.0, 15.0) / smr.sp0() - smr.tmr0();
  const double smr_block = table_sp_tmr(b, 10.0, 4.0) / smr.sp0() - smr.tmr0();
  EXPECT_LT(s.smr, smr_open);
  EXPECT_NEAR(s.smr, smr_open - 0.97 * smr_block, 0.01 * smr_open);
  // The dose there is a small fraction of the open field's (hand estimate: scatter ~ 20 %).
  EXPECT_LT(s.sp_tmr() / table_sp_tmr(b, 10.0, 15.0), 0.3);
}

TEST(SectorIntegration, BodyOutlineEndsTheRays) {
  const beamdata::BeamData b = test_fixtures::test_beam();
  const geometry::Aperture a = rectangle(-100, 100, -100, 100);
  SectorField field{&a, nullptr, 0.0, {}};
  const double open = sector_sp_tmr(field, b, 10.0);
  field.outline_radius_mm = [](double, double) { return std::optional<double>(40.0); };
  // Rays cut at 4 cm all round: the circle of radius 4 cm (equal-area square 7.09 cm).
  EXPECT_NEAR(sector_sp_tmr(field, b, 10.0) / table_sp_tmr(b, 10.0, 4.0 * std::sqrt(std::numbers::pi)), 1.0,
              0.002);
  EXPECT_LT(sector_sp_tmr(field, b, 10.0), open);
}

TEST(SectorIntegration, MlcyShapeIsTheMirroredMlcxShape) {
  // An L-shaped opening of leaf rows made by MLCX leaves, and the same rows as MLCY leaves (the shape
  // mirrored in the line x = y). Mirroring keeps every distance and maps the sectors' central rays
  // (5°, 15°, ... 355°) onto themselves, so the point (x, y) of the first and (y, x) of the second see
  // the same scatter: the MLCY frame must be handled exactly.
  const auto b = test_fixtures::test_beam();
  const geometry::JawOpening jaws{-60, 60, -60, 60};
  std::vector<geometry::ApertureRow> rows;
  for (int i = 0; i < 12; ++i) {
    const double v = -60.0 + 10.0 * i;
    rows.push_back({v, v + 10.0, -60.0, i < 4 ? 60.0 : -20.0});  // a 12 cm arm and a 4 cm wide leg
  }
  const geometry::Aperture along_x(jaws, rows, true, geometry::LeafTravel::x);
  const geometry::Aperture along_y(jaws, rows, true, geometry::LeafTravel::y);
  const SectorField fx{&along_x, nullptr, 0.015, {}};
  const SectorField fy{&along_y, nullptr, 0.015, {}};
  EXPECT_TRUE(along_x.contains(-40.0, 30.0));
  EXPECT_TRUE(along_y.contains(30.0, -40.0));
  EXPECT_FALSE(along_y.contains(40.0, 30.0));  // x = 40 is in the leg, open only for y < -20
  EXPECT_FALSE(along_x.contains(30.0, 40.0));
  const double mx = sector_sp_tmr(fx, b, 10.0, -40.0, 20.0);
  const double my = sector_sp_tmr(fy, b, 10.0, 20.0, -40.0);
  EXPECT_NEAR(my, mx, 1e-12 * mx);
}

}  // namespace
}  // namespace countersign::engine
