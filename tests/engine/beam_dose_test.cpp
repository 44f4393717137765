// The per-beam calculation on hand-built plans (no files). Expected values are hand calculations from
// the stated geometry and the fixture's tables (the analytic model in engine/fixtures.hpp, evaluated
// at table nodes or interpolated linearly by hand), with the TG-71 isocentric form (AAPM TG-71, 2014,
// as written in DEVELOPERS.md, "Physics"). No expected value comes from the engine itself. The engine reports
// facts (a problem's kind, attribute and values); the sentences are the check module's.

#include <countersign/engine/beam_dose.hpp>

#include "engine/fixtures.hpp"

#include <gtest/gtest.h>

#include <array>
#include <optional>
#include <string>
#include <vector>

namespace countersign::engine {
namespace {

using test_fixtures::make_plan;
using test_fixtures::static_beam;

struct Fixture : ::testing::Test {
  beamdata::Library library = test_fixtures::test_library();
  EngineOptions options;

  BeamDose run(const plan::Plan& plan, std::size_t beam_index = 0) {
    const plan::ReferencedBeam& rb = plan.fraction_groups.front().beams.at(beam_index);
    const plan::Beam& beam = *plan.beam(rb.beam_number);
    const auto point = select_dose_point(plan, beam, rb);
    EXPECT_TRUE(point.has_value());
    return compute_beam_dose(plan, beam, rb, *point, library, options);
  }
  const beamdata::BeamData& data() const { return library.machines.front().beams.front(); }
};

// A block as the plan reader gives it: a polygon at the isocentre plane (mm), a type, a tray.
plan::Block block(std::vector<std::array<double, 2>> outline_mm, const char* type,
                  std::optional<double> transmission, const char* tray_id = "TRAY-T") {
  plan::Block b;
  b.number = 1;
  b.tray_id = tray_id;
  b.type = plan::parse_term<plan::BlockType>(type);
  b.transmission = transmission;
  b.outline_mm = std::move(outline_mm);
  return b;
}

// For failure messages: the problem's kind and attribute.
std::string shown(const std::optional<CalculationProblem>& problem) {
  if (!problem) return "no problem";
  return "problem kind " + std::to_string(static_cast<int>(problem->kind)) + " " +
         std::string{problem->attribute.name} + " " + std::string{problem->attribute.tag};
}

// Hand calculation on the fixture's tables, on the axis of a 10 x 10 cm field at SPD 100 cm: the
// library is calibrated 1 cGy/MU at dmax 1.5 cm, SSD 100 cm, so (TG-71 isocentric form)
//   D = MU · 1 · Sc(10) · Sp(10) · TMR(d, 10) · OAR(d, 0) · (101.5/100)²
//       / Sp(s_ref)
// with Sc(10) = Sp(10) = 1 and OAR(d, 0) = 1 by the model's normalisation. The output is normalised at
// the calibration conditions (TG-71: the formula must give Ḋref there): the library's field_cm 10 is
// at the surface (SSD geometry), 10 x 101.5/100 = 10.15 cm at the calibration point, so the output is
// divided by Sp(10.15), linear between the 10 and 12 cm nodes; Sc(10) = 1 and TMR(1.5, 10.15) = 1.
const double reference_sp_10x10 = 1.0 + (10.15 - 10.0) / 2.0 * (test_fixtures::model_sp(12.0) - 1.0);
const double inverse_square_10x10 = 1.015 * 1.015 / reference_sp_10x10;
double tmr_10x10(double depth_cm) { return test_fixtures::model_tmr(depth_cm, 10.0); }

TEST_F(Fixture, StaticIsocentricBeamUsesThePlansDepth) {
  const plan::Plan plan = make_plan({{static_beam(1, 0), 150.0, 1.2, 95.0}});
  const BeamDose r = run(plan);
  ASSERT_FALSE(r.problem) << shown(r.problem);
  EXPECT_EQ(r.depth.source, DepthSource::beam_dose_reference_item);
  EXPECT_DOUBLE_EQ(r.depth.depth_mm, 95.0);
  EXPECT_EQ(r.method, Method::tmr);
  EXPECT_FALSE(r.features.modulated);
  EXPECT_NEAR(r.point.spd_mm, 1000.0, 1e-9);
  EXPECT_TRUE(r.point_in_field);
  EXPECT_NEAR(r.edge_distance_mm, 50.0, 1e-9);
  // Depth 9.5 cm lies between the 8 and 10 cm rows: TMR = 0.25 TMR(8) + 0.75 TMR(10) (linear).
  const double tmr = 0.25 * tmr_10x10(8.0) + 0.75 * tmr_10x10(10.0);
  EXPECT_NEAR(r.computed_dose_gy, 150.0 * tmr * inverse_square_10x10 / 100.0, 1e-12);
  EXPECT_EQ(r.segments.size(), 1u);
}

TEST_F(Fixture, DepthDerivedFromSsdWhenThePlanHasNone) {
  plan::Beam beam = static_beam(1, 0);
  test_fixtures::set_ssd(beam, 900.0);
  const BeamDose r = run(make_plan({{beam, 100.0, 1.0, std::nullopt}}));
  ASSERT_FALSE(r.problem) << shown(r.problem);
  EXPECT_EQ(r.depth.source, DepthSource::derived_spd_minus_ssd);
  EXPECT_NEAR(r.depth.depth_mm, 100.0, 1e-9);
  ASSERT_FALSE(r.approximations.empty());
  EXPECT_EQ(r.approximations.front().kind, ApproximationKind::derived_depth);
}

TEST_F(Fixture, NoDepthAndNoSsdIsMissingPlanData) {
  const BeamDose r = run(make_plan({{static_beam(1, 0), 100.0, 1.0, std::nullopt}}));
  ASSERT_TRUE(r.problem);
  EXPECT_EQ(r.problem->kind, ProblemKind::depth_and_ssd_missing);
}

// Opposed laterals on a 200 mm wide flat phantom, point 30 mm left of the isocentre: the derived
// depths are 70 and 130 mm and add up to the separation (hand calculation).
TEST_F(Fixture, OpposedBeamsDepthsSumToSeparation) {
  plan::Beam left = static_beam(1, 90);
  plan::Beam right = static_beam(2, 270);
  test_fixtures::set_ssd(left, 900.0);
  test_fixtures::set_ssd(right, 900.0);
  const plan::Plan plan =
      make_plan({{left, 100.0, 1.0, std::nullopt}, {right, 100.0, 1.0, std::nullopt}}, {30, 0, 0});
  const BeamDose a = run(plan, 0);
  const BeamDose b = run(plan, 1);
  ASSERT_FALSE(a.problem);
  ASSERT_FALSE(b.problem);
  EXPECT_NEAR(a.depth.depth_mm, 70.0, 1e-9);  // gantry 90: source on the patient's left
  EXPECT_NEAR(b.depth.depth_mm, 130.0, 1e-9);
  EXPECT_NEAR(a.depth.depth_mm + b.depth.depth_mm, 200.0, 1e-9);
}

TEST_F(Fixture, OffAxisPointUsesTheOarTable) {
  const plan::Plan plan = make_plan({{static_beam(1, 0, 100.0, 100.0), 100.0, 1.0, 100.0}}, {50, 0, 0});
  const BeamDose r = run(plan);
  ASSERT_FALSE(r.problem) << shown(r.problem);
  EXPECT_NEAR(r.point.off_axis_mm, 50.0, 1e-9);
  EXPECT_EQ(r.dose.factors.oar.basis, FactorBasis::table);
  EXPECT_NEAR(r.dose.factors.oar.value, test_fixtures::model_oar(10.0, 5.0), 1e-12);  // on a table node
  EXPECT_GT(r.dose.factors.oar.value, 1.0);
}

TEST_F(Fixture, OffAxisPointWithoutOarTableIsMissingBeamData) {
  library.machines.front().beams.front().oar.reset();
  const BeamDose r = run(make_plan({{static_beam(1, 0), 100.0, 1.0, 100.0}}, {20, 0, 0}));
  ASSERT_TRUE(r.problem);
  EXPECT_EQ(r.problem->kind, ProblemKind::oar_table_missing);
  EXPECT_NEAR(r.problem->plan_value.value_or(0.0), 20.0, 1e-9);  // the off-axis distance, mm
  EXPECT_EQ(r.problem->library_beam, "6X");
}

// Half-beam: X1 = 0, X2 = 100 mm, Y +-50 mm, point 50 mm into the open half. Collimator field
// 2·10·10/(10+10) = 10 cm (Sterling), jaw centre 50 mm off the axis.
TEST_F(Fixture, AsymmetricJaws) {
  plan::Beam beam = static_beam(1, 0);
  for (plan::ControlPoint& cp : beam.control_points) cp.devices[0].positions_mm = {0.0, 100.0};
  const BeamDose r = run(make_plan({{beam, 100.0, 1.0, 100.0}}, {50, 0, 0}));
  ASSERT_FALSE(r.problem) << shown(r.problem);
  EXPECT_NEAR(r.inputs.collimator_field_cm, 10.0, 1e-12);
  EXPECT_NEAR(r.features.jaw_centre_offset_mm, 50.0, 1e-12);
  EXPECT_NEAR(r.point.off_axis_mm, 50.0, 1e-9);
  EXPECT_NEAR(r.edge_distance_mm, 50.0, 1e-9);
}

TEST_F(Fixture, WedgeFromTheLibrary) {
  plan::Beam beam = static_beam(1, 0);
  beam.wedges.push_back({1, plan::parse_term<plan::WedgeType>("STANDARD"), "W30", 30.0, std::nullopt, 0.0});
  const BeamDose wedged = run(make_plan({{beam, 100.0, 1.0, 100.0}}));
  const BeamDose open = run(make_plan({{static_beam(1, 0), 100.0, 1.0, 100.0}}));
  ASSERT_FALSE(wedged.problem);
  EXPECT_TRUE(wedged.features.wedged);
  EXPECT_NEAR(wedged.computed_dose_gy / open.computed_dose_gy, 0.70, 1e-12);
}

TEST_F(Fixture, UnknownWedgeOrTrayIsUnknownAccessory) {
  plan::Beam beam = static_beam(1, 0);
  beam.wedges.push_back({1, plan::parse_term<plan::WedgeType>("STANDARD"), "W99", 30.0, std::nullopt, 0.0});
  const BeamDose unknown_wedge = run(make_plan({{beam, 100.0, 1.0, 100.0}}));
  ASSERT_TRUE(unknown_wedge.problem);
  EXPECT_EQ(unknown_wedge.problem->kind, ProblemKind::wedge_not_in_library);
  EXPECT_EQ(unknown_wedge.problem->plan_text, "W99");
  EXPECT_EQ(unknown_wedge.problem->attribute.tag, "(300A,00D4)");
  plan::Beam tray = static_beam(1, 0);
  tray.blocks.push_back(block({{300, 300}, {310, 300}, {310, 310}}, "SHIELDING", 0.05, "NO-SUCH-TRAY"));
  EXPECT_EQ(run(make_plan({{tray, 100.0, 1.0, 100.0}})).problem->kind, ProblemKind::tray_not_in_library);
  plan::Beam known = static_beam(1, 0);
  // A block far outside the field: the tray's factor, and no change to the scatter.
  known.blocks.push_back(block({{300, 300}, {310, 300}, {310, 310}}, "SHIELDING", 0.05));
  const BeamDose r = run(make_plan({{known, 100.0, 1.0, 100.0}}));
  ASSERT_FALSE(r.problem);
  EXPECT_DOUBLE_EQ(r.dose.factors.tray.value, 0.97);
}

TEST_F(Fixture, BlockWithoutAnyTransmissionIsNotComputed) {
  plan::Beam beam = static_beam(1, 0);
  beam.blocks.push_back(block({{20, 20}, {40, 20}, {40, 40}}, "SHIELDING", std::nullopt));
  library.machines.front().beams.front().block_transmission.reset();
  const BeamDose r = run(make_plan({{beam, 100.0, 1.0, 100.0}}));
  ASSERT_TRUE(r.problem);
  EXPECT_EQ(r.problem->kind, ProblemKind::block_transmission_missing);
  EXPECT_EQ(r.problem->attribute.tag, "(300A,0102)");
  // The library's block_transmission stands in when the plan gives none.
  library.machines.front().beams.front().block_transmission = 0.04;
  EXPECT_FALSE(run(make_plan({{beam, 100.0, 1.0, 100.0}})).problem);
}

TEST_F(Fixture, ShieldingBlockFromThePlanReducesScatterAndShadowsThePoint) {
  // A 10 x 10 cm field with a 5 x 10 cm shielding block over its left part (x up to -10 mm), on tray
  // TRAY-T (factor 0.97), transmission 3 %: the point on the axis keeps its primary and loses the
  // scatter of the blocked part. Hand estimate: the point's right half sees the scatter of the
  // symmetric 10 x 10 cm field, its left half that of a 2 x 10 cm field (Sterling 3.33 cm), so Sp·TMR
  // is about the mean of the two (0.942 of the open field's with the fixture's tables).
  plan::Beam open_beam = static_beam(1, 0);
  plan::Beam blocked = static_beam(1, 0);
  blocked.blocks.push_back(block({{-60, -60}, {-10, -60}, {-10, 60}, {-60, 60}}, "SHIELDING", 0.03));
  const BeamDose open = run(make_plan({{open_beam, 100.0, 1.0, 100.0}}));
  const BeamDose r = run(make_plan({{blocked, 100.0, 1.0, 100.0}}));
  ASSERT_FALSE(r.problem) << shown(r.problem);
  ASSERT_FALSE(r.segments.empty());
  EXPECT_EQ(r.segments.front().scatter_method, ScatterMethod::sector_integration);
  EXPECT_TRUE(r.point_in_field);
  EXPECT_NEAR(r.edge_distance_mm, 10.0, 1e-9);  // the block's edge, 1 cm from the point
  const auto sp_tmr = [](double side_cm) {
    return test_fixtures::model_sp(side_cm) * test_fixtures::model_tmr(10.0, side_cm);
  };
  const double halves = 0.5 * (sp_tmr(10.0 / 3.0) + sp_tmr(10.0)) / sp_tmr(10.0);
  const double ratio = r.computed_dose_gy / open.computed_dose_gy / 0.97;
  EXPECT_NEAR(ratio, halves, 0.01);
  EXPECT_LT(ratio, 1.0);
  // Under the block: outside the open field, its dose a few percent of the open field's.
  const BeamDose shadow = run(make_plan({{blocked, 100.0, 1.0, 100.0}}, {-30, 0, 0}));
  ASSERT_FALSE(shadow.problem) << shown(shadow.problem);
  EXPECT_FALSE(shadow.point_in_field);
  EXPECT_LT(shadow.computed_dose_gy / open.computed_dose_gy / 0.97, 0.2);
  EXPECT_GT(shadow.computed_dose_gy / open.computed_dose_gy / 0.97, 0.03);
  // An APERTURE block of the same open part gives the same dose.
  plan::Beam cutout = static_beam(1, 0);
  cutout.blocks.push_back(block({{-10, -60}, {60, -60}, {60, 60}, {-10, 60}}, "APERTURE", 0.03));
  const BeamDose same = run(make_plan({{cutout, 100.0, 1.0, 100.0}}));
  ASSERT_FALSE(same.problem) << shown(same.problem);
  EXPECT_NEAR(same.computed_dose_gy, r.computed_dose_gy, 1e-9 * r.computed_dose_gy);
}

TEST_F(Fixture, CompensatorIsUnsupportedAccessory) {
  plan::Beam beam = static_beam(1, 0);
  beam.compensators.push_back({1, "C1", ""});
  EXPECT_EQ(run(make_plan({{beam, 100.0, 1.0, 100.0}})).problem->kind, ProblemKind::compensator_present);
}

TEST_F(Fixture, UnknownMachineEnergyAndRadiation) {
  plan::Beam machine = static_beam(1, 0);
  machine.machine_name = "OTHER-LINAC";
  EXPECT_EQ(run(make_plan({{machine, 100.0, 1.0, 100.0}})).problem->kind,
            ProblemKind::machine_not_in_library);
  plan::Beam energy = static_beam(1, 0);
  for (plan::ControlPoint& cp : energy.control_points) cp.nominal_energy_mv = 18.0;
  const BeamDose no_energy = run(make_plan({{energy, 100.0, 1.0, 100.0}}));
  EXPECT_EQ(no_energy.problem->kind, ProblemKind::energy_not_in_library);
  EXPECT_EQ(no_energy.problem->energy_mv, 18.0);
  EXPECT_EQ(no_energy.problem->machine, test_fixtures::machine_name);
  plan::Beam electron = static_beam(1, 0);
  electron.radiation_type = plan::parse_term<plan::RadiationType>("ELECTRON");
  const BeamDose electrons = run(make_plan({{electron, 100.0, 1.0, 100.0}}));
  // The test machine has no electron beam data (electron beams are calculated: engine/electron_dose.hpp).
  EXPECT_EQ(electrons.problem->kind, ProblemKind::radiation_not_in_library);
  EXPECT_EQ(electrons.problem->radiation, "ELECTRON");
  plan::Beam proton = static_beam(1, 0);
  proton.radiation_type = plan::parse_term<plan::RadiationType>("PROTON");
  const BeamDose protons = run(make_plan({{proton, 100.0, 1.0, 100.0}}));
  EXPECT_EQ(protons.problem->kind, ProblemKind::radiation_not_photon);
  EXPECT_EQ(protons.problem->plan_text, "PROTON");
  plan::Beam minutes = static_beam(1, 0);
  minutes.primary_dosimeter_unit = plan::parse_term<plan::DosimeterUnit>("MINUTE");
  EXPECT_EQ(run(make_plan({{minutes, 100.0, 1.0, 100.0}})).problem->kind, ProblemKind::dosimeter_unit_not_mu);
}

TEST_F(Fixture, UnsupportedPatientPosition) {
  const BeamDose r =
      run(make_plan({{static_beam(1, 0), 100.0, 1.0, 100.0}}, {0, 0, 0}, "ISOCENTRIC", "HFDL"));
  ASSERT_TRUE(r.problem);
  EXPECT_EQ(r.problem->kind, ProblemKind::patient_position_unsupported);
  EXPECT_EQ(r.problem->attribute.tag, "(0018,5100)");
  EXPECT_EQ(r.problem->plan_text, "HFDL");  // the plan's own text, for the message
}

TEST_F(Fixture, SadMismatch) {
  plan::Beam beam = static_beam(1, 0);
  beam.sad_mm = 800.0;
  const BeamDose r = run(make_plan({{beam, 100.0, 1.0, 100.0}}));
  ASSERT_TRUE(r.problem);
  EXPECT_EQ(r.problem->kind, ProblemKind::sad_mismatch);
  EXPECT_EQ(r.problem->plan_value, 800.0);
  EXPECT_EQ(r.problem->library_value, 1000.0);
}

TEST_F(Fixture, MissingGantryAngle) {
  plan::Beam beam = static_beam(1, 0);
  beam.control_points[0].gantry_deg.reset();
  const BeamDose r = run(make_plan({{beam, 100.0, 1.0, 100.0}}));
  ASSERT_TRUE(r.problem);
  EXPECT_EQ(r.problem->kind, ProblemKind::missing_plan_value);
  EXPECT_EQ(r.problem->attribute.tag, "(300A,011E)");
  EXPECT_EQ(r.problem->scope, PlanScope::control_point);
  EXPECT_EQ(r.problem->control_point, 0);
}

TEST_F(Fixture, MlcyWithoutLeafBoundariesIsMissingPlanData) {
  plan::Beam beam = static_beam(1, 0);
  beam.control_points[0].devices.push_back({plan::term(plan::DeviceType::mlcy), {0.0, 0.0}});
  const BeamDose r = run(make_plan({{beam, 100.0, 1.0, 100.0}}));
  ASSERT_TRUE(r.problem);
  EXPECT_EQ(r.problem->kind, ProblemKind::aperture_unusable);
  ASSERT_TRUE(r.problem->cause);
  EXPECT_EQ(r.problem->cause->kind, ErrorKind::missing_attribute);  // the geometry module's error, kept
  EXPECT_EQ(r.problem->cause->tag, "(300A,00BE)");
}

TEST_F(Fixture, MlcyFieldAsWideAsTheJawsGivesTheJawFieldsDose) {
  // Ten 10 mm MLCY leaf pairs across x, every pair open beyond the 10 x 10 cm jaws: the sector
  // integration of the opening reproduces the tables' Sp·TMR of the 10 x 10 cm field (within 0.5 %).
  plan::Beam beam = static_beam(1, 0);
  plan::BeamLimitingDevice mlc;
  mlc.type = plan::term(plan::DeviceType::mlcy);
  mlc.pair_count = 10;
  for (int i = 0; i <= 10; ++i) mlc.leaf_boundaries_mm.push_back(-50.0 + 10.0 * i);
  beam.beam_limiting_devices.push_back(mlc);
  std::vector<double> positions(10, -60.0);
  positions.insert(positions.end(), 10, 60.0);
  beam.control_points[0].devices.push_back({plan::term(plan::DeviceType::mlcy), positions});
  const BeamDose open = run(make_plan({{static_beam(1, 0), 100.0, 1.0, 100.0}}));
  const BeamDose r = run(make_plan({{beam, 100.0, 1.0, 100.0}}));
  ASSERT_FALSE(r.problem) << shown(r.problem);
  EXPECT_EQ(r.segments.front().scatter_method, ScatterMethod::sector_integration);
  EXPECT_EQ(r.aperture.leaf_travel(), geometry::LeafTravel::y);
  EXPECT_NEAR(r.computed_dose_gy / open.computed_dose_gy, 1.0, 0.005);
}

TEST_F(Fixture, PointAboveTheSurfaceIsUnsupportedGeometry) {
  plan::Beam beam = static_beam(1, 0);
  test_fixtures::set_ssd(beam, 1050.0);  // surface below the isocentre: the point is in air
  const BeamDose r = run(make_plan({{beam, 100.0, 1.0, std::nullopt}}));
  ASSERT_TRUE(r.problem);
  EXPECT_EQ(r.problem->kind, ProblemKind::point_not_below_surface);
  EXPECT_NEAR(r.problem->plan_value.value_or(0.0), -50.0, 1e-9);  // SPD 1000 - SSD 1050 mm
}

TEST_F(Fixture, EquivalentDepthOnlyWhenAskedAndPresent) {
  plan::Plan plan = make_plan({{static_beam(1, 0), 100.0, 1.0, 100.0}});
  options.depth = DepthChoice::equivalent;
  EXPECT_EQ(run(plan).problem->kind, ProblemKind::equivalent_depth_missing);
  plan.beams[0].dose_references[0].distances.equivalent_depth_mm = 120.0;
  const BeamDose r = run(plan);
  ASSERT_FALSE(r.problem);
  EXPECT_DOUBLE_EQ(r.depth.depth_mm, 120.0);
  EXPECT_EQ(r.depth.kind, DepthChoice::equivalent);
  options.depth = DepthChoice::planned;
  // Issue 12 item 5: the plan's equivalent depth (120 mm) differs from its depth (100 mm) by 20 %,
  // beyond the switch: it is used, and the geometric depth kept for the homogeneous dose beside it.
  const BeamDose switched = run(plan);
  EXPECT_DOUBLE_EQ(switched.depth.depth_mm, 120.0);
  EXPECT_TRUE(switched.depth.equivalent_by_policy);
  EXPECT_DOUBLE_EQ(switched.depth.geometric_depth_mm.value_or(0.0), 100.0);
  ASSERT_TRUE(switched.homogeneous_dose_gy);
  EXPECT_GT(*switched.homogeneous_dose_gy, switched.computed_dose_gy);  // shallower in water: more dose
  options.equivalent_depth_switch_percent = 25.0;
  const BeamDose kept = run(plan);
  EXPECT_DOUBLE_EQ(kept.depth.depth_mm, 100.0);
  EXPECT_FALSE(kept.depth.equivalent_by_policy);
  EXPECT_FALSE(kept.homogeneous_dose_gy);
}

TEST_F(Fixture, MethodFollowsSetupTechniqueUnlessChosen) {
  plan::Beam beam = static_beam(1, 0);
  test_fixtures::set_ssd(beam, 1000.0);
  plan::Plan plan = make_plan({{beam, 100.0, 1.0, 50.0}}, {0, 50, 0}, "FIXED_SSD");
  const BeamDose pdd = run(plan);
  ASSERT_FALSE(pdd.problem) << shown(pdd.problem);
  EXPECT_EQ(pdd.method, Method::pdd);
  EXPECT_EQ(pdd.method_basis, MethodBasis::setup_technique);
  EXPECT_EQ(pdd.setup_technique, plan::SetupTechnique::fixed_ssd);
  options.method = MethodChoice::tmr;
  const BeamDose tmr = run(plan);
  EXPECT_EQ(tmr.method, Method::tmr);
  EXPECT_EQ(tmr.method_basis, MethodBasis::user_choice);
  // Same point, consistent data: the formalisms agree within 1 % (DEVELOPERS.md, "Physics").
  EXPECT_NEAR(pdd.computed_dose_gy / tmr.computed_dose_gy, 1.0, 0.01);
}

// Step and shoot: half the meterset through the open 10x10, half through a segment whose leaves
// cover the point. Hand calculation: 50 MU open + 50 MU x transmission 0.015 with the jaw field, at
// depth 10 cm (a table row) and SPD 100 cm: 50 · TMR(10, 10) · (101.5/100)² · (1 + 0.015).
TEST_F(Fixture, StepAndShootSumsSegmentsWithTransmission) {
  plan::Beam beam = static_beam(1, 0);
  plan::BeamLimitingDevice mlc{plan::term(plan::DeviceType::mlcx), std::nullopt, 10, {}};
  for (int i = 0; i <= 10; ++i) mlc.leaf_boundaries_mm.push_back(-100.0 + 20.0 * i);
  beam.beam_limiting_devices.push_back(mlc);
  std::vector<double> open(20), closed(20);
  for (int i = 0; i < 10; ++i) {
    open[i] = -100.0;
    open[10 + i] = 100.0;
    closed[i] = 20.0;  // every pair's opening lies to the right of the point at x = 0
    closed[10 + i] = 60.0;
  }
  plan::ControlPoint c0 = beam.control_points[0];
  c0.devices.push_back({plan::term(plan::DeviceType::mlcx), open});
  plan::ControlPoint c1 = c0;
  c1.index = 1;
  c1.cumulative_meterset_weight = 0.5;
  plan::ControlPoint c2 = c1;
  c2.index = 2;
  c2.devices.back().positions_mm = closed;
  plan::ControlPoint c3 = c2;
  c3.index = 3;
  c3.cumulative_meterset_weight = 1.0;
  c3.dose_reference_coefficients.push_back({1, 1.0});
  beam.control_points = {c0, c1, c2, c3};
  const BeamDose r = run(make_plan({{beam, 100.0, 1.0, 100.0}}));
  ASSERT_FALSE(r.problem) << shown(r.problem);
  EXPECT_TRUE(r.features.modulated);
  ASSERT_EQ(r.segments.size(), 2u);
  EXPECT_TRUE(r.segments[0].point_in_opening);
  EXPECT_FALSE(r.segments[1].point_in_opening);
  EXPECT_TRUE(r.segments[1].point_in_jaws);
  const double open_dose_cgy = 50.0 * tmr_10x10(10.0) * inverse_square_10x10;
  // The equivalent-square column is the jaw field's dose times the transmission (hand); sector
  // integration adds the scatter that reaches the point from the part of the field still open, so
  // the computed dose is higher (hand estimate: a few percent of the open dose, not more than 10 %).
  EXPECT_NEAR(r.equivalent_square_dose_gy * 100.0, open_dose_cgy * (1.0 + 0.015), 1e-9);
  EXPECT_GT(r.computed_dose_gy * 100.0, open_dose_cgy * (1.0 + 0.015));
  EXPECT_LT(r.computed_dose_gy * 100.0, open_dose_cgy * 1.10);
  EXPECT_EQ(r.segments[1].scatter_method, ScatterMethod::sector_integration);
  EXPECT_DOUBLE_EQ(r.segments[1].inputs.transmission, 0.015);
  EXPECT_FALSE(r.approximations.empty());
  // The drawing's outline is the area open in either part: the whole 10 x 10 cm (hand).
  EXPECT_TRUE(r.outline.known);
  EXPECT_DOUBLE_EQ(r.outline.jaws.x1_mm, -50.0);
  EXPECT_DOUBLE_EQ(r.outline.jaws.x2_mm, 50.0);
}

// A 180 degree arc (90 -> 270 clockwise) around a point at the isocentre in a cylinder of radius
// 100 mm centred on it: every gantry step sees depth 100 mm and SPD 1000 mm, so the sum equals the
// static dose with the full meterset; 180 / 5 = 36 steps. Hand calculation: 200 MU · TMR(10, 10) ·
// (101.5/100)² (depth 10 cm is a table row).
TEST_F(Fixture, ArcIsSplitIntoGantrySteps) {
  plan::Beam beam = static_beam(1, 90);
  beam.beam_type = plan::parse_term<plan::BeamType>("DYNAMIC");
  test_fixtures::set_ssd(beam, 900.0);
  beam.control_points[0].gantry_rotation = plan::parse_term<plan::RotationDirection>("CW");
  beam.control_points[1].gantry_deg = 270.0;
  const BeamDose r = run(make_plan({{beam, 200.0, 1.0, std::nullopt}}));
  ASSERT_FALSE(r.problem) << shown(r.problem);
  EXPECT_TRUE(r.features.modulated);
  ASSERT_EQ(r.segments.size(), 36u);
  EXPECT_NEAR(r.segments.front().angles.gantry_deg, 92.5, 1e-9);
  EXPECT_NEAR(r.segments[18].angles.gantry_deg, 182.5, 1e-9);  // through 180, clockwise
  EXPECT_NEAR(r.computed_dose_gy * 100.0, 200.0 * tmr_10x10(10.0) * inverse_square_10x10, 1e-9);
}

TEST(DosePoint, SelectionOrder) {
  plan::Plan plan = make_plan({{static_beam(1, 0), 100.0, 1.0, std::nullopt}}, {1, 2, 3});
  plan::ReferencedBeam& rb = plan.fraction_groups[0].beams[0];
  const plan::Beam& beam = plan.beams[0];
  // The reference with final coefficient 1.
  auto p = select_dose_point(plan, beam, rb);
  ASSERT_TRUE(p);
  EXPECT_EQ(p->source, DosePointSource::full_coefficient_reference);
  EXPECT_EQ(p->dose_reference_number, 1);
  // The retired specification point wins.
  rb.dose_specification_point_mm = plan::PointMm{4, 5, 6};
  p = select_dose_point(plan, beam, rb);
  EXPECT_EQ(p->source, DosePointSource::beam_dose_specification_point);
  EXPECT_EQ(p->point_mm[2], 6.0);
  rb.dose_specification_point_mm.reset();
  // No coefficient 1: the single reference with coordinates.
  plan.beams[0].control_points.back().dose_reference_coefficients.clear();
  p = select_dose_point(plan, plan.beams[0], rb);
  EXPECT_EQ(p->source, DosePointSource::single_dose_reference);
  // Two references with coordinates and no coefficient: no dose point.
  plan.dose_references.push_back(plan.dose_references[0]);
  plan.dose_references.back().number = 2;
  EXPECT_FALSE(select_dose_point(plan, plan.beams[0], rb));
}

// The three places DICOM has kept Beam Dose Point Depth, and the dose point SSD.
TEST_F(Fixture, DepthFromEachLayout) {
  plan::Plan plan = make_plan({{static_beam(1, 0), 100.0, 1.0, std::nullopt}});
  plan::ReferencedBeam& rb = plan.fraction_groups[0].beams[0];
  rb.distances_in_referenced_beam.depth_mm = 81.0;
  EXPECT_EQ(run(plan).depth.source, DepthSource::referenced_beam_item);
  EXPECT_DOUBLE_EQ(run(plan).depth.depth_mm, 81.0);
  rb.verification_dose_reference_number = 1;
  rb.distances_in_verification_sequence.depth_mm = 82.0;
  EXPECT_EQ(run(plan).depth.source, DepthSource::fraction_verification_item);
  EXPECT_DOUBLE_EQ(run(plan).depth.depth_mm, 82.0);
  plan.beams[0].dose_references.push_back({1, {}});
  plan.beams[0].dose_references[0].distances.depth_mm = 83.0;
  EXPECT_EQ(run(plan).depth.source, DepthSource::beam_dose_reference_item);
  EXPECT_DOUBLE_EQ(run(plan).depth.depth_mm, 83.0);
  // Only an SSD along the ray: depth = ray length 1000 - 920.
  plan.beams[0].dose_references[0].distances = {};
  plan.beams[0].dose_references[0].distances.ssd_mm = 920.0;
  const BeamDose r = run(plan);
  EXPECT_EQ(r.depth.source, DepthSource::derived_from_dose_point_ssd);
  EXPECT_NEAR(r.depth.depth_mm, 80.0, 1e-9);
}

TEST_F(Fixture, ProvenanceNamesTheTables) {
  const BeamDose r = run(make_plan({{static_beam(1, 0, 75.0, 50.0), 100.0, 1.0, 100.0}}));
  ASSERT_FALSE(r.problem);
  ASSERT_TRUE(r.dose.factors.tmr.lookup);
  EXPECT_EQ(r.dose.factors.tmr.lookup->table_file, "test/tmr.csv");
  ASSERT_EQ(r.dose.factors.tmr.lookup->axes.size(), 2u);
  EXPECT_NEAR(r.dose.factors.tmr.lookup->axes[1].query, 2.0 * 15.0 * 10.0 / 25.0, 1e-12);  // 15x10 -> 12 cm
  EXPECT_EQ(r.first_extrapolated(), nullptr);
}

}  // namespace
}  // namespace countersign::engine

