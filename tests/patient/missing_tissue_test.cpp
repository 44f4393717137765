// Missing tissue against analytic areas: field rectangles cut by straight body edges, and the
// demo breast tangents against brute-force sampling of the same outline.

#include <countersign/dicom/read_plan.hpp>
#include <countersign/dicom/read_study.hpp>
#include <countersign/geometry/beam_frame.hpp>
#include <countersign/patient/missing_tissue.hpp>

#include "support/paths.hpp"
#include "synthetic_study.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <numbers>

namespace countersign::test {
namespace {

using patient::FieldPlane;
using patient::missing_tissue;
using patient::rectangle_mm;

// Body x in [-50, 50], y in [-60, 90], all z of a 200 x 200 x 40 mm CT.
const study::Study& box() {
  static const study::Study s = synthetic_study(
      grid_of({40, 40, 8}, {-97.5, -97.5, -17.5}, {5.0, 5.0, 5.0}),
      [](double x, double y, double) { return std::abs(x) <= 50.0 && y >= -60.0 && y <= 90.0 ? 0 : -1000; },
      {rectangle_outline(-50, 50, -60, 90)});
  return s;
}

// The plane y = 0 seen by an anterior beam: u along x, v along z.
FieldPlane transverse_plane() {
  FieldPlane plane;
  plane.centre_mm = {0.0, 0.0, 0.0};
  plane.u_axis = {1.0, 0.0, 0.0};
  plane.v_axis = {0.0, 0.0, 1.0};
  return plane;
}

TEST(MissingTissue, FieldInsideTheBodyMissesNothing) {
  const auto m =
      missing_tissue(patient::BodyOutline(box()), transverse_plane(), rectangle_mm(-40, 40, -15, 15));
  EXPECT_NEAR(m.field_area_mm2, 80.0 * 30.0, 1e-9);
  EXPECT_NEAR(m.outside_body_fraction, 0.0, 1e-12);
  EXPECT_NEAR(m.outside_ct_fraction, 0.0, 1e-12);
}

TEST(MissingTissue, FieldOverTheEdgeOfTheBody) {
  // u from 20 to 80: 30 of 60 mm lie beyond x = 50 (analytic: half).
  const auto m =
      missing_tissue(patient::BodyOutline(box()), transverse_plane(), rectangle_mm(20, 80, -10, 10));
  EXPECT_NEAR(m.outside_body_fraction, 0.5, 1e-12);
}

TEST(MissingTissue, FieldBeyondTheScannedLength) {
  // v (z) from -10 to 30: 10 of 40 mm beyond the CT's end at z = 20 (analytic: a quarter).
  const auto m =
      missing_tissue(patient::BodyOutline(box()), transverse_plane(), rectangle_mm(-20, 20, -10, 30));
  EXPECT_NEAR(m.outside_ct_fraction, 0.25, 1e-12);
  EXPECT_NEAR(m.outside_body_fraction, 0.0, 1e-12);
}

TEST(MissingTissue, TiltedPlaneAcrossACorner) {
  // A plane rotated 45 degrees about z through (50, 90): u = (1, 1)/sqrt 2 crosses the corner
  // x = 50, y = 90 at u = 0; everything at u > 0 lies outside the body (x > 50 and y > 90), and
  // beyond u = 10 sqrt 2 (y > 100) outside the CT too. Analytic, of [-30, 30]: half outside in all,
  // 10 sqrt 2 / 60 of it in the CT.
  FieldPlane plane;
  plane.centre_mm = {50.0, 90.0, 0.0};
  plane.u_axis = Eigen::Vector3d(1.0, 1.0, 0.0).normalized();
  plane.v_axis = {0.0, 0.0, 1.0};
  const auto m = missing_tissue(patient::BodyOutline(box()), plane, rectangle_mm(-30, 30, -5, 5));
  EXPECT_NEAR(m.outside_body_fraction + m.outside_ct_fraction, 0.5, 1e-9);
  EXPECT_NEAR(m.outside_body_fraction, 10.0 * std::sqrt(2.0) / 60.0, 1e-9);
}

TEST(MissingTissue, TrianglesAndRowSpacing) {
  // The triangle (20, -10), (80, -10), (20, 10): the part beyond u = 50 is a triangle of a quarter
  // of its area (similar triangles, ratio 1/2). Rows of 0.05 mm: midpoint rule exact for linear spans.
  const std::vector<std::array<double, 2>> triangle{{20.0, -10.0}, {80.0, -10.0}, {20.0, 10.0}};
  const auto m = missing_tissue(patient::BodyOutline(box()), transverse_plane(), triangle, 0.05);
  EXPECT_NEAR(m.field_area_mm2, 600.0, 1e-9);
  EXPECT_NEAR(m.outside_body_fraction, 0.25, 1e-9);
}

TEST(MissingTissue, FieldPlaneOfABeamFrame) {
  const geometry::BeamFrame frame(geometry::PatientPosition::hfs, {90.0, 0.0, 0.0}, {0.0, 0.0, 0.0}, 1000.0);
  const auto plane = patient::field_plane(frame, 1000.0);
  EXPECT_LT(plane.centre_mm.norm(), 1e-9);  // the isocentre plane
  EXPECT_NEAR(std::abs(plane.u_axis.dot(frame.beam_direction_in_patient())), 0.0, 1e-12);
  EXPECT_NEAR(std::abs(plane.v_axis.dot(frame.beam_direction_in_patient())), 0.0, 1e-12);
  EXPECT_NEAR(std::abs(plane.v_axis.z()), 1.0, 1e-12);  // IEC Y along the patient's z at couch 0
}

// The demo tangents: the field at the isocentre plane against counting 1 mm sample points inside
// the slice outline (a different method on the same outline).
TEST(MissingTissue, BreastTangentsAgreeWithPointSampling) {
  const auto folder = source_dir() / "testdata/studies/fern_breast";
  auto plan = dicom::read_plan_file(folder / "RP.fern_breast_tangents.dcm");
  ASSERT_TRUE(plan.has_value());
  const std::filesystem::path inputs[] = {folder};
  const auto study = dicom::load_study_for_plan(plan.value(), inputs);
  ASSERT_TRUE(study.has_value()) << study.problem().message();
  for (const auto& beam : plan->beams) {
    const auto& cp = beam.control_points.front();
    const auto& jaws_x = cp.device(plan::DeviceType::asymx)->positions_mm;
    const auto& jaws_y = cp.device(plan::DeviceType::asymy)->positions_mm;
    const geometry::BeamFrame frame(geometry::PatientPosition::hfs, {*cp.gantry_deg, 0.0, 0.0},
                                    *cp.isocenter_mm, 1000.0);
    const auto plane = patient::field_plane(frame, 1000.0);
    const auto m = missing_tissue(patient::BodyOutline(*study), plane,
                                  rectangle_mm(jaws_x[0], jaws_x[1], jaws_y[0], jaws_y[1]));
    std::size_t inside = 0, total = 0;
    for (double u = jaws_x[0] + 0.5; u < jaws_x[1]; u += 1.0) {
      for (double v = jaws_y[0] + 0.5; v < jaws_y[1]; v += 1.0) {
        const Eigen::Vector3d p = plane.centre_mm + u * plane.u_axis + v * plane.v_axis;
        const auto voxel = study->ct.grid.voxel_at({p.x(), p.y(), p.z()});
        ASSERT_TRUE(voxel.has_value());
        inside += study::inside_even_odd(study->body.slice_polygons[(*voxel)[2]], p.x(), p.y());
        ++total;
      }
    }
    const double sampled = 1.0 - static_cast<double>(inside) / static_cast<double>(total);
    EXPECT_NEAR(m.outside_body_fraction, sampled, 0.01) << beam.name;
    EXPECT_GT(m.outside_body_fraction, 0.1) << beam.name << ": the tangents were planned with flash";
    EXPECT_LT(m.outside_body_fraction, 0.6) << beam.name;
    std::cout << beam.name << ": missing tissue " << m.outside_body_fraction << " (sampled " << sampled
              << ")\n";
  }
}

}  // namespace
}  // namespace countersign::test
