// Electron beams through the check (issue 19): the TG-71 electron formula on the invented test
// machine of tests/beamdata/fixtures/electron/TEST-LINAC-E (9 MeV, applicators A6, A10, A15), each
// reason an electron beam can be "not checked" for, and a deliberate MU error flagged. Expected doses
// are hand calculations from that fixture's tables (written beside each value); the formula is AAPM
// TG-71's electron form (Gibbons et al. 2014, from memory).

#include <countersign/beamdata/library.hpp>
#include <countersign/check/check_plan.hpp>
#include <countersign/patient/patient_model.hpp>

#include "engine/fixtures.hpp"
#include "patient/synthetic_study.hpp"
#include "support/paths.hpp"

#include <gtest/gtest.h>

#include <cmath>

namespace countersign::check {
namespace {

using test_fixtures::BeamSpec;
using test_fixtures::make_plan;

// ((SSD_eff + d_m) / (SSD_eff + g + d_m))^2
double inverse_square(double effective_ssd_cm, double gap_cm, double dmax_cm) {
  return std::pow((effective_ssd_cm + dmax_cm) / (effective_ssd_cm + gap_cm + dmax_cm), 2.0);
}

// An electron beam of TEST-LINAC-E, gantry 0, HFS: the point at the origin, `depth_mm` below the
// skin, the skin at SSD `ssd_mm` (the isocentre placed so that SSD + depth = SPD).
plan::Beam electron_beam(int number, const std::string& applicator, double ssd_mm, double depth_mm) {
  plan::Beam beam = test_fixtures::static_beam(number, 0.0);
  beam.machine_name = "TEST-LINAC-E";
  beam.radiation_type = plan::term(plan::RadiationType::electron);
  beam.applicators.push_back({applicator, plan::term(plan::ApplicatorType::electron_square), ""});
  const double iso_y_mm = -(ssd_mm + depth_mm - 1000.0);  // source on the -y side (anterior)
  for (plan::ControlPoint& cp : beam.control_points) {
    cp.nominal_energy_mv = 9.0;
    cp.isocenter_mm = plan::PointMm{0.0, iso_y_mm, 0.0};
    cp.ssd_mm = ssd_mm;
  }
  return beam;
}

void add_cutout(plan::Beam& beam, double x_mm, double y_mm) {
  plan::Block cutout;
  cutout.number = 1;
  cutout.type = plan::term(plan::BlockType::aperture);
  cutout.outline_mm = {
      {-x_mm / 2, -y_mm / 2}, {x_mm / 2, -y_mm / 2}, {x_mm / 2, y_mm / 2}, {-x_mm / 2, y_mm / 2}};
  beam.blocks.push_back(cutout);
}

struct ElectronCheck : ::testing::Test {
  beamdata::Library library = [] {
    auto loaded =
        beamdata::load_library(test::source_dir() / "tests/beamdata/fixtures/electron/TEST-LINAC-E");
    EXPECT_TRUE(loaded.has_value()) << (loaded ? "" : loaded.error().message());
    beamdata::Library l = std::move(loaded).value();
    l.machines.at(0).boli.push_back({"BOLUS-5MM", 0.5});  // invented
    return l;
  }();
  CheckOptions options;

