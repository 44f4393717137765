// The fluence the pencil-beam model integrates (tools/pencil_beam/fluence.cpp): jaws, leaves with
// their transmission and rounded ends, blocks. Expected values are areas worked out by hand.

#include <pencil_beam/pencil_beam.hpp>

#include <gtest/gtest.h>

#include <cmath>
#include <numbers>
#include <vector>

namespace pencil_beam {
namespace {

// Integral of the fluence over the plane (mm^2): open area plus transmission x covered area.
double fluence_area_mm2(const FluenceGrid& g) {
  double sum = 0.0;
  for (double v : g.values) sum += v;
  return sum * g.cell_mm * g.cell_mm;
}

// Ten 5 mm leaf pairs from y = -25 to 25 mm.
std::vector<double> ten_pairs() {
  std::vector<double> b;
  for (int i = 0; i <= 10; ++i) b.push_back(-25.0 + 5.0 * i);
  return b;
}

TEST(Fluence, JawsAloneCountPartlyCoveredCellsByTheirShare) {
  Opening o;
  o.jaws_mm = {-20.3, 30.0, -10.0, 10.7};  // 50.3 x 20.7 mm, edges off the 1 mm grid
  const auto g = rasterise(o, 1.0);
  EXPECT_NEAR(fluence_area_mm2(g), 50.3 * 20.7, 1e-9);
  EXPECT_DOUBLE_EQ(g.at(5, 5), 1.0);
  EXPECT_NEAR(g.at(g.nx - 1, g.ny - 1), 0.3 * 0.7, 1e-9);  // the corner cell: 0.3 mm x 0.7 mm open
}

TEST(Fluence, LeavesTransmitTheirShareAndRoundedEndsWidenEachOpenPair) {
  Opening o;
  o.jaws_mm = {-40.0, 40.0, -25.0, 25.0};
  o.leaf_boundaries_mm = ten_pairs();
  o.leaf_positions_mm.assign(20, 0.0);
  for (std::size_t i = 0; i < 10; ++i) {
    const bool open = i >= 3 && i < 7;  // four pairs open from -10 to +10 mm, six closed at 0
    o.leaf_positions_mm[i] = open ? -10.0 : 0.0;
    o.leaf_positions_mm[10 + i] = open ? 10.0 : 0.0;
  }
  o.leaf_transmission = 0.02;
  // Open: 4 pairs x 5 mm x 20 mm = 400 mm^2; under leaves: 80 x 50 - 400 = 3600 mm^2 at 2 %.
  EXPECT_NEAR(fluence_area_mm2(rasterise(o, 1.0)), 400.0 + 0.02 * 3600.0, 1e-9);
  // A 0.6 mm leaf-end offset moves both tips of each open pair out: 4 x 5 x (20 + 1.2) mm open.
  o.leaf_end_offset_mm = 0.6;
  const double open_area = 4.0 * 5.0 * 21.2;
  EXPECT_NEAR(fluence_area_mm2(rasterise(o, 1.0)), open_area + 0.02 * (4000.0 - open_area), 1e-9);
}

TEST(Fluence, ShieldingAndApertureBlocks) {
  Opening o;
  o.jaws_mm = {-50.0, 50.0, -50.0, 50.0};
  // A 20 x 30 mm shielding block on whole cells, transmitting 5 %: 600 mm^2 lose 95 %.
  o.blocks.push_back({{{0.0, 0.0}, {20.0, 0.0}, {20.0, 30.0}, {0.0, 30.0}}, false, 0.05});
  EXPECT_NEAR(fluence_area_mm2(rasterise(o, 1.0)), 10000.0 - 0.95 * 600.0, 1e-6);
  // An aperture block: a circle of radius 30 mm (as a 360-gon) opens pi r^2 = 2827.4 mm^2; the rest
  // of the jaws transmits 1 %. Sampling each cell 4 x 4 puts the area within 0.5 %.
  std::vector<std::array<double, 2>> circle;
  for (int k = 0; k < 360; ++k) {
    const double a = k * std::numbers::pi / 180.0;
    circle.push_back({30.0 * std::cos(a), 30.0 * std::sin(a)});
  }
  o.blocks = {{circle, true, 0.01}};
  const double disc = std::numbers::pi * 900.0;
  EXPECT_NEAR(fluence_area_mm2(rasterise(o, 1.0)), disc + 0.01 * (10000.0 - disc), 0.005 * disc);
}

}  // namespace
}  // namespace pencil_beam
