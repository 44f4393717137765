// `countersign explain` end to end on the INVENTED demo plans (testdata/plans) with the INVENTED
// demo library (beamdata/FERN-LINAC-1): the JSON keys (a contract, see the README), the text
// sections, and exit codes.

#include <support/paths.hpp>

#include <gtest/gtest.h>
#include <nlohmann/json.hpp>

#include <cmath>
#include <filesystem>

namespace countersign::test {
namespace {

std::filesystem::path demo_plan(const char* name) { return source_dir() / "testdata" / "plans" / name; }

CommandOutput explain(const std::string& arguments) {
  return run_command(quote(program().string()) + " explain " + arguments);
}

TEST(ExplainCli, JsonHasTheDocumentedKeys) {
  const auto plan = demo_plan("fern_box_4field.dcm");
  ASSERT_TRUE(std::filesystem::exists(plan)) << "committed demo plan missing: " << plan;
  const auto r = explain(quote(plan.string()) + " --beam 2 --json");
  ASSERT_EQ(r.exit_code, 1) << r.err;  // the demo's flagged beam: outside tolerance
  const auto j = nlohmann::json::parse(r.out);
  for (const char* key : {"source_file",
                          "sop_instance_uid",
                          "patient_id",
                          "plan_label",
                          "beam",
                          "status",
                          "reason",
                          "meterset_mu",
                          "planned_dose_gy",
                          "computed_dose_gy",
                          "deviation_percent",
                          "tolerance_percent",
                          "independent_mu",
                          "category",
                          "medium",
                          "tolerance_policy",
                          "calculation_problem",
                          "beam_data",
                          "geometry",
                          "method",
                          "factors",
                          "dose_per_mu_cgy",
                          "parts",
                          "scatter_comparison",
                          "formalisms",
                          "sensitivity",
                          "approximations",
                          "caution"}) {
    EXPECT_TRUE(j.contains(key)) << key;
  }
  EXPECT_EQ(j["status"], "outside_tolerance");
  EXPECT_EQ(j["beam"]["number"], 2);
  for (const char* key : {"patient_position",
                          "patient_to_table_top",
                          "gantry_deg",
                          "collimator_deg",
                          "couch_deg",
                          "isocenter_mm",
                          "dose_point_mm",
                          "dose_point_source",
                          "point_in_collimator_mm",
                          "spd_mm",
                          "ssd_mm",
                          "depth_mm",
                          "depth_source",
                          "depth_description",
                          "plan_depth_mm",
                          "off_axis_mm",
                          "iso_plane_x_mm",
                          "iso_plane_y_mm",
                          "edge_distance_mm",
                          "jaws",
                          "aperture_area_cm2",
                          "field_sizes"}) {
    EXPECT_TRUE(j["geometry"].contains(key)) << "geometry." << key;
  }
  for (const char* key :
       {"collimator_cm", "isocentre_cm", "surface_cm", "point_cm", "normalisation_depth_cm"}) {
    EXPECT_TRUE(j["geometry"]["field_sizes"].contains(key)) << key;
  }
  ASSERT_FALSE(j["factors"].empty());
  bool tmr_seen = false;
  for (const auto& f : j["factors"]) {
    for (const char* key :
         {"key", "name", "role", "value", "basis", "table_file", "quantity", "extrapolated", "axes"}) {
      EXPECT_TRUE(f.contains(key)) << key;
    }
    if (f["key"] == "tmr") {
      tmr_seen = true;
      EXPECT_EQ(f["table_file"], "10X/tmr.csv");
      ASSERT_EQ(f["axes"].size(), 2u);
      for (const char* key : {"axis", "query", "lower_index", "upper_index", "lower_node", "upper_node",
                              "lower_weight", "upper_weight", "extrapolated"}) {
        EXPECT_TRUE(f["axes"][0].contains(key)) << key;
      }
      EXPECT_EQ(f["axes"][0]["axis"], "depth_cm");
      EXPECT_DOUBLE_EQ(f["axes"][0]["query"].get<double>(), 15.0);  // the plan's 150 mm depth
    }
  }
  EXPECT_TRUE(tmr_seen);
  // Both formalisms, computed, and close to each other for this consistent (invented) library.
  const auto& fm = j["formalisms"];
  EXPECT_EQ(fm["tmr"]["method"], "tmr");
  EXPECT_EQ(fm["pdd"]["method"], "pdd");
  EXPECT_LT(std::abs(fm["difference_percent"].get<double>()), 1.0);
  // The sensitivity: three quantities, each with the change that reconciles.
  const auto& s = j["sensitivity"];
  ASSERT_EQ(s["changes"].size(), 3u);
  EXPECT_EQ(s["changes"][0]["quantity"], "depth");
  EXPECT_EQ(s["changes"][1]["quantity"], "ssd");
  EXPECT_EQ(s["changes"][2]["quantity"], "field_size");
  for (const auto& c : s["changes"]) {
    for (const char* key : {"baseline_cm", "change_cm", "reconciled_cm", "search_min_change_cm",
                            "search_max_change_cm", "extrapolated", "sentence"}) {
      EXPECT_TRUE(c.contains(key)) << key;
    }
  }
  // The demo beam's MU are 7 % high, so the computed dose is high: reconciling needs more depth,
  // a longer distance and a smaller field.
  EXPECT_GT(s["changes"][0]["change_cm"].get<double>(), 0.0);
  EXPECT_GT(s["changes"][1]["change_cm"].get<double>(), 0.0);
  EXPECT_LT(s["changes"][2]["change_cm"].get<double>(), 0.0);
  EXPECT_NEAR(s["planned_to_computed_ratio"].get<double>(), 1.0 / 1.07, 0.005);
  // Mostly inverse square: the distance must grow by about sqrt(1/ratio) (common practice, no source);
  // the field at the point grows with the distance too, adding a little scatter, hence the margin.
  const double ratio = s["planned_to_computed_ratio"].get<double>();
  const double spd_cm = j["geometry"]["spd_mm"].get<double>() / 10.0;
  EXPECT_NEAR(s["changes"][1]["change_cm"].get<double>(), spd_cm * (std::sqrt(1.0 / ratio) - 1.0), 0.3);
}

TEST(ExplainCli, TextShowsEverySection) {
  const auto plan = demo_plan("fern_box_4field.dcm");
  ASSERT_TRUE(std::filesystem::exists(plan)) << "committed demo plan missing: " << plan;
  const auto r = explain(quote(plan.string()) + " --beam 2");
  ASSERT_EQ(r.exit_code, 1) << r.err;
  for (const char* section :
       {"Outcome: OUTSIDE TOLERANCE", "Beam data", "Geometry", "patient position HFS", "Factors (tmr",
        "10X/tmr.csv", "weights", "Both formalisms", "PDD form - TMR form", "What would reconcile",
        "a depth change of", "an SSD change of", "a field-size change of", "does not replace"}) {
    EXPECT_NE(r.out.find(section), std::string::npos) << section;
  }
}

TEST(ExplainCli, WithinToleranceBeamExitsZero) {
  const auto plan = demo_plan("fern_box_4field.dcm");
  ASSERT_TRUE(std::filesystem::exists(plan)) << "committed demo plan missing: " << plan;
  const auto r = explain(quote(plan.string()) + " --beam 1 --json");
  EXPECT_EQ(r.exit_code, 0) << r.err;
  EXPECT_EQ(nlohmann::json::parse(r.out)["status"], "within_tolerance");
}

TEST(ExplainCli, UnknownBeamIsBadInputNamingTheFileAndAttribute) {
  const auto plan = demo_plan("fern_box_4field.dcm");
  ASSERT_TRUE(std::filesystem::exists(plan)) << "committed demo plan missing: " << plan;
  const auto r = explain(quote(plan.string()) + " --beam 77");
  EXPECT_EQ(r.exit_code, 3);
  EXPECT_NE(r.err.find("fern_box_4field.dcm"), std::string::npos) << r.err;
  EXPECT_NE(r.err.find("(300A,00C0)"), std::string::npos) << r.err;
}

TEST(ExplainCli, NotAPlanIsBadInput) {
  const auto r =
      explain(quote((source_dir() / "testdata" / "malformed" / "not_dicom.dcm").string()) + " --beam 1");
  EXPECT_EQ(r.exit_code, 3);
  EXPECT_NE(r.err.find("not_dicom.dcm"), std::string::npos) << r.err;
}

}  // namespace
}  // namespace countersign::test
