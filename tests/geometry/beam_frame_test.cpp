// IEC 61217 geometry. The expectations follow from the IEC 61217 definitions of the fixed, gantry,
// beam limiting device and table-top systems and the DICOM patient system (x left, y posterior,
// z head): common practice, no further source. The sign of the patient support (couch) angle is
// counter-clockwise seen from above (from memory).

#include <countersign/geometry/beam_frame.hpp>

#include <gtest/gtest.h>
#include <Eigen/LU>

namespace countersign::geometry {
namespace {

constexpr double sad_mm = 1000.0;
constexpr double tol_mm = 1e-9;

Eigen::Vector3d source(PatientPosition position, double gantry_deg, double couch_deg = 0.0,
                       const plan::PointMm& iso = {0, 0, 0}) {
  const BeamFrame frame(position, {gantry_deg, 0.0, couch_deg}, iso, sad_mm);
  return frame.source_in_patient_mm();
}

void expect_near(const Eigen::Vector3d& actual, const Eigen::Vector3d& expected) {
  EXPECT_NEAR(actual.x(), expected.x(), tol_mm);
  EXPECT_NEAR(actual.y(), expected.y(), tol_mm);
  EXPECT_NEAR(actual.z(), expected.z(), tol_mm);
}

TEST(PatientPosition, ParsesSupportedCodesOnly) {
  EXPECT_EQ(supported_patient_position(plan::PatientPosition::hfs), PatientPosition::hfs);
  EXPECT_EQ(supported_patient_position(plan::PatientPosition::ffp), PatientPosition::ffp);
  EXPECT_FALSE(supported_patient_position(plan::PatientPosition::hfdr).has_value());
  EXPECT_FALSE(supported_patient_position(plan::PatientPosition::absent).has_value());
  EXPECT_FALSE(supported_patient_position(plan::PatientPosition::other).has_value());
  for (auto p : {PatientPosition::hfs, PatientPosition::hfp, PatientPosition::ffs, PatientPosition::ffp}) {
    EXPECT_NEAR(patient_to_table_top(p).determinant(), 1.0, 1e-12) << to_code(p);
  }
}

// Supine: gantry 0 irradiates from anterior (patient -y); prone: from posterior (+y).
TEST(BeamFrame, GantryZeroIsAboveThePatient) {
  expect_near(source(PatientPosition::hfs, 0), {0, -sad_mm, 0});
  expect_near(source(PatientPosition::ffs, 0), {0, -sad_mm, 0});
  expect_near(source(PatientPosition::hfp, 0), {0, sad_mm, 0});
  expect_near(source(PatientPosition::ffp, 0), {0, sad_mm, 0});
}

// Gantry 90 puts the source on +X of the fixed system (right when facing the gantry).
TEST(BeamFrame, HeadFirstSupineGantry90IsOnThePatientsLeft) {
  expect_near(source(PatientPosition::hfs, 90), {sad_mm, 0, 0});
  expect_near(source(PatientPosition::hfs, 270), {-sad_mm, 0, 0});
}

TEST(BeamFrame, Gantry90ForTheOtherPositions) {
  expect_near(source(PatientPosition::hfp, 90), {-sad_mm, 0, 0});  // prone, head first: patient's right
  expect_near(source(PatientPosition::ffs, 90), {-sad_mm, 0, 0});  // supine, feet first: patient's right
  expect_near(source(PatientPosition::ffp, 90), {sad_mm, 0, 0});   // prone, feet first: patient's left
}

TEST(BeamFrame, CouchNinetyTurnsTheLateralBeamTowardsTheFeet) {
  expect_near(source(PatientPosition::hfs, 90, 90), {0, 0, -sad_mm});
  expect_near(source(PatientPosition::hfs, 90, 270), {0, 0, sad_mm});
}

TEST(BeamFrame, IsocentreOffsetsTheSource) {
  expect_near(source(PatientPosition::hfs, 0, 0, {10, 20, 30}), {10, 20 - sad_mm, 30});
}

TEST(BeamFrame, CollimatorRotationTurnsTheBeamAxes) {
  // HFS gantry 0: collimator X is the patient's left, collimator Y the head direction.
  const BeamFrame straight(PatientPosition::hfs, {0, 0, 0}, {0, 0, 0}, sad_mm);
  expect_near(straight.to_collimator({10, 0, 0}), {10, 0, 0});
  expect_near(straight.to_collimator({0, 0, 10}), {0, 10, 0});
  expect_near(straight.to_collimator({0, -10, 0}), {0, 0, 10});  // anterior = towards the source
  const BeamFrame turned(PatientPosition::hfs, {0, 90, 0}, {0, 0, 0}, sad_mm);
  expect_near(turned.to_collimator({10, 0, 0}), {0, -10, 0});
}

TEST(BeamFrame, LocatesSourceDistanceAndOffAxisProjection) {
  const BeamFrame frame(PatientPosition::hfs, {0, 0, 0}, {0, 0, 0}, sad_mm);
  // 100 mm below the isocentre (posterior) and 30 mm to the left, 40 mm towards the head.
  const PointInBeam p = frame.locate({30, 100, 40});
  EXPECT_NEAR(p.spd_mm, 1100.0, tol_mm);
  EXPECT_NEAR(p.iso_plane_x_mm, 30.0 * 1000.0 / 1100.0, tol_mm);
  EXPECT_NEAR(p.iso_plane_y_mm, 40.0 * 1000.0 / 1100.0, tol_mm);
  EXPECT_NEAR(p.off_axis_mm, 50.0 * 1000.0 / 1100.0, tol_mm);
  EXPECT_NEAR(p.ray_length_mm, std::sqrt(1100.0 * 1100.0 + 50.0 * 50.0), tol_mm);
}

// Opposed lateral beams on a flat-sided phantom 200 mm wide centred on the isocentre: the
// source-to-point distances minus the two SSDs (900 mm each) add up to the separation.
TEST(BeamFrame, OpposedBeamsDepthsSumToSeparation) {
  const plan::PointMm point{30, 0, 0};
  const double ssd_mm = sad_mm - 100.0;
  for (auto position :
       {PatientPosition::hfs, PatientPosition::ffp, PatientPosition::hfp, PatientPosition::ffs}) {
    const BeamFrame left(position, {90, 0, 0}, {0, 0, 0}, sad_mm);
    const BeamFrame right(position, {270, 0, 0}, {0, 0, 0}, sad_mm);
    const double depth_a = left.locate(point).spd_mm - ssd_mm;
    const double depth_b = right.locate(point).spd_mm - ssd_mm;
    EXPECT_NEAR(depth_a + depth_b, 200.0, tol_mm) << to_code(position);
    EXPECT_NEAR(std::abs(depth_a - depth_b), 60.0, tol_mm) << to_code(position);
  }
}

}  // namespace
}  // namespace countersign::geometry
