// The check with the patient's CT (issue 14 "Done when") and the plan's equivalent depth without one
// (issue 12 item 5), on the INVENTED demo studies of testdata/studies (README there). Expected
// geometry is the phantoms' own: the lung-slab AP beam crosses 40 mm water, 40 mm lung at -700 HU
// and 40 mm water, so its radiological depth with the demo table (-1000 HU -> 0, 0 HU -> 1, linear)
// is 40 + 40 x 0.30 + 40 = 92 mm (hand calculation) and its geometric depth 120 mm.

#include <countersign/beamdata/library.hpp>
#include <countersign/check/check_plan.hpp>
#include <countersign/check/patient_study.hpp>
#include <countersign/dicom/read_plan.hpp>
#include <countersign/dicom/read_study.hpp>

#include "support/paths.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <filesystem>
#include <vector>

namespace countersign::check {
namespace {

namespace fs = std::filesystem;

fs::path study_folder(const char* name) {
  return countersign::test::source_dir() / "testdata" / "studies" / name;
}

plan::Plan read_plan(const fs::path& file) {
  auto plan = dicom::read_plan_file(file);
  EXPECT_TRUE(plan.has_value()) << (plan ? "" : plan.error().message());
  return std::move(plan).value();
}

struct PatientCheck : ::testing::Test {
  beamdata::Library library = [] {
    auto loaded = beamdata::load_library(countersign::test::source_dir() / "beamdata");
    EXPECT_TRUE(loaded.has_value());
    return std::move(loaded).value();
  }();

  PlanCheck run(const plan::Plan& plan, const fs::path& folder, CheckOptions options = {}) {
    const std::vector<fs::path> paths{folder};
    const PatientStudy study = PatientStudy::from(dicom::load_study_for_plan(plan, paths), library);
    use_study(options, study);
    return check_plan(plan, library, options);  // the study outlives the check: it is in this scope
  }
  PlanCheck run_without_ct(const plan::Plan& plan) { return check_plan(plan, library, CheckOptions{}); }