namespace countersign::engine {
namespace {

// A modulated beam needs the MLC transmission of the library; without it the beam is not computed.
TEST(ModulatedBeam, WithoutMlcTransmissionIsMissingBeamData) {
  beamdata::Library library = test_fixtures::test_library();
  library.machines.front().beams.front().mlc_transmission.reset();
  plan::Beam beam = test_fixtures::static_beam(1, 0);
  plan::BeamLimitingDevice mlc{plan::term(plan::DeviceType::mlcx), std::nullopt, 2, {-50.0, 0.0, 50.0}};
  beam.beam_limiting_devices.push_back(mlc);
  plan::ControlPoint c0 = beam.control_points[0];
  c0.devices.push_back({plan::term(plan::DeviceType::mlcx), {-50, -50, 50, 50}});
  plan::ControlPoint c1 = c0;
  c1.index = 1;
  c1.cumulative_meterset_weight = 0.5;
  plan::ControlPoint c2 = c1;
  c2.index = 2;
  c2.devices.back().positions_mm = {-50, 0, 0, 50};
  plan::ControlPoint c3 = c2;
  c3.index = 3;
  c3.cumulative_meterset_weight = 1.0;
  c3.dose_reference_coefficients.push_back({1, 1.0});
  beam.control_points = {c0, c1, c2, c3};
  const plan::Plan plan = test_fixtures::make_plan({{beam, 100.0, 1.0, 100.0}});
  const auto point = select_dose_point(plan, plan.beams[0], plan.fraction_groups[0].beams[0]);
  const BeamDose r =
      compute_beam_dose(plan, plan.beams[0], plan.fraction_groups[0].beams[0], *point, library, {});
  ASSERT_TRUE(r.problem);
  EXPECT_EQ(r.problem->kind, ProblemKind::mlc_transmission_missing);
  EXPECT_EQ(r.problem->library_beam, "6X");
  EXPECT_EQ(r.problem->machine, test_fixtures::machine_name);
}

}  // namespace
}  // namespace countersign::engine

