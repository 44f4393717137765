// Sector rays that end at the body outline (missing tissue), on an in-memory water phantom with a
// flat lateral surface parallel to an anterior beam: a tangential-like geometry. Expected values are
// hand calculations from that geometry and the fixture's TMR and Sp tables (engine/fixtures.hpp),
// never from the code under test:
//
//   phantom: water (0 HU) for x <= 30 mm, y >= -100 mm; air elsewhere. Beam: gantry 0, HFS, SAD
//   100 cm, jaws 10 x 10 cm with an MLC opened wider than the jaws (so the part goes through sector
//   integration), isocentre and dose point at the origin: depth 10 cm, SPD = SAD (plane scale 1),
//   and the lateral surface 3 cm from the point, in the plane through the point perpendicular to the
//   beam (the coronal plane y = 0).
//
//   36 sectors of 10°, central directions θ_k = 5°, 15°, ... Each ray leaves the square jaw opening
//   at L = min(5 / |cos θ|, 5 / |sin θ|) cm and the body at B = 3 / cos θ cm (towards the surface):
//   B < L for |θ| < atan(5/3) = 59.04°, i.e. 6 sectors either side of the surface's normal, 12 in all.
//   With F(r) = Sp(√π r) · TMR(10 cm, √π r) (circle as its equal-area square), the scatter deficit in
//   Sp·TMR is the SMR sum over the missing sectors:
//       deficit = (1/36) Σ over the 12 cut sectors of [F(L_k) − F(B_k)]
//   (the zero-field terms of SMR = TMR·Sp/Sp(0) − TMR(d, 0) cancel in each difference).

#include <countersign/engine/beam_dose.hpp>
#include <countersign/engine/body_outline_radius.hpp>
#include <countersign/patient/patient_model.hpp>

#include "engine/fixtures.hpp"
#include "patient/synthetic_study.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <numbers>

namespace countersign::engine {
namespace {

constexpr double depth_cm = 10.0;

// Water for x <= surface_x_mm (and x >= -140), y from -100 (the anterior surface) to 140, in a CT of
// 300 x 300 x 200 mm.
study::Study phantom(double surface_x_mm) {
  return test::synthetic_study(test::grid_of({60, 60, 40}, {-147.5, -147.5, -97.5}, {5.0, 5.0, 5.0}),
                               [surface_x_mm](double x, double y, double) {
                                 return x >= -140.0 && x <= surface_x_mm && y >= -100.0 && y <= 140.0 ? 0
                                                                                                      : -1000;
                               },
                               {test::rectangle_outline(-140.0, surface_x_mm, -100.0, 140.0)});
}

// The fixture's static 10 x 10 beam with an MLC opened beyond the jaws.
plan::Plan shaped_plan() {
  plan::Beam beam = test_fixtures::static_beam(1, 0.0);
  plan::BeamLimitingDevice mlc{plan::term(plan::DeviceType::mlcx), std::nullopt, 10, {}};
  for (int i = 0; i <= 10; ++i) mlc.leaf_boundaries_mm.push_back(-100.0 + 20.0 * i);
  beam.beam_limiting_devices.push_back(mlc);
  std::vector<double> open(20);
  for (int i = 0; i < 10; ++i) open[i] = -100.0, open[10 + i] = 100.0;
  for (plan::ControlPoint& cp : beam.control_points)
    cp.devices.push_back({plan::term(plan::DeviceType::mlcx), open});
  return test_fixtures::make_plan({{beam, 100.0, 1.0, std::nullopt}});
}

patient::HuToDensity demo_table() {
  return patient::piecewise_linear_density({{-1000.0, 0.0}, {0.0, 1.0}, {3000.0, 2.5}});
}

// The same plan on the phantom without and with the body outline.
struct FullAndCut {
  BeamDose full;
  BeamDose cut;
};

struct BodyOutlineFixture : ::testing::Test {
  beamdata::Library library = test_fixtures::test_library();
  const beamdata::BeamData& data() const { return library.machines.front().beams.front(); }

