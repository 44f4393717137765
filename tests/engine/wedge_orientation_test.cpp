// The wedged off-axis ratio along the wedge's gradient (the library's orientation table, aimed by
// Wedge Orientation (300A,00D8) and the collimator angle). Expected values are hand calculations on
// the fixture's tables (engine/fixtures.hpp, linear interpolation written out beside each value) and
// on the geometry of IEC 61217 as DICOM PS3.3 states it: Wedge Orientation is the angle of the IEC
// WEDGE FILTER system about +Z of the IEC BEAM LIMITING DEVICE system (C.8.8.14, Wedge Sequence),
// and the direction from the thick edge to the thin edge is the +y axis of the wedge's system
// (PS3.3 C.36.2.2.10, Beam Modifier Orientation Angle). So at orientation θ the thin end points
// along (−sin θ, cos θ) of the beam-limiting-device system: 0° towards +Y (the gantry), 90° towards
// −X, 180° towards −Y, 270° towards +X.

#include <countersign/engine/beam_dose.hpp>

#include "engine/fixtures.hpp"

#include <gtest/gtest.h>

#include <optional>

namespace countersign::engine {
namespace {

using test_fixtures::make_plan;
using test_fixtures::model_oar;
using test_fixtures::static_beam;

struct WedgeFixture : ::testing::Test {
  beamdata::Library library = test_fixtures::test_library();
  EngineOptions options;

  WedgeFixture() {
    library.machines[0].beams[0].wedges[0].orientation_table = test_fixtures::test_wedge_profile();
  }