namespace countersign::engine {
namespace {

// A 20 x 5 cm field and a point 50 mm to the patient's left (HFS, gantry 0): inside with the
// collimator at 0 (along the long side, 25 mm from the Y edges), outside with it at 90 degrees
// (the point then lies 50 mm along collimator -Y, beyond the 25 mm jaw). Hand calculation.
TEST(CollimatorRotation, MovesThePointRelativeToTheJaws) {
  const beamdata::Library library = test_fixtures::test_library();
  for (const double collimator_deg : {0.0, 90.0}) {
    plan::Beam beam = test_fixtures::static_beam(1, 0, 100.0, 25.0);
    for (plan::ControlPoint& cp : beam.control_points) cp.collimator_deg = collimator_deg;
    const plan::Plan plan = test_fixtures::make_plan({{beam, 100.0, 1.0, 100.0}}, {50, 0, 0});
    const plan::ReferencedBeam& rb = plan.fraction_groups[0].beams[0];
    const auto point = select_dose_point(plan, plan.beams[0], rb);
    const BeamDose r = compute_beam_dose(plan, plan.beams[0], rb, *point, library, {});
    ASSERT_FALSE(r.problem);
    if (collimator_deg == 0.0) {
      EXPECT_TRUE(r.point_in_field);
      EXPECT_NEAR(r.point.iso_plane_x_mm, 50.0, 1e-9);
      EXPECT_NEAR(r.edge_distance_mm, 25.0, 1e-9);
    } else {
      EXPECT_FALSE(r.point_in_field);
      EXPECT_NEAR(r.point.iso_plane_y_mm, -50.0, 1e-9);
    }
    EXPECT_NEAR(r.point.off_axis_mm, 50.0, 1e-9);
  }
}

}  // namespace
}  // namespace countersign::engine