  static plan::Plan with_mu(plan::Plan plan, int beam_number, double factor) {
    for (auto& rb : plan.fraction_groups[0].beams) {
      if (rb.beam_number == beam_number) rb.meterset_mu = *rb.meterset_mu * factor;
    }
    return plan;
  }
  static const BeamCheck& beam(const PlanCheck& c, int number) {
    for (const BeamCheck& b : c.beams) {
      if (b.beam_number == number) return b;
    }
    throw std::runtime_error("no such beam");
  }
};

TEST_F(PatientCheck, LungPlanWithinToleranceWithTheRadiologicalDepth) {
  const plan::Plan plan = read_plan(study_folder("fern_lung_slab") / "RP.fern_lung_4field.dcm");
  const PlanCheck c = run(plan, study_folder("fern_lung_slab"));
  ASSERT_FALSE(c.options.study.problem) << c.options.study.problem->sentence;
  EXPECT_EQ(c.status, Status::within_tolerance) << c.reason.sentence;
  const BeamCheck& ap = beam(c, 1);
  ASSERT_TRUE(ap.calculation && ap.calculation->patient);
  EXPECT_EQ(ap.calculation->depth.source, engine::DepthSource::ct_radiological);
  EXPECT_NEAR(ap.calculation->patient->ray.depth_mm, 120.0, 0.05);              // hand calculation
  EXPECT_NEAR(ap.calculation->patient->ray.radiological_depth_mm, 92.0, 0.05);  // 40 + 40 x 0.3 + 40
  EXPECT_NEAR(ap.calculation->patient->ray.ssd_mm, 880.0, 0.05);                // SAD 1000 - 120
  EXPECT_EQ(ap.medium, Medium::heterogeneous);  // from the CT's densities, not from a plan value
  EXPECT_EQ(beam(c, 2).medium, Medium::homogeneous);
  ASSERT_TRUE(ap.calculation->homogeneous_dose_gy);
  EXPECT_LT(*ap.calculation->homogeneous_dose_gy,
            ap.calculation->computed_dose_gy);  // lung: less attenuation
  EXPECT_NE(ap.words.medium.find("radiological depth from the CT"), std::string::npos);
}

TEST_F(PatientCheck, LungPlanMuErrorsOfEightAndTenPercentAreFlagged) {
  const plan::Plan plan = read_plan(study_folder("fern_lung_slab") / "RP.fern_lung_4field.dcm");
  for (const double factor : {1.08, 1.10}) {
    const PlanCheck c = run(with_mu(plan, 1, factor), study_folder("fern_lung_slab"));
    const BeamCheck& ap = beam(c, 1);
    EXPECT_EQ(ap.status, Status::outside_tolerance) << factor << ": " << ap.reason.sentence;
    EXPECT_EQ(ap.reason.reason, Reason::deviation_exceeds_tolerance);
  }
}

// Issue 12 item 5, "Why": without a CT, the correct lung plan was a -9.7 % false alarm and +8 % and
// +10 % MU errors passed inside the widened tolerance.
TEST_F(PatientCheck, WithoutCtThePlansEquivalentDepthIsUsedAndSaidToBeNotIndependent) {
  const plan::Plan plan = read_plan(study_folder("fern_lung_slab") / "RP.fern_lung_4field.dcm");
  const PlanCheck correct = run_without_ct(plan);
  const BeamCheck& ap = beam(correct, 1);
  EXPECT_EQ(ap.status, Status::within_tolerance) << ap.reason.sentence;
  ASSERT_TRUE(ap.calculation);
  EXPECT_TRUE(ap.calculation->depth.equivalent_by_policy);
  EXPECT_NEAR(ap.calculation->depth.depth_mm, 92.0, 0.05);
  ASSERT_TRUE(ap.calculation->homogeneous_dose_gy);  // the geometric-depth dose beside it
  EXPECT_NEAR(100.0 * (*ap.calculation->homogeneous_dose_gy - *ap.planned_dose_gy) / *ap.planned_dose_gy,
              -9.5,
              0.5);  // the false alarm of before, now only shown beside
  EXPECT_NE(ap.words.medium.find("equivalent depth from the plan (not independent)"), std::string::npos);
  EXPECT_NE(ap.words.depth_description.find("not independent"), std::string::npos);
  for (const double factor : {1.08, 1.10}) {
    const PlanCheck checked = run_without_ct(with_mu(plan, 1, factor));
    const BeamCheck& wrong = beam(checked, 1);
    EXPECT_EQ(wrong.status, Status::outside_tolerance) << factor << ": " << wrong.reason.sentence;
  }
  // A homogeneous beam keeps its geometric depth and says "homogeneous water".
  EXPECT_FALSE(beam(correct, 2).calculation->depth.equivalent_by_policy);
  EXPECT_EQ(beam(correct, 2).words.medium, "homogeneous water with the plan's depths");
}

// "An SSD changed by 2 cm on an off-axis point is flagged from the CT."
TEST_F(PatientCheck, SsdChangedByTwoCentimetresOnAnOffAxisPointIsFlagged) {
  plan::Plan plan = read_plan(study_folder("fern_oblique") / "RP.fern_oblique.dcm");
  // The dose reference 5 cm off the AP beam's axis (x), inside the 20 cm body; the AP beam's SSD +2 cm.
  for (plan::DoseReference& r : plan.dose_references) {
    if (r.point_mm) (*r.point_mm)[0] += 50.0;
  }
  for (plan::ReferencedBeam& rb : plan.fraction_groups[0].beams) {
    if (rb.dose_specification_point_mm) (*rb.dose_specification_point_mm)[0] += 50.0;
  }
  for (plan::Beam& b : plan.beams) {
    if (b.number == 1) {
      for (plan::ControlPoint& cp : b.control_points) {
        if (cp.ssd_mm) *cp.ssd_mm += 20.0;
      }
    }
  }
  const PlanCheck c = run(plan, study_folder("fern_oblique"));
  const BeamCheck& ap = beam(c, 1);
  ASSERT_TRUE(ap.calculation && ap.calculation->patient) << ap.reason.sentence;
  EXPECT_GT(ap.calculation->point.off_axis_mm, 45.0);
  EXPECT_EQ(ap.status, Status::outside_tolerance) << ap.reason.sentence;
  EXPECT_EQ(ap.reason.reason, Reason::plan_geometry_differs_from_ct);
  EXPECT_NE(ap.reason.sentence.find("SSD (300A,0130)"), std::string::npos) << ap.reason.sentence;
}

// "A tangential beam with missing tissue is ... never passed as if in full scatter."
TEST_F(PatientCheck, TangentialBeamsWithMissingTissueAreNotPassed) {
  const plan::Plan plan = read_plan(study_folder("fern_breast") / "RP.fern_breast_tangents.dcm");
  const PlanCheck c = run(plan, study_folder("fern_breast"));
  for (const BeamCheck& b : c.beams) {
    EXPECT_EQ(b.status, Status::not_checked) << b.beam_name;
    EXPECT_EQ(b.reason.reason, Reason::missing_tissue) << b.reason.sentence;
    ASSERT_TRUE(b.calculation && b.calculation->patient);
    // The generator's stated figure: about 39 % of the field at the isocentre plane lies in air.
    EXPECT_NEAR(b.calculation->patient->ray.missing_tissue_fraction, 0.39, 0.05);
  }
  EXPECT_EQ(c.exit_code(), ExitCode::not_checked);
}

// The same tangents shaped by an MLC opened beyond the jaws (added here to the demo plan; the
// opening stays the jaws'), so each goes through sector integration: the sector rays end at the body
// outline, the larger missing-tissue limit applies (about 39 % of the field is in air, below the
// default 50 %), and the result says the scatter was truncated at the body. The planned doses are in
// full scatter (testdata/studies/README.md), so the computed doses must come out lower than the same
// calculation in full scatter.
TEST_F(PatientCheck, ShapedTangentsAreComputedWithTheScatterTruncatedAtTheBody) {
  plan::Plan plan = read_plan(study_folder("fern_breast") / "RP.fern_breast_tangents.dcm");
  for (plan::Beam& b : plan.beams) {
    plan::BeamLimitingDevice mlc{plan::term(plan::DeviceType::mlcx), std::nullopt, 20, {}};
    for (int i = 0; i <= 20; ++i) mlc.leaf_boundaries_mm.push_back(-100.0 + 10.0 * i);
    b.beam_limiting_devices.push_back(mlc);
    std::vector<double> open(40);
    for (int i = 0; i < 20; ++i) open[i] = -150.0, open[20 + i] = 150.0;
    for (plan::ControlPoint& cp : b.control_points) {
      if (!cp.devices.empty()) cp.devices.push_back({plan::term(plan::DeviceType::mlcx), open});
    }
  }
  const std::vector<fs::path> paths{study_folder("fern_breast")};
  const PatientStudy study = PatientStudy::from(dicom::load_study_for_plan(plan, paths), library);
  CheckOptions options;
  use_study(options, study);
  ASSERT_TRUE(options.engine.outline_radius_mm);  // set from the study's patient model
  const PlanCheck cut = check_plan(plan, library, options);
  CheckOptions full_scatter = options;
  full_scatter.engine.outline_radius_mm = {};
  const PlanCheck full = check_plan(plan, library, full_scatter);
  for (const BeamCheck& b : cut.beams) {
    ASSERT_TRUE(b.calculation && b.calculation->dose_computed) << b.beam_name << ": " << b.reason.sentence;
    EXPECT_NE(b.reason.reason, Reason::missing_tissue) << b.reason.sentence;
    EXPECT_NE(b.status, Status::not_checked) << b.reason.sentence;
    EXPECT_TRUE(b.calculation->used_sector_integration());
    EXPECT_TRUE(b.calculation->scatter_truncated_at_body()) << b.beam_name;
    EXPECT_NEAR(b.calculation->patient->ray.missing_tissue_fraction, 0.39, 0.05);  // the generator's figure
    const bool said = std::any_of(
        b.words.approximations.begin(), b.words.approximations.end(),
        [](const std::string& w) { return w.find("truncated at the body outline") != std::string::npos; });
    EXPECT_TRUE(said) << b.beam_name;
    const BeamCheck& same = beam(full, b.beam_number);
    ASSERT_TRUE(same.calculation && same.calculation->dose_computed);
    // Full scatter is assumed in that run, so it is held to today's limit and not checked.
    EXPECT_EQ(same.reason.reason, Reason::missing_tissue) << same.reason.sentence;
    EXPECT_LT(b.calculation->computed_dose_gy, 0.99 * same.calculation->computed_dose_gy) << b.beam_name;
  }
}

TEST_F(PatientCheck, AStudyWithAMissingSliceIsNeverReplacedByWater) {
  const fs::path folder = countersign::test::make_temp_dir("countersign-study-gap");
  for (const auto& entry : fs::directory_iterator(study_folder("fern_lung_slab"))) {
    if (entry.path().filename() != "CT010.dcm") fs::copy_file(entry.path(), folder / entry.path().filename());
  }
  const plan::Plan plan = read_plan(folder / "RP.fern_lung_4field.dcm");
  const PlanCheck c = run(plan, folder);
  ASSERT_TRUE(c.options.study.problem);
  EXPECT_NE(c.options.study.problem->sentence.find("ct_slice_missing"), std::string::npos);
  for (const BeamCheck& b : c.beams) {
    EXPECT_EQ(b.status, Status::not_checked);
    EXPECT_EQ(b.reason.reason, Reason::study_unusable);
  }
  fs::remove_all(folder);
}

TEST_F(PatientCheck, HeterogeneityOffAndBatho) {
  const plan::Plan plan = read_plan(study_folder("fern_lung_slab") / "RP.fern_lung_4field.dcm");
  CheckOptions off;
  off.engine.heterogeneity = engine::Heterogeneity::off;
  const PlanCheck in_water = run(plan, study_folder("fern_lung_slab"), off);
  const BeamCheck& water = beam(in_water, 1);
  ASSERT_TRUE(water.calculation && water.calculation->dose_computed);
  EXPECT_EQ(water.calculation->depth.source, engine::DepthSource::ct_geometric);
  EXPECT_NEAR(water.calculation->depth.depth_mm, 120.0, 0.05);
  EXPECT_NE(water.words.medium.find("heterogeneity correction off"), std::string::npos);

  CheckOptions batho;
  batho.engine.heterogeneity = engine::Heterogeneity::batho;
  const PlanCheck with_batho = run(plan, study_folder("fern_lung_slab"), batho);
  const BeamCheck& corrected = beam(with_batho, 1);
  ASSERT_TRUE(corrected.calculation && corrected.calculation->dose_computed) << corrected.reason.sentence;
  const engine::Segment& part = corrected.calculation->segments.front();
  ASSERT_TRUE(part.batho_factor);
  // Lung above the point raises the dose (common practice, no source); the factor multiplies the
  // homogeneous dose at the geometric depth.
  EXPECT_GT(*part.batho_factor, 1.0);
  EXPECT_NEAR(corrected.calculation->computed_dose_gy,
              *corrected.calculation->homogeneous_dose_gy * *part.batho_factor, 1e-9);
}

}  // namespace
}  // namespace countersign::check
