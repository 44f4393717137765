// `countersign check` end to end on the INVENTED demo plans (testdata/plans) and the bundled demo
// library: the verdicts, exit codes, JSON keys, bad files, and a second library in the shared format.

#include "support/paths.hpp"

#include <nlohmann/json.hpp>

#include <gtest/gtest.h>

#include <fstream>
#include <regex>
#include <sstream>

namespace countersign {
namespace {

namespace fs = std::filesystem;

test::CommandOutput check(const std::string& arguments) {
  return test::run_command(test::quote(test::program().string()) + " check " + arguments);
}

std::string plan_path(const std::string& name) {
  return test::quote((test::source_dir() / "testdata" / "plans" / name).string());
}

nlohmann::json json_of(const test::CommandOutput& out) { return nlohmann::json::parse(out.out); }

// The demo box has one beam whose MU are about 7 % too high (LAT-L, see tools/make_demo_plans).
TEST(CheckCli, DemoBoxFlagsTheWrongBeam) {
  const auto out = check("--json " + plan_path("fern_box_4field.dcm"));
  EXPECT_EQ(out.exit_code, 1) << out.err;
  const auto j = json_of(out);
  const auto& plan = j.at("plans").at(0);
  EXPECT_EQ(plan.at("status"), "outside_tolerance");
  int outside = 0;
  for (const auto& beam : plan.at("beams")) {
    if (beam.at("status") == "outside_tolerance") {
      ++outside;
      EXPECT_EQ(beam.at("beam_name"), "LAT-L");
      EXPECT_EQ(beam.at("reason"), "deviation_exceeds_tolerance");
      EXPECT_GT(beam.at("deviation_percent").get<double>(), 5.0);
    } else {
      EXPECT_EQ(beam.at("status"), "within_tolerance");
    }
  }
  EXPECT_EQ(outside, 1);
}

TEST(CheckCli, EveryOtherDemoPlanPasses) {
  for (const auto& entry : fs::directory_iterator(test::source_dir() / "testdata" / "plans")) {
    if (entry.path().extension() != ".dcm" || entry.path().filename() == "fern_box_4field.dcm" ||
        entry.path().filename() == "fern_electron_mu_error.dcm")
      continue;
    const auto out = check("--json " + test::quote(entry.path().string()));
    EXPECT_EQ(out.exit_code, 0) << entry.path() << "\n" << out.out.substr(0, 2000) << out.err;
  }
}

// The electron demo plans (issue 19): the deliberate +8 % MU error is flagged; the chest wall at SSD
// 105 cm with an elongated cutout is checked with the electron form and shows its factors.
TEST(CheckCli, ElectronDemoPlans) {
  const auto flagged = check("--json " + plan_path("fern_electron_mu_error.dcm"));
  EXPECT_EQ(flagged.exit_code, 1) << flagged.err;
  const auto wrong = json_of(flagged).at("plans").at(0).at("beams").at(0);
  EXPECT_EQ(wrong.at("status"), "outside_tolerance");
  EXPECT_EQ(wrong.at("reason"), "deviation_exceeds_tolerance");
  EXPECT_NEAR(wrong.at("deviation_percent").get<double>(), 8.0, 1.5);

  const auto out = check("--json " + plan_path("fern_electron_chestwall.dcm"));
  EXPECT_EQ(out.exit_code, 0) << out.out.substr(0, 2000) << out.err;
  const auto beam = json_of(out).at("plans").at(0).at("beams").at(0);
  EXPECT_EQ(beam.at("method"), "electron");
  EXPECT_EQ(beam.at("electron").at("applicator_id"), "A15");
  EXPECT_EQ(beam.at("electron").at("cutout_method"), "square_root_rule");
  EXPECT_NEAR(beam.at("electron").at("air_gap_cm").get<double>(), 5.0, 1e-6);
  EXPECT_LT(beam.at("factors").at("inverse_square").get<double>(), 1.0);
  EXPECT_TRUE(beam.at("provenance").at("cutout").at("lookup").contains("axes"));

  const auto scar = check("--json " + plan_path("fern_electron_scar.dcm"));
  EXPECT_EQ(scar.exit_code, 0) << scar.out.substr(0, 2000) << scar.err;
  const auto bolus = json_of(scar).at("plans").at(0).at("beams").at(0).at("electron");
  EXPECT_EQ(bolus.at("bolus_id"), "FERN-BOLUS-5MM");
  EXPECT_NEAR(bolus.at("depth_cm").get<double>(), 1.0, 1e-6);  // 0.5 cm below the skin + 0.5 cm bolus
}

TEST(CheckCli, TextTableAndCaution) {
  const auto out = check(plan_path("fern_setup_beam.dcm"));
  EXPECT_EQ(out.exit_code, 0) << out.err;
  EXPECT_NE(out.out.find("within_tolerance"), std::string::npos);
  EXPECT_NE(out.out.find("setup_beam"), std::string::npos);
  EXPECT_NE(out.out.find("does not replace"), std::string::npos);
}

// The keys of `check --json` (documented in the README, "JSON output"): a change is a breaking change.
TEST(CheckCli, JsonKeys) {
  const auto out = check("--json " + plan_path("fern_wedged_pair.dcm") + " " + plan_path("fern_two_arc.dcm"));
  ASSERT_EQ(out.exit_code, 0) << out.err;
  const auto j = json_of(out);
  for (const char* key : {"plans", "errors", "exit_code", "caution"}) EXPECT_TRUE(j.contains(key)) << key;
  ASSERT_EQ(j.at("plans").size(), 2u);
  for (const auto& plan : j.at("plans")) {
    for (const char* key : {"source_file", "sop_instance_uid", "patient_id", "plan_label", "status", "reason",
                            "explanation", "beams", "dose_references", "beamdata_sha256", "tolerance_policy",
                            "heterogeneity_choice", "patient_study"}) {
      EXPECT_TRUE(plan.contains(key)) << key;
    }
    EXPECT_EQ(plan.at("beamdata_sha256").get<std::string>().size(), 64u);
    for (const auto& beam : plan.at("beams")) {
      for (const char* key : {"beam_number",
                              "beam_name",
                              "status",
                              "reason",
                              "explanation",
                              "planned_dose_gy",
                              "computed_dose_gy",
                              "deviation_percent",
                              "tolerance_percent",
                              "meterset_mu",
                              "independent_mu",
                              "method",
                              "depth_cm",
                              "depth_source",
                              "spd_cm",
                              "off_axis_cm",
                              "fields",
                              "factors",
                              "segments",
                              "approximations",
                              "provenance",
                              "medium_description",
                              "homogeneous_dose_gy",
                              "patient"}) {
        EXPECT_TRUE(beam.contains(key)) << key;
      }
      EXPECT_EQ(beam.at("patient").at("source"), "plan");  // no CT study given
      EXPECT_TRUE(beam.at("method") == "tmr" || beam.at("method") == "pdd");
      if (!beam.at("modulated").get<bool>()) {
        for (const char* key : {"output_cgy_per_mu", "sc", "sp", "tmr", "pdd_percent", "mayneord_f", "oar",
                                "wedge", "tray", "inverse_square"}) {
          EXPECT_TRUE(beam.at("factors").contains(key)) << key;
        }
        EXPECT_DOUBLE_EQ(beam.at("factors").at("wedge").get<double>(), 0.660);  // W30 of the demo library
        EXPECT_TRUE(beam.at("provenance").at("tmr").at("lookup").contains("axes"));
      } else {
        EXPECT_GT(beam.at("segments").size(), 1u);
      }
    }
    for (const auto& ref : plan.at("dose_references")) {
      for (const char* key : {"number", "planned_dose_gy", "computed_dose_gy", "deviation_percent"}) {
        EXPECT_TRUE(ref.contains(key)) << key;
      }
    }
  }
}

TEST(CheckCli, ExtendedSsdUsesThePddForm) {
  const auto out = check("--json " + plan_path("fern_extended_ssd.dcm"));
  ASSERT_EQ(out.exit_code, 0) << out.err;
  const auto beam = json_of(out).at("plans").at(0).at("beams").at(0);
  EXPECT_EQ(beam.at("method"), "pdd");
  EXPECT_GT(beam.at("factors").at("mayneord_f").get<double>(), 1.0);  // SSD 120 cm > table's 100 cm
  EXPECT_DOUBLE_EQ(beam.at("factors").at("tray").get<double>(), 0.970);
}

// A bad file is reported (file and attribute with tag) and the other plans are still checked.
TEST(CheckCli, BadFileDoesNotStopTheOthers) {
  const std::string bad =
      (test::source_dir() / "testdata" / "malformed" / "missing_beam_sequence.dcm").string();
  const auto out = check(test::quote(bad) + " " + plan_path("fern_half_beam.dcm"));
  EXPECT_EQ(out.exit_code, 3);
  EXPECT_NE(out.err.find("missing_beam_sequence.dcm"), std::string::npos) << out.err;
  EXPECT_NE(out.err.find("(300A,00B0)"), std::string::npos) << out.err;
  EXPECT_NE(out.out.find("HALFBEAM"), std::string::npos);
  EXPECT_NE(out.out.find("within_tolerance"), std::string::npos);
  const auto missing = check("/no/such/plan.dcm");
  EXPECT_EQ(missing.exit_code, 3);
  EXPECT_NE(missing.err.find("/no/such/plan.dcm"), std::string::npos);
}

TEST(CheckCli, UsageAndConfigurationErrors) {
  EXPECT_EQ(check("--beamdata /no/such/library " + plan_path("fern_half_beam.dcm")).exit_code, 3);
  EXPECT_EQ(check("--method exotic " + plan_path("fern_half_beam.dcm")).exit_code, 3);
  EXPECT_EQ(check("--policy /no/such/policy.toml " + plan_path("fern_half_beam.dcm")).exit_code, 3);
  EXPECT_EQ(check("").exit_code, 3);
}

struct LibraryCopy : ::testing::Test {
  fs::path dir = test::make_temp_dir("countersign-library");
  void SetUp() override {
    fs::copy(test::source_dir() / "beamdata" / "FERN-LINAC-1", dir / "FERN-LINAC-1",
             fs::copy_options::recursive);
  }
  ~LibraryCopy() override { fs::remove_all(dir); }
  void edit_manifest(const std::string& from, const std::string& to) {
    const fs::path manifest = dir / "FERN-LINAC-1" / "machine.toml";
    std::ifstream in(manifest);
    std::stringstream text;
    text << in.rdbuf();
    in.close();
    std::ofstream(manifest) << std::regex_replace(text.str(), std::regex(from), to);
  }
};

// A second library in the shared format is used as given: with every output 5 % higher the computed
// doses rise by 5 % and the simple beams fall outside their 2 % tolerance.
TEST_F(LibraryCopy, ASecondLibraryIsUsedUnchanged) {
  edit_manifest("output_cgy_per_mu = 1\\.000", "output_cgy_per_mu = 1.050");
  const auto out =
      check("--json --beamdata " + test::quote(dir.string()) + " " + plan_path("fern_dosepoint_beam.dcm"));
  EXPECT_EQ(out.exit_code, 1) << out.err;
  const auto beam = json_of(out).at("plans").at(0).at("beams").at(0);
  EXPECT_NEAR(beam.at("deviation_percent").get<double>(), 5.0, 0.2);
}

TEST_F(LibraryCopy, UnknownMachineIsNotChecked) {
  edit_manifest("machine = \"FERN-LINAC-1\"", "machine = \"OTHER-LINAC-2\"");
  const auto out =
      check("--json --beamdata " + test::quote(dir.string()) + " " + plan_path("fern_half_beam.dcm"));
  EXPECT_EQ(out.exit_code, 2) << out.err;
  const auto plan = json_of(out).at("plans").at(0);
  EXPECT_EQ(plan.at("status"), "not_checked");
  EXPECT_EQ(plan.at("beams").at(0).at("reason"), "unknown_machine");
}

TEST(CheckCli, PolicyFileChangesTheVerdict) {
  const fs::path dir = test::make_temp_dir("countersign-policy");
  std::ofstream(dir / "loose.toml") << "[tolerance_percent]\nsimple = 10.0\n";
  const auto out = check("--policy " + test::quote((dir / "loose.toml").string()) + " " +
                         plan_path("fern_box_4field.dcm"));
  EXPECT_EQ(out.exit_code, 0) << out.out;
  fs::remove_all(dir);
}

TEST(CheckCli, MethodAndDepthOptions) {
  const auto pdd = check("--json --method pdd " + plan_path("fern_dosepoint_beam.dcm"));
  ASSERT_EQ(pdd.exit_code, 0) << pdd.err;
  EXPECT_EQ(json_of(pdd).at("plans").at(0).at("beams").at(0).at("method"), "pdd");
  const auto eq = check("--json --depth equivalent " + plan_path("fern_dosepoint_beam.dcm"));
  const auto beam = json_of(eq).at("plans").at(0).at("beams").at(0);
  if (beam.at("plan_equivalent_depth_cm").is_null()) {
    EXPECT_EQ(eq.exit_code, 2);
    EXPECT_EQ(beam.at("reason"), "missing_plan_data");
  } else {
    EXPECT_EQ(beam.at("depth_kind"), "equivalent");
  }
}

}  // namespace
}  // namespace countersign