  // A 20 x 20 cm field with W30 at `orientation_deg` (none: absent), collimator `collimator_deg`,
  // the point at patient (x, 0, z) mm, depth 10 cm (HFS, gantry 0: patient x is IEC X, the
  // patient's head, +z, is IEC Y).
  BeamDose run(std::optional<double> orientation_deg, double x_mm, double z_mm, double collimator_deg = 0.0,
               double half_field_mm = 100.0) {
    plan::Beam beam = static_beam(1, 0.0, half_field_mm, half_field_mm);
    for (plan::ControlPoint& cp : beam.control_points) cp.collimator_deg = collimator_deg;
    beam.wedges.push_back(
        {1, plan::parse_term<plan::WedgeType>("STANDARD"), "W30", 30.0, std::nullopt, orientation_deg});
    const plan::Plan plan = make_plan({{beam, 100.0, 1.0, 100.0}}, {x_mm, 0.0, z_mm});
    const plan::ReferencedBeam& rb = plan.fraction_groups.front().beams.front();
    const auto point = select_dose_point(plan, *plan.beam(rb.beam_number), rb);
    EXPECT_TRUE(point.has_value());
    return compute_beam_dose(plan, *plan.beam(rb.beam_number), rb, *point, library, options);
  }
};

// The fixture's open-field OAR at depth 10 cm (a table row) and 4 cm off axis, between the radius
// nodes 2 and 5 cm: OAR(10, 2) + (2/3)·(OAR(10, 5) − OAR(10, 2)) (hand interpolation).
double open_oar_4cm() {
  return model_oar(10.0, 2.0) + (2.0 / 3.0) * (model_oar(10.0, 5.0) - model_oar(10.0, 2.0));
}

// The fixture's wedged off-axis ratio 4 cm towards the thick end: 1 + 0.8·(0.877 − 1) = 0.9016;
// 4 cm towards the thin end: 1 + 0.8·(1.14 − 1) = 1.112 (hand interpolation between 0 and ±5 cm).
constexpr double profile_thick_4cm = 0.9016;
constexpr double profile_thin_4cm = 1.112;

TEST_F(WedgeFixture, ThickAndThinSidesFollowTheWedgeOrientation) {
  // Without a Wedge Orientation the open-field OAR at 4 cm applies (the former calculation).
  const BeamDose open = run(std::nullopt, 40.0, 0.0);
  ASSERT_FALSE(open.problem);
  EXPECT_EQ(open.features.wedge_profile, WedgeProfile::no_orientation);
  EXPECT_NEAR(open.point.iso_plane_x_mm, 40.0, 1e-9);  // HFS, gantry 0: patient x is IEC X
  EXPECT_NEAR(open.dose.factors.oar.value, open_oar_4cm(), 1e-9);
  EXPECT_EQ(open.dose.factors.wedge_profile.basis, FactorBasis::not_applicable);

  // Orientation 90°: thin end towards −X, the point at +X lies 4 cm towards the thick end. The OAR
  // across the gradient is OAR(10, 0) = 1, the profile 0.9016: the dose is 0.9016 / OAR(10, 4) of
  // the open-field calculation.
  const BeamDose thick = run(90.0, 40.0, 0.0);
  ASSERT_FALSE(thick.problem);
  EXPECT_EQ(thick.features.wedge_profile, WedgeProfile::orientation_table);
  EXPECT_NEAR(thick.dose.factors.wedge_profile.value, profile_thick_4cm, 1e-9);
  EXPECT_NEAR(thick.dose.factors.oar.value, 1.0, 1e-9);
  EXPECT_NEAR(thick.computed_dose_gy / open.computed_dose_gy, profile_thick_4cm / open_oar_4cm(), 1e-9);

  // Orientation 270°: thin end towards +X, the same point 4 cm towards the thin end.
  const BeamDose thin = run(270.0, 40.0, 0.0);
  ASSERT_FALSE(thin.problem);
  EXPECT_NEAR(thin.dose.factors.wedge_profile.value, profile_thin_4cm, 1e-9);
  EXPECT_NEAR(thin.computed_dose_gy / open.computed_dose_gy, profile_thin_4cm / open_oar_4cm(), 1e-9);
  // A wedge turned by 180°: the dose changes by the ratio of the two sides of the profile.
  EXPECT_NEAR(thick.computed_dose_gy / thin.computed_dose_gy, profile_thick_4cm / profile_thin_4cm, 1e-9);
  EXPECT_GT(thin.computed_dose_gy, thick.computed_dose_gy);  // more dose under the thin end
}

TEST_F(WedgeFixture, OrientationZeroPointsTheThinEndTowardsTheGantry) {
  // Orientation 0°: thin end towards +Y. A point 4 cm towards the gantry lies 4 cm towards the thin
  // end (1.112); with orientation 180° the same point lies towards the thick end (0.9016). On the
  // axis the profile is 1; along X the point lies across the gradient (profile 1, OAR at 4 cm).
  const BeamDose thin = run(0.0, 0.0, 40.0);
  ASSERT_FALSE(thin.problem);
  EXPECT_NEAR(thin.point.iso_plane_y_mm, 40.0, 1e-9);
  EXPECT_NEAR(thin.dose.factors.wedge_profile.value, profile_thin_4cm, 1e-9);
  const BeamDose thick = run(180.0, 0.0, 40.0);
  ASSERT_FALSE(thick.problem);
  EXPECT_NEAR(thick.dose.factors.wedge_profile.value, profile_thick_4cm, 1e-9);
  const BeamDose axis = run(0.0, 0.0, 0.0);
  ASSERT_FALSE(axis.problem);
  EXPECT_NEAR(axis.dose.factors.wedge_profile.value, 1.0, 1e-9);
  const BeamDose across = run(0.0, 40.0, 0.0);
  ASSERT_FALSE(across.problem);
  EXPECT_NEAR(across.dose.factors.wedge_profile.value, 1.0, 1e-9);
  EXPECT_NEAR(across.dose.factors.oar.value, open_oar_4cm(), 1e-9);
}

TEST_F(WedgeFixture, CollimatorAngleTurnsTheWedgeWithIt) {
  // Collimator 90° with orientation 0°: the beam-limiting-device +Y lies along the gantry system's
  // −X (Rz(90°)·(0, 1) = (−1, 0)), so the thin end points to −X of the gantry system, as with
  // collimator 0° and orientation 90°. The point at gantry +X: 4 cm towards the thick end either way.
  const BeamDose turned_collimator = run(0.0, 40.0, 0.0, 90.0);
  const BeamDose turned_wedge = run(90.0, 40.0, 0.0, 0.0);
  ASSERT_FALSE(turned_collimator.problem);
  ASSERT_FALSE(turned_wedge.problem);
  EXPECT_NEAR(turned_collimator.point.iso_plane_y_mm, -40.0, 1e-9);  // the point in the turned system
  EXPECT_NEAR(turned_collimator.dose.factors.wedge_profile.value, profile_thick_4cm, 1e-9);
  EXPECT_NEAR(turned_collimator.computed_dose_gy / turned_wedge.computed_dose_gy, 1.0, 1e-9);
}

TEST_F(WedgeFixture, NoTableLeavesTheOpenFieldOar) {
  library.machines[0].beams[0].wedges[0].orientation_table.reset();
  const BeamDose d = run(90.0, 40.0, 0.0);
  ASSERT_FALSE(d.problem);
  EXPECT_EQ(d.features.wedge_profile, WedgeProfile::no_table);
  EXPECT_EQ(d.dose.factors.wedge_profile.basis, FactorBasis::not_applicable);
  EXPECT_NEAR(d.dose.factors.oar.value, open_oar_4cm(), 1e-9);
}

TEST_F(WedgeFixture, BeyondTheProfileIsAnExtrapolation) {
  // 12 cm towards the thick end of a 30 x 30 cm field: the table ends at 10 cm.
  const BeamDose d = run(90.0, 120.0, 0.0, 0.0, 150.0);
  ASSERT_FALSE(d.problem);
  ASSERT_NE(d.first_extrapolated(), nullptr);
  EXPECT_EQ(d.first_extrapolated(), &d.segments.front().dose.factors.wedge_profile);
}

}  // namespace
}  // namespace countersign::engine
