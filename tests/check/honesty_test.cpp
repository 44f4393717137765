// Issue 12, "Why": each single error a physicist injected that the check used to pass, as a
// regression test that fails on that behaviour. Hand-built plans on the invented in-memory library
// of tests/engine/fixtures.hpp (flat water phantom, point at the isocentre unless stated).

#include <countersign/check/check_plan.hpp>

#include "engine/fixtures.hpp"

#include <gtest/gtest.h>

#include <cmath>

namespace countersign::check {
namespace {

using test_fixtures::make_plan;
using test_fixtures::static_beam;

struct Honesty : ::testing::Test {
  beamdata::Library library = test_fixtures::test_library();
  CheckOptions options;

  PlanCheck run(const plan::Plan& plan) { return check_plan(plan, library, options); }

  // The plan with each beam's planned dose set to its computed dose times `factor`.
  plan::Plan with_planned(plan::Plan plan, const std::vector<double>& factors) {
    const PlanCheck first = run(plan);
    for (std::size_t i = 0; i < factors.size(); ++i) {
      EXPECT_TRUE(first.beams[i].computed_dose_gy.has_value()) << first.beams[i].reason.sentence;
      plan.fraction_groups[0].beams[i].dose_gy = first.beams[i].computed_dose_gy.value_or(0.0) * factors[i];
    }
    return plan;
  }
};

// "A 2 cm SSD error on a point 5 cm off axis passes": the SSD is checked against SPD - depth at any
// off-axis distance. Point 50 mm off axis at the isocentre plane, depth 100 mm, SSD 900 mm is
// consistent (flat surface: the axial depth 100 x 1000/1001.25 = 99.9 mm, a 0.1 mm difference);
// SSD 920 mm is 20 mm off: outside tolerance, geometry_inconsistent.
TEST_F(Honesty, SsdErrorOffAxisIsFlagged) {
  plan::Beam beam = static_beam(1, 0, 100.0, 100.0);
  test_fixtures::set_ssd(beam, 900.0);
  const plan::Plan good = with_planned(make_plan({{beam, 100.0, 1.0, 100.0}}, {50, 0, 0}), {1.0});
  EXPECT_EQ(run(good).beams[0].status, Status::within_tolerance) << run(good).beams[0].reason.sentence;
  plan::Plan bad = good;
  test_fixtures::set_ssd(bad.beams[0], 920.0);
  const BeamCheck b = run(bad).beams[0];
  EXPECT_EQ(b.status, Status::outside_tolerance) << b.reason.sentence;
  EXPECT_EQ(b.reason.reason, Reason::geometry_inconsistent);
  EXPECT_NE(b.reason.sentence.find("(300A,0130)"), std::string::npos);
  options.policy.geometry_consistency_max_mm = 25.0;  // the limit is the policy's (the PDD form, fed the
  EXPECT_NE(run(bad).beams[0].reason.reason, Reason::geometry_inconsistent);  // wrong SSD, still disagrees)
}

// "A +20 % MU error on a beam giving 8 % of its point's dose passes": its own deviation must stay
// within small_beam_max_deviation_percent (10 %). Beam 2 gives 20/(200+20) = 9 % of the point's dose;
// +20 % of it is +1.8 % of the total (within 2 %) but +20 % of its own: outside, small_beam_deviation.
TEST_F(Honesty, SmallBeamWithALargeOwnErrorIsFlagged) {
  const plan::Plan plan =
      make_plan({{static_beam(1, 0), 200.0, 1.0, 100.0}, {static_beam(2, 180), 20.0, 1.0, 100.0}});
  const BeamCheck small = run(with_planned(plan, {1.0, 1.0 / 1.20})).beams[1];
  EXPECT_EQ(small.status, Status::outside_tolerance) << small.reason.sentence;
  EXPECT_EQ(small.reason.reason, Reason::small_beam_deviation);
  EXPECT_NEAR(*small.deviation_percent, 20.0, 1e-9);
  // +5 % of its own is still judged against the total (within).
  EXPECT_EQ(run(with_planned(plan, {1.0, 1.0 / 1.05})).beams[1].reason.reason,
            Reason::deviation_within_tolerance_of_point_total);
}

// "A point in the build-up region (2-5 mm deep) passes": dmax of the fixture is 15 mm.
TEST_F(Honesty, PointInTheBuildUpRegionIsNotChecked) {
  plan::Beam beam = static_beam(1, 0);
  test_fixtures::set_ssd(beam, 997.0);
  const BeamCheck b = run(with_planned(make_plan({{beam, 100.0, 1.0, 3.0}}), {1.0})).beams[0];
  EXPECT_EQ(b.status, Status::not_checked);
  EXPECT_EQ(b.reason.reason, Reason::point_in_buildup) << b.reason.sentence;
}

// "A 60 -> 10 mm depth change passes because TMR at 1 cm ~ TMR at 6 cm": the depth no longer agrees
// with SPD - SSD (1000 - 940 = 60 mm): 50 mm apart, outside tolerance.
TEST_F(Honesty, DepthChangeIsCaughtByTheGeometry) {
  plan::Beam beam = static_beam(1, 0);
  test_fixtures::set_ssd(beam, 940.0);
  const plan::Plan good = with_planned(make_plan({{beam, 100.0, 1.0, 60.0}}), {1.0});
  EXPECT_EQ(run(good).beams[0].status, Status::within_tolerance) << run(good).beams[0].reason.sentence;
  const BeamCheck b =
      run(make_plan({{beam, 100.0, good.fraction_groups[0].beams[0].dose_gy.value(), 10.0}})).beams[0];
  EXPECT_EQ(b.status, Status::outside_tolerance) << b.reason.sentence;
  EXPECT_EQ(b.reason.reason, Reason::geometry_inconsistent);
}

// "Small fields (3 x 3 cm) pass with no limit": below the policy's 4 cm equivalent square.
TEST_F(Honesty, SmallFieldIsNotChecked) {
  const BeamCheck b =
      run(with_planned(make_plan({{static_beam(1, 0, 15.0, 15.0), 100.0, 1.0, 100.0}}), {1.0})).beams[0];
  EXPECT_EQ(b.status, Status::not_checked);
  EXPECT_EQ(b.reason.reason, Reason::small_field) << b.reason.sentence;
  options.policy.min_equivalent_square_cm = 2.5;
  EXPECT_EQ(run(with_planned(make_plan({{static_beam(1, 0, 15.0, 15.0), 100.0, 1.0, 100.0}}), {1.0}))
                .beams[0]
                .status,
            Status::within_tolerance);
}

// "SSDs of 70 or 180 cm pass": without ssd_range_cm the policy allows 20 cm around the PDD table's
// 100 cm (extended_distance); with a range, outside it is ssd_out_of_range.
TEST_F(Honesty, SsdFarFromTheTablesIsNotChecked) {
  plan::Beam near = static_beam(1, 0);
  test_fixtures::set_ssd(near, 700.0);  // point at the isocentre 300 mm deep
  const BeamCheck b70 = run(with_planned(make_plan({{near, 100.0, 1.0, 300.0}}), {1.0})).beams[0];
  EXPECT_EQ(b70.reason.reason, Reason::extended_distance) << b70.reason.sentence;
  EXPECT_NE(b70.reason.sentence.find("no ssd_range_cm"), std::string::npos);
  plan::Beam far = static_beam(1, 0);
  test_fixtures::set_ssd(far, 1800.0);  // fixed SSD, the point 100 mm below the surface
  const plan::Plan far_plan = make_plan({{far, 100.0, 1.0, 100.0}}, {0, 900, 0}, "FIXED_SSD");
  EXPECT_EQ(run(with_planned(far_plan, {1.0})).beams[0].reason.reason, Reason::extended_distance);
  library.machines[0].beams[0].ssd_range_cm = beamdata::SsdRange{80.0, 120.0};
  const BeamCheck ranged = run(with_planned(make_plan({{near, 100.0, 1.0, 300.0}}), {1.0})).beams[0];
  EXPECT_EQ(ranged.reason.reason, Reason::ssd_out_of_range) << ranged.reason.sentence;
}

// Item 7: PDD and TMR tables that disagree at the point (PDD raised 3 % below dmax) are caught by
// computing both forms: beam_data_inconsistent_here, whichever form the plan asks for.
TEST_F(Honesty, InconsistentPddAndTmrAreNotChecked) {
  beamdata::BeamData& data = library.machines[0].beams[0];
  std::vector<double> values;
  for (std::size_t r = 0; r < data.pdd.rows().size(); ++r) {
    for (std::size_t c = 0; c < data.pdd.columns().size(); ++c)
      values.push_back(data.pdd.cell(r, c) * (data.pdd.rows()[r] > data.dmax_cm ? 1.03 : 1.0));
  }
  data.pdd = beamdata::Table2D(data.pdd.file(), "pdd", "depth_cm", data.pdd.rows(), "field_cm",
                               data.pdd.columns(), values);
  const BeamCheck b = run(with_planned(make_plan({{static_beam(1, 0), 100.0, 1.0, 100.0}}), {1.0})).beams[0];
  EXPECT_EQ(b.status, Status::not_checked);
  EXPECT_EQ(b.reason.reason, Reason::beam_data_inconsistent_here) << b.reason.sentence;
  ASSERT_TRUE(b.calculation);
  EXPECT_NEAR(b.calculation->model.formalism.difference_percent, 3.0, 0.3);
}

// Item 8: every computed beam carries an estimated uncertainty; the formalism part is half the
// TMR/PDD difference (the estimate's definition), and the sector input is absent until sector
// integration exists.
TEST_F(Honesty, EveryComputedBeamHasAnUncertainty) {
  const BeamCheck b = run(with_planned(make_plan({{static_beam(1, 0), 100.0, 1.0, 95.0}}), {1.0})).beams[0];
  ASSERT_TRUE(b.calc_uncertainty_percent);
  ASSERT_TRUE(b.calculation);
  const engine::UncertaintyEstimate& u = b.calculation->model.uncertainty;
  EXPECT_GT(u.interpolation_percent, 0.0);  // 9.5 cm lies between the 8 and 10 cm rows of a curved TMR
  EXPECT_NEAR(u.formalism_percent, std::abs(b.calculation->model.formalism.difference_percent) / 2.0, 1e-12);
  EXPECT_FALSE(b.calculation->sector_vs_equivalent_square_percent);
  EXPECT_DOUBLE_EQ(u.sector_percent, 0.0);
  EXPECT_NEAR(*b.calc_uncertainty_percent,
              std::sqrt(u.interpolation_percent * u.interpolation_percent +
                        u.formalism_percent * u.formalism_percent +
                        u.heterogeneity_percent * u.heterogeneity_percent),
              1e-12);
}

}  // namespace
}  // namespace countersign::check
