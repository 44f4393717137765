// `countersign show` as a user runs it: the built program, its output and its exit codes.

#include "support/paths.hpp"

#include <gtest/gtest.h>
#include <nlohmann/json.hpp>

#include <filesystem>
#include <fstream>
#include <sstream>

namespace countersign::test {
namespace {

namespace fs = std::filesystem;

CommandOutput show(const std::string& arguments) {
  return run_command(quote(program().string()) + " show " + arguments);
}

std::string plan_path(const std::string& name) { return (source_dir() / "testdata/plans" / name).string(); }

TEST(ShowCli, SummaryListsEveryBeamWithItsMeterset) {
  const auto result = show(quote(plan_path("fern_box_4field.dcm")));
  ASSERT_EQ(result.exit_code, 0) << result.err;
  EXPECT_TRUE(result.err.empty()) << result.err;  // no DCMTK log noise
  for (const char* expected :
       {"BOX4", "FERN-PH-0101", "AP", "LAT-L", "PA", "LAT-R", "FERN-LINAC-1", "67.70", "55.90"}) {
    EXPECT_NE(result.out.find(expected), std::string::npos) << expected << "\n" << result.out;
  }
}

TEST(ShowCli, SetupBeamsShowNoMeterset) {
  const auto result = show(quote(plan_path("fern_setup_beam.dcm")));
  ASSERT_EQ(result.exit_code, 0) << result.err;
  std::istringstream lines(result.out);
  bool found = false;
  for (std::string line; std::getline(lines, line);) {
    if (line.find("SETUP-LAT") == std::string::npos) continue;
    found = true;
    EXPECT_NE(line.find("SETUP"), std::string::npos);
    EXPECT_EQ(line.find("0.00"), std::string::npos) << "a setup beam must not show 0 MU: " << line;
  }
  EXPECT_TRUE(found) << result.out;
}

TEST(ShowCli, JsonHasTheDocumentedKeysAndNullForAbsentValues) {
  const auto result =
      show("--json " + quote("/usr/lib/python3/dist-packages/pydicom/data/test_files/rtplan.dcm"));
  ASSERT_EQ(result.exit_code, 0) << result.err;
  const auto json = nlohmann::json::parse(result.out);
  for (const char* key : {"label", "name", "sop_instance_uid", "patient_id", "approval_status"}) {
    EXPECT_TRUE(json.at("plan").contains(key)) << key;
  }
  const auto& dose_ref = json.at("dose_references").at(0);
  for (const char* key : {"number", "description", "type", "point_mm"})
    EXPECT_TRUE(dose_ref.contains(key)) << key;
  const auto& group = json.at("fraction_groups").at(0);
  EXPECT_EQ(group.at("number"), 1);
  EXPECT_EQ(group.at("fractions_planned"), 30);
  const auto& ref = group.at("beams").at(0);
  for (const char* key : {"beam_number", "meterset_mu", "dose_gy", "dose_point_mm", "dose_point_depth_mm",
                          "dose_point_equivalent_depth_mm", "dose_point_ssd_mm"}) {
    EXPECT_TRUE(ref.contains(key)) << key;
  }
  // rtplan.dcm has no dose-point depth anywhere: null, never 0.
  EXPECT_TRUE(ref.at("dose_point_depth_mm").is_null());
  EXPECT_TRUE(ref.at("dose_point_ssd_mm").is_null());
  EXPECT_DOUBLE_EQ(ref.at("meterset_mu").get<double>(), 116.0036697);
  const auto& beam = json.at("beams").at(0);
  for (const char* key :
       {"number", "name", "machine", "radiation_type", "delivery_type", "beam_type", "energy_mv", "sad_mm",
        "ssd_mm", "gantry_deg", "collimator_deg", "couch_deg", "isocenter_mm", "jaws_mm", "mlc_leaf_pairs",
        "wedges", "control_points", "patient_position", "dose_reference_points"}) {
    EXPECT_TRUE(beam.contains(key)) << key;
  }
  EXPECT_EQ(beam.at("mlc_leaf_pairs"), 0);
  EXPECT_EQ(beam.at("control_points"), 2);
  EXPECT_EQ(beam.at("patient_position"), "HFS");
  EXPECT_DOUBLE_EQ(beam.at("jaws_mm").at("x1").get<double>(), -100.0);
  for (const char* key : {"x1", "x2", "y1", "y2"}) EXPECT_TRUE(beam.at("jaws_mm").contains(key));
  const auto& point = beam.at("dose_reference_points").at(0);
  for (const char* key :
       {"dose_reference_number", "depth_mm", "equivalent_depth_mm", "ssd_mm", "final_coefficient"}) {
    EXPECT_TRUE(point.contains(key)) << key;
  }
  EXPECT_TRUE(point.at("depth_mm").is_null());
  EXPECT_DOUBLE_EQ(point.at("final_coefficient").get<double>(), 0.9990268);
}

TEST(ShowCli, JsonOfSeveralPlansIsAnArray) {
  const auto result =
      show("--json " + quote(plan_path("fern_half_beam.dcm")) + " " + quote(plan_path("fern_two_arc.dcm")));
  ASSERT_EQ(result.exit_code, 0) << result.err;
  const auto json = nlohmann::json::parse(result.out);
  ASSERT_TRUE(json.is_array());
  ASSERT_EQ(json.size(), 2u);
  EXPECT_EQ(json.at(1).at("beams").at(0).at("mlc_leaf_pairs"), 72);
  EXPECT_EQ(json.at(1).at("beams").at(0).at("control_points"), 18);
  EXPECT_EQ(json.at(0).at("beams").at(0).at("jaws_mm").at("x1"), 0.0);
}

TEST(ShowCli, EveryMalformedFileGivesExitThreeAndOneLineNamingFileAndAttribute) {
  const auto dir = source_dir() / "testdata/malformed";
  std::ifstream manifest(dir / "EXPECTED.tsv");
  ASSERT_TRUE(manifest);
  std::string line;
  bool header_seen = false;
  int files = 0;
  while (std::getline(manifest, line)) {
    if (line.empty() || line[0] == '#') continue;
    if (!header_seen) {
      header_seen = true;
      continue;
    }
    std::vector<std::string> cells;
    std::stringstream split(line);
    for (std::string cell; std::getline(split, cell, '\t');) cells.push_back(cell);
    ASSERT_GE(cells.size(), 3u);
    SCOPED_TRACE(cells[0]);
    ++files;
    const auto path = (dir / cells[0]).string();
    const auto result = show(quote(path));
    EXPECT_EQ(result.exit_code, 3) << result.err;
    EXPECT_TRUE(result.out.empty()) << result.out;
    EXPECT_NE(result.err.find(path), std::string::npos) << result.err;
    if (cells[1] != "-") {
      EXPECT_NE(result.err.find(cells[1] + " " + cells[2]), std::string::npos) << result.err;
    }
    EXPECT_EQ(std::count(result.err.begin(), result.err.end(), '\n'), 1) << result.err;
  }
  EXPECT_GE(files, 20);
}

TEST(ShowCli, ABadFileAmongGoodOnesStillShowsTheGoodOnesAndExitsThree) {
  const auto result = show(quote(plan_path("fern_wedged_pair.dcm")) + " " +
                           quote((source_dir() / "testdata/malformed/nan_beam_dose.dcm").string()));
  EXPECT_EQ(result.exit_code, 3);
  EXPECT_NE(result.out.find("RAO-W30"), std::string::npos);
  EXPECT_NE(result.err.find("BeamDose (300A,0084)"), std::string::npos) << result.err;
}

TEST(ShowCli, NoFileIsAUsageError) {
  const auto result = show("");
  EXPECT_EQ(result.exit_code, 3);
}

}  // namespace
}  // namespace countersign::test