  BeamCheck run(plan::Beam beam, double mu, double planned_gy, double depth_mm) {
    BeamSpec spec{std::move(beam), mu, planned_gy, depth_mm};
    const PlanCheck check = check_plan(make_plan({spec}, {0, 0, 0}, "FIXED_SSD"), library, options);
    return check.beams.at(0);
  }
};

// Open applicator A10 at the calibration conditions: 1.000 cGy/MU (output 1.000, PDD(2 cm) 100 %,
// applicator factor 1.000, no air gap), 100 MU -> 1.000 Gy.
TEST_F(ElectronCheck, OpenApplicatorAtCalibrationConditions) {
  const BeamCheck b = run(electron_beam(1, "A10", 1000.0, 20.0), 100.0, 1.0, 20.0);
  EXPECT_EQ(b.status, Status::within_tolerance) << b.reason.sentence;
  ASSERT_TRUE(b.computed_dose_gy.has_value());
  EXPECT_NEAR(*b.computed_dose_gy, 1.000, 1e-9);
  EXPECT_EQ(b.category, FieldCategory::simple);
  ASSERT_TRUE(b.calculation && b.calculation->electron);
  EXPECT_EQ(b.calculation->electron->cutout.method, engine::CutoutMethod::open_applicator);
  EXPECT_EQ(b.words.method_reason.rfind("electron form", 0), 0u) << b.words.method_reason;
}

// A 6 x 6 cm cutout in A10 at SSD 105 cm: CF(6) 0.975 x (98.5/103.5)^2 (effective SSD 96.5 cm,
// d_m 2 cm, gap 5 cm) = 0.883073 cGy/MU; 100 MU -> 0.883073 Gy.
TEST_F(ElectronCheck, CutoutAtExtendedSsd) {
  plan::Beam beam = electron_beam(1, "A10", 1050.0, 20.0);
  add_cutout(beam, 60.0, 60.0);
  const double expected_gy = 0.975 * inverse_square(96.5, 5.0, 2.0);
  EXPECT_NEAR(expected_gy, 0.883073, 1e-6);
  const BeamCheck b = run(beam, 100.0, expected_gy, 20.0);
  EXPECT_EQ(b.status, Status::within_tolerance) << b.reason.sentence;
  EXPECT_NEAR(*b.computed_dose_gy, expected_gy, 1e-9);
  EXPECT_EQ(b.category, FieldCategory::complex);
  EXPECT_NEAR(b.calculation->electron->air_gap_cm, 5.0, 1e-9);
}

// An elongated 4 x 8 cm cutout: the square-root rule, CF = sqrt(0.942 x 0.991) = 0.966189 (PDD 100 %
// at dmax in both columns); named in the result.
TEST_F(ElectronCheck, ElongatedCutoutUsesTheSquareRootRule) {
  plan::Beam beam = electron_beam(1, "A10", 1000.0, 20.0);
  add_cutout(beam, 40.0, 80.0);
  const BeamCheck b = run(beam, 100.0, 0.966189, 20.0);
  EXPECT_EQ(b.status, Status::within_tolerance) << b.reason.sentence;
  EXPECT_NEAR(*b.computed_dose_gy, std::sqrt(0.942 * 0.991), 1e-9);
  EXPECT_EQ(b.calculation->electron->cutout.method, engine::CutoutMethod::square_root_rule);
  bool named = false;
  for (const std::string& a : b.words.approximations)
    named = named || a.find("square-root rule") != std::string::npos;
  EXPECT_TRUE(named);
}

// A deliberate MU error: 110 MU where 100 MU give the planned 1.000 Gy -> +10 %, flagged.
TEST_F(ElectronCheck, MonitorUnitErrorIsFlagged) {
  const BeamCheck b = run(electron_beam(1, "A10", 1000.0, 20.0), 110.0, 1.0, 20.0);
  EXPECT_EQ(b.status, Status::outside_tolerance);
  EXPECT_EQ(b.reason.reason, Reason::deviation_exceeds_tolerance);
  EXPECT_NEAR(*b.deviation_percent, 10.0, 1e-6);
}

// A bolus of the library (0.5 cm, invented): depth 1.5 + 0.5 = 2.0 cm, the entrance surface at
// 99.5 cm: gap -0.5 cm, (98.5/98.0)^2 = 1.010230 cGy/MU.
TEST_F(ElectronCheck, KnownBolusIsAddedToTheDepth) {
  plan::Beam beam = electron_beam(1, "A10", 1000.0, 15.0);
  beam.boli.push_back({std::nullopt, "BOLUS-5MM", ""});
  const double expected_gy = inverse_square(96.5, -0.5, 2.0);
  const BeamCheck b = run(beam, 100.0, expected_gy, 15.0);
  EXPECT_EQ(b.status, Status::within_tolerance) << b.reason.sentence;
  EXPECT_NEAR(*b.computed_dose_gy, expected_gy, 1e-9);
  EXPECT_NEAR(b.calculation->electron->depth_cm, 2.0, 1e-9);
}

TEST_F(ElectronCheck, BolusOfUnknownThicknessIsNotChecked) {
  plan::Beam beam = electron_beam(1, "A10", 1000.0, 15.0);
  beam.boli.push_back({std::nullopt, "SHEET-X", ""});
  const BeamCheck b = run(beam, 100.0, 1.0, 15.0);
  EXPECT_EQ(b.status, Status::not_checked);
  EXPECT_EQ(b.reason.reason, Reason::bolus_thickness_unknown);
  EXPECT_NE(b.reason.sentence.find("SHEET-X"), std::string::npos);
}

// R80 of the open A10 column: 3 + 0.5 (87.54 - 80)/(87.54 - 58.98) = 3.132 cm; a point at 3.5 cm.
TEST_F(ElectronCheck, PointBeyondR80IsNotChecked) {
  const BeamCheck b = run(electron_beam(1, "A10", 1000.0, 35.0), 100.0, 0.6, 35.0);
  EXPECT_EQ(b.status, Status::not_checked);
  EXPECT_EQ(b.reason.reason, Reason::point_beyond_eighty_percent_depth);
  EXPECT_NEAR(*b.calculation->electron->r80_cm, 3.132003, 1e-5);
}

// A 3 x 3 cm cutout in A10, whose tables start at 4 cm.
TEST_F(ElectronCheck, CutoutSmallerThanTheTablesIsNotChecked) {
  plan::Beam beam = electron_beam(1, "A10", 1000.0, 20.0);
  add_cutout(beam, 30.0, 30.0);
  const BeamCheck b = run(beam, 100.0, 0.9, 20.0);
  EXPECT_EQ(b.status, Status::not_checked);
  EXPECT_EQ(b.reason.reason, Reason::cutout_below_table);
}

TEST_F(ElectronCheck, SsdOutsideTheBeamsRangeIsNotChecked) {
  library.machines.at(0).electron_beams.at(0).ssd_range_cm = beamdata::SsdRange{95.0, 110.0};
  const BeamCheck b = run(electron_beam(1, "A10", 1150.0, 20.0), 100.0, 0.8, 20.0);
  EXPECT_EQ(b.status, Status::not_checked);
  EXPECT_EQ(b.reason.reason, Reason::ssd_out_of_range);
}

TEST_F(ElectronCheck, FarSsdWithoutRangeIsNotChecked) {
  const BeamCheck b = run(electron_beam(1, "A10", 1250.0, 20.0), 100.0, 0.7, 20.0);
  EXPECT_EQ(b.status, Status::not_checked);
  EXPECT_EQ(b.reason.reason, Reason::extended_distance);
}

TEST_F(ElectronCheck, ApplicatorNotInTheLibraryIsNotChecked) {
  const BeamCheck b = run(electron_beam(1, "A25", 1000.0, 20.0), 100.0, 1.0, 20.0);
  EXPECT_EQ(b.status, Status::not_checked);
  EXPECT_EQ(b.reason.reason, Reason::unknown_accessory);
  EXPECT_NE(b.reason.sentence.find("Applicator ID (300A,0108) \"A25\""), std::string::npos)
      << b.reason.sentence;
}

TEST_F(ElectronCheck, BeamWithoutApplicatorIsNotChecked) {
  plan::Beam beam = electron_beam(1, "A10", 1000.0, 20.0);
  beam.applicators.clear();
  const BeamCheck b = run(beam, 100.0, 1.0, 20.0);
  EXPECT_EQ(b.status, Status::not_checked);
  EXPECT_EQ(b.reason.reason, Reason::missing_plan_data);
  EXPECT_NE(b.reason.sentence.find("(300A,0107)"), std::string::npos);
}

TEST_F(ElectronCheck, PointOffTheAxisIsNotChecked) {
  plan::Beam beam = electron_beam(1, "A10", 1000.0, 20.0);
  for (plan::ControlPoint& cp : beam.control_points) (*cp.isocenter_mm)[0] = 15.0;
  const BeamCheck b = run(beam, 100.0, 1.0, 20.0);
  EXPECT_EQ(b.status, Status::not_checked);
  EXPECT_EQ(b.reason.reason, Reason::unsupported_geometry);
}

TEST_F(ElectronCheck, ShieldingBlockInAnElectronBeamIsNotChecked) {
  plan::Beam beam = electron_beam(1, "A10", 1000.0, 20.0);
  add_cutout(beam, 60.0, 60.0);
  beam.blocks.front().type = plan::term(plan::BlockType::shielding);
  const BeamCheck b = run(beam, 100.0, 1.0, 20.0);
  EXPECT_EQ(b.status, Status::not_checked);
  EXPECT_EQ(b.reason.reason, Reason::unsupported_accessory);
}

TEST_F(ElectronCheck, OtherRadiationIsStillUnsupported) {
  plan::Beam beam = electron_beam(1, "A10", 1000.0, 20.0);
  beam.radiation_type = plan::term(plan::RadiationType::proton);
  const BeamCheck b = run(beam, 100.0, 1.0, 20.0);
  EXPECT_EQ(b.reason.reason, Reason::unsupported_radiation);
}

// With a CT: a water body whose anterior surface is tilted by `tilt_deg` about the z axis through
// (0, -20) mm; the beam enters it there (SSD 1000 mm, point 20 mm deep). The obliquity measured from
// the rays' entry points must be the tilt (geometry, hand calculation; voxel accuracy 2 mm over
// 20 mm, so within 4 degrees).
struct ObliqueSurface {
  study::Study study;
  patient::PatientModel model;
  explicit ObliqueSurface(double tilt_deg)
      : study(make(tilt_deg)),
        model(study, patient::piecewise_linear_density({{-1000.0, 0.0}, {0.0, 1.0}})) {}
  static study::Study make(double tilt_deg) {
    const double t = std::tan(tilt_deg * 3.14159265358979323846 / 180.0);
    const auto grid = test::grid_of({120, 90, 30}, {-119.0, -79.0, -58.0}, {2.0, 2.0, 4.0});
    const study::Polygon body{
        {-110.0, -20.0 - 110.0 * t}, {110.0, -20.0 + 110.0 * t}, {110.0, 95.0}, {-110.0, 95.0}};
    return test::synthetic_study(grid, [](double, double, double) { return 0; }, {body});
  }
};

TEST_F(ElectronCheck, ObliqueIncidenceBeyondThePolicyAngleIsNotChecked) {
  const ObliqueSurface tilted(30.0);
  options.engine.patient = &tilted.model;
  const BeamCheck b = run(electron_beam(1, "A10", 1000.0, 20.0), 100.0, 1.0, 20.0);
  ASSERT_TRUE(b.calculation && b.calculation->electron) << b.reason.sentence;
  ASSERT_TRUE(b.calculation->electron->obliquity_deg.has_value());
  EXPECT_NEAR(*b.calculation->electron->obliquity_deg, 30.0, 4.0);
  EXPECT_EQ(b.status, Status::not_checked);
  EXPECT_EQ(b.reason.reason, Reason::oblique_incidence) << b.reason.sentence;

  const ObliqueSurface flat(0.0);
  options.engine.patient = &flat.model;
  const BeamCheck level = run(electron_beam(1, "A10", 1000.0, 20.0), 100.0, 1.0, 20.0);
  ASSERT_TRUE(level.calculation && level.calculation->electron) << level.reason.sentence;
  EXPECT_NEAR(level.calculation->electron->obliquity_deg.value_or(90.0), 0.0, 4.0);
  EXPECT_NE(level.reason.reason, Reason::oblique_incidence);
}

}  // namespace
}  // namespace countersign::check
