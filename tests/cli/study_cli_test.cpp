// `countersign check STUDY_FOLDER/`: a whole INVENTED demo study (testdata/studies) checked with one
// command; the CT and structure-set files are the study, not bad plans; the JSON's `patient` object.

#include "support/paths.hpp"

#include <nlohmann/json.hpp>

#include <gtest/gtest.h>

#include <string>

namespace countersign {
namespace {

test::CommandOutput check(const std::string& arguments) {
  return test::run_command(test::quote(test::program().string()) + " check " + arguments);
}

std::string study(const char* name) {
  return test::quote((test::source_dir() / "testdata" / "studies" / name).string() + "/");
}

TEST(StudyCli, AWholeStudyFolderIsCheckedWithOneCommand) {
  const test::CommandOutput out = check(study("fern_lung_slab"));
  EXPECT_EQ(out.exit_code, 0) << out.out << out.err;
  EXPECT_EQ(out.err.find("skipped"), std::string::npos) << out.err;  // CT and RS files are the study
  EXPECT_NE(out.out.find("Patient study: CT series"), std::string::npos) << out.out;
  EXPECT_NE(out.out.find("CT-rad"), std::string::npos);
  EXPECT_NE(out.out.find("medium: radiological depth from the CT"), std::string::npos);
}

TEST(StudyCli, JsonHasThePatientObject) {
  const test::CommandOutput out = check("--json " + study("fern_lung_slab"));
  ASSERT_EQ(out.exit_code, 0) << out.err;
  const nlohmann::json plan = nlohmann::json::parse(out.out)["plans"][0];
  EXPECT_EQ(plan["patient_study"]["used"], true);
  EXPECT_EQ(plan["heterogeneity_choice"], "epl");
  const nlohmann::json& ap = plan["beams"][0];
  EXPECT_EQ(ap["depth_source"], "ct_radiological");
  const nlohmann::json& p = ap["patient"];
  EXPECT_EQ(p["source"], "ct");
  EXPECT_EQ(p["body_source"], "rtstruct_external");
  EXPECT_EQ(p["heterogeneity_method"], "epl");
  // testdata/studies/EXPECTED_GEOMETRY.tsv (the generator's own polygons): SSD 880, depth 120,
  // radiological depth 92 mm.
  EXPECT_NEAR(p["ssd_cm"].get<double>(), 88.0, 0.01);
  EXPECT_NEAR(p["depth_cm"].get<double>(), 12.0, 0.01);
  EXPECT_NEAR(p["radiological_depth_cm"].get<double>(), 9.2, 0.01);
  EXPECT_NEAR(p["plan_ssd_cm"].get<double>(), 88.0, 0.01);
  EXPECT_EQ(p["missing_tissue_fraction"].get<double>(), 0.0);
  EXPECT_TRUE(p["homogeneous_dose_gy"].is_number());
  for (const char* key : {"ct_series_uid", "structure_set_uid", "plan_depth_cm", "plan_equivalent_depth_cm"})
    EXPECT_TRUE(p.contains(key)) << key;
}

TEST(StudyCli, WithoutAStudyEveryOutputSaysHomogeneousWater) {
  const std::string plan = test::quote(
      (test::source_dir() / "testdata" / "studies" / "fern_oblique" / "RP.fern_oblique.dcm").string());
  const test::CommandOutput out = check("--json " + plan);
  const nlohmann::json doc = nlohmann::json::parse(out.out)["plans"][0];
  EXPECT_EQ(doc["patient_study"]["used"], false);
  EXPECT_NE(doc["patient_study"]["explanation"].get<std::string>().find("homogeneous water"),
            std::string::npos);
  EXPECT_EQ(doc["beams"][0]["patient"]["source"], "plan");
  EXPECT_EQ(doc["beams"][0]["medium_description"], "homogeneous water with the plan's depths");
}

TEST(StudyCli, StudyOptionAndHeterogeneityChoice) {
  const std::string plan = test::quote(
      (test::source_dir() / "testdata" / "studies" / "fern_lung_slab" / "RP.fern_lung_4field.dcm").string());
  const test::CommandOutput out =
      check("--json --heterogeneity off --study " + study("fern_lung_slab") + " " + plan);
  const nlohmann::json ap = nlohmann::json::parse(out.out)["plans"][0]["beams"][0];
  EXPECT_EQ(ap["depth_source"], "ct_geometric");
  EXPECT_EQ(ap["patient"]["heterogeneity_method"], "off");
  // In water the lung beam's planned (heterogeneity-corrected) dose is 9.5 % above the computed one.
  EXPECT_EQ(ap["status"], "outside_tolerance");
}

test::CommandOutput explain(const std::string& arguments) {
  return test::run_command(test::quote(test::program().string()) + " explain " + arguments);
}

TEST(StudyCli, ExplainTakesTheStudyAsCheckDoes) {
  const std::string plan = test::quote(
      (test::source_dir() / "testdata" / "studies" / "fern_lung_slab" / "RP.fern_lung_4field.dcm").string());
  const test::CommandOutput with = explain(plan + " --beam 1 --json --study " + study("fern_lung_slab"));
  ASSERT_EQ(with.exit_code, 0) << with.out << with.err;
  const nlohmann::json j = nlohmann::json::parse(with.out);
  EXPECT_EQ(j["patient_study"]["used"], true);
  EXPECT_EQ(j["patient"]["source"], "ct");
  // testdata/studies/EXPECTED_GEOMETRY.tsv: the AP beam's radiological depth 92 mm.
  EXPECT_NEAR(j["patient"]["radiological_depth_cm"].get<double>(), 9.2, 0.01);
  const test::CommandOutput checked = check("--json --study " + study("fern_lung_slab") + " " + plan);
  const nlohmann::json c = nlohmann::json::parse(checked.out)["plans"][0]["beams"][0];
  EXPECT_EQ(j["status"], c["status"]);
  EXPECT_DOUBLE_EQ(j["deviation_percent"].get<double>(), c["deviation_percent"].get<double>());

  const test::CommandOutput text = explain(plan + " --beam 1 --study " + study("fern_lung_slab"));
  EXPECT_NE(text.out.find("Patient study: CT series"), std::string::npos) << text.out;
  // Without --study: water with the plan's depths, said in the output, as `check PLAN` does.
  const test::CommandOutput without = explain(plan + " --beam 1 --json");
  const nlohmann::json w = nlohmann::json::parse(without.out);
  EXPECT_EQ(w["patient_study"]["used"], false);
  EXPECT_NE(w["patient_study"]["explanation"].get<std::string>().find("--study"), std::string::npos);
  EXPECT_NE(w["patient"]["source"], "ct");
}

}  // namespace
}  // namespace countersign