  BeamDose run(const plan::Plan& plan, const patient::PatientModel& model, bool with_outline) {
    EngineOptions options;
    options.patient = &model;
    if (with_outline) options.outline_radius_mm = outline_radius_from(model);
    const plan::ReferencedBeam& rb = plan.fraction_groups.front().beams.front();
    const auto point = select_dose_point(plan, plan.beams.front(), rb);
    EXPECT_TRUE(point.has_value());
    return compute_beam_dose(plan, plan.beams.front(), rb, *point, library, options);
  }
  FullAndCut both(double surface_x_mm, const plan::Plan& plan) {
    const study::Study s = phantom(surface_x_mm);
    const patient::PatientModel model(s, demo_table());
    FullAndCut out{run(plan, model, false), run(plan, model, true)};
    EXPECT_FALSE(out.full.problem);
    EXPECT_FALSE(out.cut.problem);
    return out;
  }
  // F(r) of the header, r in cm at the point's plane.
  double f(double radius_cm) const {
    const double side_cm = std::sqrt(std::numbers::pi) * radius_cm;
    return data().sp.at(side_cm).value * data().tmr.at(depth_cm, side_cm).value;
  }
};

TEST_F(BodyOutlineFixture, PointNearTheSurfaceLosesTheScatterOfTheMissingSectors) {
  const auto [full, cut] = both(30.0, shaped_plan());
  ASSERT_TRUE(full.patient && cut.patient);
  EXPECT_NEAR(cut.patient->ray.depth_mm, 100.0, 1e-6);  // hand: surface at y = -100
  ASSERT_EQ(cut.segments.size(), 1u);
  ASSERT_TRUE(full.segments[0].sectors && cut.segments[0].sectors);
  const SectorScatter& a = *full.segments[0].sectors;
  const SectorScatter& b = *cut.segments[0].sectors;
  EXPECT_EQ(a.sectors, 36);
  EXPECT_EQ(a.rays_ended_at_body, 0);
  EXPECT_FALSE(a.body_outline);
  EXPECT_TRUE(b.body_outline);
  EXPECT_EQ(b.rays_ended_at_body, 12);  // hand count, header

  double deficit = 0.0;
  for (int k = 0; k < 36; ++k) {
    const double theta = (k + 0.5) * 10.0 * std::numbers::pi / 180.0;
    const double c = std::abs(std::cos(theta));  // the surface lies on one side; the field is symmetric
    const double l_cm = std::min(5.0 / c, 5.0 / std::abs(std::sin(theta)));
    if (std::cos(theta) <= 0.0) continue;
    const double b_cm = 3.0 / c;
    if (b_cm < l_cm) deficit += f(l_cm) - f(b_cm);
  }
  deficit /= 36.0;
  EXPECT_GT(deficit, 0.01);  // a few percent of Sp·TMR (about 0.8 at 10 cm): a real effect
  EXPECT_NEAR(a.sp_tmr() - b.sp_tmr(), deficit, 0.01 * deficit);
  // The dose falls by the deficit over the full field's Sp·TMR (the tables' 10 x 10, which sector
  // integration of the open square reproduces within half a percent).
  const double full_sp_tmr = f(10.0 / std::sqrt(std::numbers::pi));
  EXPECT_NEAR(cut.computed_dose_gy / full.computed_dose_gy, 1.0 - deficit / full_sp_tmr, 0.005);
  EXPECT_LT(cut.computed_dose_gy, full.computed_dose_gy);
  EXPECT_TRUE(cut.scatter_truncated_at_body());
  EXPECT_FALSE(full.scatter_truncated_at_body());
  EXPECT_TRUE(std::any_of(cut.approximations.begin(), cut.approximations.end(), [](const Approximation& x) {
    return x.kind == ApproximationKind::scatter_at_body_outline && x.part_count == 1;
  }));
  // The missing tissue of the jaw opening: 2 of 10 cm lie beyond x = 30 mm (hand).
  EXPECT_NEAR(cut.patient->ray.missing_tissue_fraction, 0.2, 0.01);
}

TEST_F(BodyOutlineFixture, PointDeepInsideALargeBodyIsUnchanged) {
  // Surface 14 cm from the point; the farthest sector ray (the jaws' corner) reaches 7.07 cm.
  const auto [full, cut] = both(140.0, shaped_plan());
  ASSERT_FALSE(cut.segments.empty());
  ASSERT_TRUE(cut.segments[0].sectors);
  EXPECT_TRUE(cut.segments[0].sectors->body_outline);
  EXPECT_EQ(cut.segments[0].sectors->rays_ended_at_body, 0);
  EXPECT_DOUBLE_EQ(cut.computed_dose_gy, full.computed_dose_gy);
  EXPECT_FALSE(cut.scatter_truncated_at_body());
}

TEST_F(BodyOutlineFixture, JawRectangleKeepsTheEquivalentSquare) {
  // Without an MLC the part goes through Sterling's equivalent square: the outline cannot act, the
  // dose is the full-scatter one (the check then keeps today's missing-tissue limit).
  const auto [full, cut] =
      both(30.0, test_fixtures::make_plan({{test_fixtures::static_beam(1, 0.0), 100.0, 1.0, std::nullopt}}));
  ASSERT_FALSE(cut.segments.empty());
  EXPECT_EQ(cut.segments[0].scatter_method, ScatterMethod::equivalent_square);
  EXPECT_DOUBLE_EQ(cut.computed_dose_gy, full.computed_dose_gy);
  EXPECT_FALSE(cut.scatter_truncated_at_body());
}

}  // namespace
}  // namespace countersign::engine
