// The optional keys of the format's additions (beamdata/FORMAT.md "Optional keys"): read into the
// library's value types when present, std::nullopt when absent (never a silent value), refused
// when present but unusable.
#include <countersign/beamdata/library.hpp>
#include <countersign/beamdata/validation.hpp>

#include "beamdata/library_fixture.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <sstream>
#include <vector>

namespace countersign::beamdata {
namespace {

namespace fs = std::filesystem;
using testing::TempDir;

fs::path manifest_of(const TempDir& dir) { return dir.path() / "TEST-LINAC-H/machine.toml"; }

// The hand library with `text` inserted after the given line of its manifest.
void insert_after(const TempDir& dir, const std::string& line, const std::string& text) {
  testing::replace_in_file(manifest_of(dir), line + "\n", line + "\n" + text);
}

std::string problems_of(const ValidationReport& report) {
  std::string all;
  for (const auto& p : report.problems) all += p.text() + "\n";
  return all;
}

TEST(Additions, AbsentKeysAreNulloptAndTheDefaultsSayTheyAreDefaults) {
  const TempDir dir;
  testing::write_hand_library(dir.path());
  const auto library = load_library(dir.path());
  ASSERT_TRUE(library) << library.error().message();
  const BeamData& b = library->machines.front().beams.front();
  EXPECT_FALSE(b.mlc_transmission);
  EXPECT_FALSE(b.mlc_leaf_end_offset_mm);
  EXPECT_FALSE(b.head_scatter_field);
  EXPECT_EQ(b.head_scatter_field_in_force(), HeadScatterField::jaws);  // the format's stated default
  EXPECT_FALSE(b.ssd_range_cm);
  EXPECT_FALSE(b.block_transmission);
  EXPECT_FALSE(b.wedge("WX30")->orientation_table);
  // Calibration at SSD 100 cm, depth 1.5 cm, SAD 100 cm: 101.5 differs from the SAD, so the rule
  // gives SSD, and the result records that it came from the rule.
  EXPECT_FALSE(b.calibration.stated_geometry);
  EXPECT_TRUE(b.calibration.geometry_defaulted());
  EXPECT_EQ(b.calibration.geometry, CalibrationGeometry::ssd);
  EXPECT_TRUE(library->machines.front().aliases.empty());
  EXPECT_TRUE(library->machines.front().electron_beams.empty());
  EXPECT_TRUE(library->ct.empty());
}

TEST(Additions, DefaultGeometryRuleIsSadWhenThePointIsAtTheSad) {
  // The format's rule: SSD when ssd_cm + depth_cm differs from sad_cm, else SAD.
  EXPECT_EQ(default_calibration_geometry(100.0, 1.5, 100.0), CalibrationGeometry::ssd);
  EXPECT_EQ(default_calibration_geometry(95.0, 5.0, 100.0), CalibrationGeometry::sad);
  EXPECT_EQ(default_calibration_geometry(90.0, 10.0, 100.0), CalibrationGeometry::sad);
  EXPECT_EQ(default_calibration_geometry(90.0, 10.05, 100.0), CalibrationGeometry::ssd);

  const TempDir dir;
  testing::write_hand_library(dir.path());
  testing::replace_in_file(manifest_of(dir), "ssd_cm = 100.0\ndepth_cm = 1.5",
                           "ssd_cm = 95.0\ndepth_cm = 5.0");
  const auto library = load_library(dir.path());
  ASSERT_TRUE(library) << library.error().message();
  const Calibration& c = library->machines.front().beams.front().calibration;
  EXPECT_EQ(c.geometry, CalibrationGeometry::sad);
  EXPECT_TRUE(c.geometry_defaulted());
}

TEST(Additions, EveryOptionalKeyIsReadIntoTheValueTypes) {
  const TempDir dir;
  testing::write_hand_library(dir.path());
  insert_after(
      dir, "pdd_ssd_cm = 100.0",
      "mlc_transmission = 0.016\nmlc_leaf_end_offset_mm = 0.8\nhead_scatter_field = \"jaws_and_mlc\"\n"
      "ssd_range_cm = [80.0, 120]\nblock_transmission = 0.03\n");
  insert_after(dir, "depth_cm = 1.5", "geometry = \"SAD\"");
  insert_after(dir, "sad_cm = 100", "aliases = [\"TLH\", \"Test Linac H\"]");
  const auto library = load_library(dir.path());
  ASSERT_TRUE(library) << library.error().message();
  const BeamData& b = library->machines.front().beams.front();
  EXPECT_DOUBLE_EQ(b.mlc_transmission.value(), 0.016);
  EXPECT_DOUBLE_EQ(b.mlc_leaf_end_offset_mm.value(), 0.8);
  EXPECT_EQ(b.head_scatter_field.value(), HeadScatterField::jaws_and_mlc);
  EXPECT_DOUBLE_EQ(b.ssd_range_cm->min_cm, 80.0);
  EXPECT_DOUBLE_EQ(b.ssd_range_cm->max_cm, 120.0);
  EXPECT_TRUE(b.ssd_range_cm->contains(120.0));
  EXPECT_FALSE(b.ssd_range_cm->contains(120.1));
  EXPECT_DOUBLE_EQ(b.block_transmission.value(), 0.03);
  EXPECT_EQ(b.calibration.stated_geometry, CalibrationGeometry::sad);
  EXPECT_FALSE(b.calibration.geometry_defaulted());
  EXPECT_EQ(b.calibration.geometry, CalibrationGeometry::sad);
  // Stated SAD while the point lies at 101.5 cm: valid but suspicious, so a warning.
  ASSERT_EQ(library->warnings.size(), 1u);
  EXPECT_NE(library->warnings.front().text().find("not at the SAD"), std::string::npos);
  // Aliases are exact, case-sensitive names of the same machine.
  EXPECT_NE(library->match("TLH", "PHOTON", 6.0).beam, nullptr);
  EXPECT_NE(library->match("Test Linac H", "PHOTON", 6.0).beam, nullptr);
  EXPECT_EQ(library->match("tlh", "PHOTON", 6.0).failure, MatchFailure::unknown_machine);
}

TEST(Additions, UnusableOptionalValuesAreErrorsNamingTheKey) {
  const std::vector<std::pair<std::string, std::string>> cases = {
      {"head_scatter_field = \"mlc\"",
       "beam[1].head_scatter_field: \"mlc\" is not one of \"jaws\", \"jaws_and_mlc\""},
      {"ssd_range_cm = [120.0, 80.0]",
       "beam[1].ssd_range_cm: [120, 80]: the first value must be below the second"},
      {"ssd_range_cm = [80.0]", "beam[1].ssd_range_cm: not an array of two numbers"},
      {"ssd_range_cm = [800.0, 1200.0]",
       "beam[1].ssd_range_cm: 800 is outside the plausible range [50, 200]"},
      {"block_transmission = 3.0", "beam[1].block_transmission: 3 is outside the plausible range [0, 0.2]"},
      {"mlc_leaf_end_offset_mm = 8",
       "beam[1].mlc_leaf_end_offset_mm: 8 is outside the plausible range [-5, 5]"},
      {"mlc_transmission = \"1.5%\"", "beam[1].mlc_transmission: not a number"},
  };
  for (const auto& [line, expected] : cases) {
    SCOPED_TRACE(line);
    const TempDir dir;
    testing::write_hand_library(dir.path());
    insert_after(dir, "pdd_ssd_cm = 100.0", line + "\n");
    const auto report = validate_library(dir.path());
    EXPECT_NE(problems_of(report).find(expected), std::string::npos) << problems_of(report);
    EXPECT_FALSE(load_library(dir.path()));
  }
  const TempDir dir;
  testing::write_hand_library(dir.path());
  insert_after(dir, "depth_cm = 1.5", "geometry = \"ISO\"");
  EXPECT_NE(
      problems_of(validate_library(dir.path())).find("beam[1].calibration.geometry: \"ISO\" is not one of"),
      std::string::npos);
}

TEST(Additions, DemoLibraryCarriesEveryAddition) {
  const auto library = load_library(testing::demo_library());
  ASSERT_TRUE(library) << library.error().message();
  for (const auto& b : library->machines.front().beams) {
    SCOPED_TRACE(b.id);
    EXPECT_TRUE(b.mlc_leaf_end_offset_mm);
    EXPECT_EQ(b.head_scatter_field, HeadScatterField::jaws);
    ASSERT_TRUE(b.ssd_range_cm);
    // The demo plans include a beam at SSD 120 cm and arcs at 90 cm: inside the trusted range.
    EXPECT_TRUE(b.ssd_range_cm->contains(120.0));
    EXPECT_TRUE(b.ssd_range_cm->contains(90.0));
    EXPECT_TRUE(b.block_transmission);
    EXPECT_EQ(b.calibration.stated_geometry, CalibrationGeometry::ssd);
    ASSERT_NE(b.wedge("W30"), nullptr);
    ASSERT_TRUE(b.wedge("W30")->orientation_table);
    const Table2D& profile = *b.wedge("W30")->orientation_table;
    EXPECT_EQ(profile.column_axis_name(), "wedge_axis_cm");
    // Thin end negative: more dose at -10 cm than at +10 cm at 10 cm depth; 1 on the axis.
    EXPECT_GT(profile.at(10.0, -10.0).value, 1.0);
    EXPECT_LT(profile.at(10.0, 10.0).value, 1.0);
    EXPECT_DOUBLE_EQ(profile.at(10.0, 0.0).value, 1.0);
  }
  ASSERT_NE(library->ct.default_table(), nullptr);
}

TEST(Additions, WedgeOrientationTableRules) {
  const TempDir dir;
  const fs::path machine = testing::copy_demo_library(dir.path());
  // Reversed (thin end positive): a warning, the library still loads.
  const std::string text = testing::read_text(machine / "6X/w30_profile.csv");
  {
    // Mirror every row: write the columns in reverse order under the same header.
    std::istringstream in(text);
    std::string out, line;
    while (std::getline(in, line)) {
      if (line.empty() || line[0] == '#' || line.rfind("depth_cm", 0) == 0) {
        out += line + "\n";
        continue;
      }
      std::vector<std::string> cells;
      std::istringstream row(line);
      for (std::string cell; std::getline(row, cell, ',');) cells.push_back(cell);
      std::reverse(cells.begin() + 1, cells.end());
      for (std::size_t i = 0; i < cells.size(); ++i) out += (i ? "," : "") + cells[i];
      out += "\n";
    }
    testing::write_text(machine / "6X/w30_profile.csv", out);
  }
  auto report = validate_library(dir.path());
  EXPECT_NE(problems_of(report).find(
                "warning: row 4: wedge_oar: wedge W30: the profile is higher on the positive side"),
            std::string::npos)
      << problems_of(report);
  EXPECT_EQ(report.error_count(), 0u);
  // Not 1 on the central axis: an error.
  const std::size_t row = testing::set_cell(machine / "6X/w30_profile.csv", "10", 17, "1.0300");
  report = validate_library(dir.path());
  EXPECT_NE(
      problems_of(report).find("row " + std::to_string(row) +
                               ", column 17: wedge_oar: wedged off-axis ratio on the central axis is 1.03"),
      std::string::npos)
      << problems_of(report);
}

}  // namespace
}  // namespace countersign::beamdata
