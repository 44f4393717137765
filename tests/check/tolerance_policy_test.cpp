#include <countersign/check/tolerance_policy.hpp>

#include "support/paths.hpp"

#include <gtest/gtest.h>
#include <fstream>

namespace countersign::check {
namespace {

std::filesystem::path write(const std::filesystem::path& dir, const std::string& text) {
  const auto file = dir / "policy.toml";
  std::ofstream(file) << text;
  return file;
}

struct PolicyFile : ::testing::Test {
  std::filesystem::path dir = test::make_temp_dir("countersign-policy");
  ~PolicyFile() override { std::filesystem::remove_all(dir); }
};

TEST_F(PolicyFile, OverridesKeepOtherDefaults) {
  const auto p =
      load_policy(write(dir, "[tolerance_percent]\nsimple = 1.5\n[limits]\nmin_edge_distance_cm = 0.5\n"));
  ASSERT_TRUE(p) << p.error().message();
  EXPECT_DOUBLE_EQ(p->simple_percent, 1.5);
  EXPECT_DOUBLE_EQ(p->min_edge_distance_cm, 0.5);
  EXPECT_DOUBLE_EQ(p->complex_percent, default_policy().complex_percent);
  EXPECT_EQ(p->source, (dir / "policy.toml").string());
}

TEST_F(PolicyFile, UnknownKeyIsAnError) {
  const auto p = load_policy(write(dir, "[tolerance_percent]\nsimpel = 1.5\n"));
  ASSERT_FALSE(p);
  EXPECT_EQ(p.error().kind, ErrorKind::bad_configuration);
  EXPECT_EQ(p.error().attribute, "tolerance_percent.simpel");
}

TEST_F(PolicyFile, OutOfRangeAndNonNumbersAreErrors) {
  EXPECT_FALSE(load_policy(write(dir, "[tolerance_percent]\nsimple = -1.0\n")));
  EXPECT_FALSE(load_policy(write(dir, "[tolerance_percent]\nsimple = \"two\"\n")));
  EXPECT_FALSE(load_policy(write(dir, "[limits]\nsmall_share_fraction = 2\n")));
}

TEST_F(PolicyFile, SyntaxErrorNamesTheLine) {
  const auto p = load_policy(write(dir, "[tolerance_percent]\nsimple = = 2\n"));
  ASSERT_FALSE(p);
  EXPECT_NE(p.error().message().find("line 2"), std::string::npos);
  EXPECT_FALSE(load_policy(dir / "absent.toml"));
}

// The example file shipped in config/ states the built-in defaults.
TEST(PolicyExample, ShippedFileEqualsTheDefaults) {
  const auto p = load_policy(test::source_dir() / "config" / "tolerance-policy.toml");
  ASSERT_TRUE(p) << p.error().message();
  const TolerancePolicy d = default_policy();
  EXPECT_DOUBLE_EQ(p->simple_percent, d.simple_percent);
  EXPECT_DOUBLE_EQ(p->complex_percent, d.complex_percent);
  EXPECT_DOUBLE_EQ(p->modulated_percent, d.modulated_percent);
  EXPECT_DOUBLE_EQ(p->simple_heterogeneous_percent, d.simple_heterogeneous_percent);
  EXPECT_DOUBLE_EQ(p->complex_heterogeneous_percent, d.complex_heterogeneous_percent);
  EXPECT_DOUBLE_EQ(p->modulated_heterogeneous_percent, d.modulated_heterogeneous_percent);
  EXPECT_DOUBLE_EQ(p->simple_max_off_axis_cm, d.simple_max_off_axis_cm);
  EXPECT_DOUBLE_EQ(p->simple_max_jaw_offset_cm, d.simple_max_jaw_offset_cm);
  EXPECT_DOUBLE_EQ(p->simple_min_open_fraction, d.simple_min_open_fraction);
  EXPECT_DOUBLE_EQ(p->heterogeneous_depth_difference_percent, d.heterogeneous_depth_difference_percent);
  EXPECT_DOUBLE_EQ(p->min_edge_distance_cm, d.min_edge_distance_cm);
  EXPECT_DOUBLE_EQ(p->max_depth_discrepancy_cm, d.max_depth_discrepancy_cm);
  EXPECT_DOUBLE_EQ(p->depth_check_max_off_axis_cm, d.depth_check_max_off_axis_cm);
  EXPECT_DOUBLE_EQ(p->wedge_max_off_axis_cm, d.wedge_max_off_axis_cm);
  EXPECT_DOUBLE_EQ(p->patient_max_ssd_difference_mm, d.patient_max_ssd_difference_mm);
  EXPECT_DOUBLE_EQ(p->patient_max_depth_difference_mm, d.patient_max_depth_difference_mm);
  EXPECT_DOUBLE_EQ(p->patient_max_radiological_depth_difference_percent,
                   d.patient_max_radiological_depth_difference_percent);
  EXPECT_DOUBLE_EQ(p->patient_heterogeneous_density_difference, d.patient_heterogeneous_density_difference);
  EXPECT_DOUBLE_EQ(p->patient_heterogeneous_min_path_mm, d.patient_heterogeneous_min_path_mm);
  EXPECT_DOUBLE_EQ(p->patient_max_missing_tissue_fraction, d.patient_max_missing_tissue_fraction);
  EXPECT_DOUBLE_EQ(p->patient_max_missing_tissue_fraction_sectors,
                   d.patient_max_missing_tissue_fraction_sectors);
  EXPECT_DOUBLE_EQ(p->patient_plan_equivalent_depth_switch_percent,
                   d.patient_plan_equivalent_depth_switch_percent);
  EXPECT_DOUBLE_EQ(p->small_share_fraction, d.small_share_fraction);
}

}  // namespace
}  // namespace countersign::check
