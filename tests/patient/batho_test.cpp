// Batho power-law correction against the published two-layer form and limiting cases.
// Sources: Batho (1964) for the two-layer form; Sontag and Cunningham (1978) for layers in
// general; as given in F. M. Khan, "The Physics of Radiation Therapy", chapter on tissue
// inhomogeneity corrections: CF = TAR(d1)^(rho1 - rho2) / TAR(d2)^(1 - rho2), with rho1 the
// density of the point's medium, d1 the point's depth in it, rho2 the density of the layer above
// and d2 the depth below that layer's upper face (the form from memory). Tissue-air ratios below
// are test inputs, not data from a source.

#include <countersign/patient/batho.hpp>

#include <gtest/gtest.h>

#include <cmath>
#include <vector>

namespace countersign::test {
namespace {

using patient::batho_correction;
using patient::BathoForm;
using patient::DensityLayer;

// A smooth, made-up TAR of depth (cm): falls with depth, not a pure exponential.
double made_up_tar(double depth_cm) {
  return std::exp(-0.045 * depth_cm) * (1.0 + 0.08 * depth_cm / (2.0 + depth_cm));
}

TEST(Batho, HomogeneousWaterNeedsNoCorrection) {
  const std::vector<DensityLayer> water{{100.0, 1.0}};
  EXPECT_DOUBLE_EQ(*batho_correction(water, made_up_tar, BathoForm::power_law), 1.0);
  const std::vector<DensityLayer> split{{30.0, 1.0}, {70.0, 1.0}};  // splitting a layer changes nothing
  EXPECT_DOUBLE_EQ(*batho_correction(split, made_up_tar, BathoForm::power_law), 1.0);
}

// Point in water 20 mm below a 50 mm slab of density 0.25, itself under 30 mm of water.
TEST(Batho, PointBelowASlabMatchesTheTwoLayerForm) {
  const std::vector<DensityLayer> layers{{30.0, 1.0}, {50.0, 0.25}, {20.0, 1.0}};
  const double d1 = 2.0, d2 = 7.0, rho1 = 1.0, rho2 = 0.25;
  const double published = std::pow(made_up_tar(d1), rho1 - rho2) / std::pow(made_up_tar(d2), 1.0 - rho2);
  EXPECT_NEAR(*batho_correction(layers, made_up_tar, BathoForm::power_law), published, 1e-14);
}

TEST(Batho, PointInsideTheSlabMatchesTheTwoLayerForm) {
  const std::vector<DensityLayer> layers{{30.0, 1.0}, {25.0, 0.25}};  // the point 25 mm into the slab
  const double published = std::pow(made_up_tar(2.5), 0.25 - 1.0) / std::pow(made_up_tar(5.5), 1.0 - 1.0);
  EXPECT_NEAR(*batho_correction(layers, made_up_tar, BathoForm::power_law), published, 1e-14);
}

// Hand calculation with round test inputs TAR(2 cm) = 0.95, TAR(7 cm) = 0.80:
// CF = (0.95 / 0.80)^0.75 = 1.1875^0.75 = 1.137562 (to 6 decimals).
TEST(Batho, HandCalculation) {
  const auto tar = [](double depth_cm) {
    if (std::abs(depth_cm - 2.0) < 1e-12) return 0.95;
    if (std::abs(depth_cm - 7.0) < 1e-12) return 0.80;
    return 0.5;  // exponent 0 at every other face
  };
  const std::vector<DensityLayer> layers{{30.0, 1.0}, {50.0, 0.25}, {20.0, 1.0}};
  EXPECT_NEAR(*batho_correction(layers, tar, BathoForm::power_law), 1.137562, 5e-7);
}

// With a purely exponential TAR the power law equals the effective-path-length ratio
// TAR(d_eff) / TAR(d) exactly (exp(-mu x) raised to density differences telescopes; analytic).
TEST(Batho, ExponentialTarGivesTheEffectivePathLengthRatio) {
  const double mu = 0.05;
  const auto tar = [mu](double depth_cm) { return std::exp(-mu * depth_cm); };
  const std::vector<DensityLayer> layers{{20.0, 1.0}, {40.0, 0.3}, {15.0, 1.6}, {45.0, 1.0}};
  double depth_cm = 0.0, effective_cm = 0.0;
  for (const auto& l : layers)
    depth_cm += l.thickness_mm / 10.0, effective_cm += l.thickness_mm / 10.0 * l.relative_density;
  EXPECT_NEAR(*batho_correction(layers, tar, BathoForm::power_law), tar(effective_cm) / tar(depth_cm), 1e-12);
}

TEST(Batho, ModifiedFormShiftsEveryDistanceByTheBuildUpDepth) {
  std::vector<double> asked;
  const auto tmr = [&asked](double depth_cm) {
    asked.push_back(depth_cm);
    return made_up_tar(depth_cm);
  };
  const std::vector<DensityLayer> layers{{30.0, 1.0}, {50.0, 0.25}, {20.0, 1.0}};
  const double factor = *batho_correction(layers, tmr, BathoForm::modified, 1.5);
  EXPECT_EQ(asked, (std::vector<double>{3.5, 8.5}));  // X = 2 and 7 cm, plus 1.5 cm
  EXPECT_NEAR(factor, std::pow(made_up_tar(3.5), 0.75) / std::pow(made_up_tar(8.5), 0.75), 1e-14);
}

TEST(Batho, RatioOutsideItsTableGivesNoFactor) {
  const std::vector<DensityLayer> layers{{30.0, 1.0}, {50.0, 0.25}, {20.0, 1.0}};
  EXPECT_FALSE(batho_correction(
                   layers, [](double) { return 0.0; }, BathoForm::power_law)
                   .has_value());
  EXPECT_FALSE(batho_correction(
                   layers, [](double) { return std::nan(""); }, BathoForm::power_law)
                   .has_value());
}

}  // namespace
}  // namespace countersign::test
