// CT number to relative electron density tables (beamdata/FORMAT.md): loading, the lookup that
// chooses the station's table or the default, clamping outside the table, validation, and their
// place in the library's SHA-256.
#include <countersign/beamdata/ct_density.hpp>
#include <countersign/beamdata/library.hpp>
#include <countersign/beamdata/validation.hpp>

#include "beamdata/library_fixture.hpp"

#include <gtest/gtest.h>

#include <cmath>

namespace countersign::beamdata {
namespace {

namespace fs = std::filesystem;
using testing::TempDir;

std::string problems_of(const ValidationReport& report) {
  std::string all;
  for (const auto& p : report.problems) all += p.text() + "\n";
  return all;
}

const CtDensityTable table{"ct/default.csv", "", {-1000, 0, 1000}, {0.001, 1.0, 1.5}};

TEST(CtDensityTable, InterpolatesLinearlyBetweenRows) {
  // Hand calculation: halfway between 0 HU (1.0) and 1000 HU (1.5).
  EXPECT_DOUBLE_EQ(table.density(500).relative_electron_density, 1.25);
  EXPECT_FALSE(table.density(500).clamped);
  EXPECT_DOUBLE_EQ(table.density(0).relative_electron_density, 1.0);
  EXPECT_DOUBLE_EQ(table.density(-1000).relative_electron_density, 0.001);
  EXPECT_FALSE(table.density(-1000).clamped);
  EXPECT_DOUBLE_EQ(table.density(1000).relative_electron_density, 1.5);
  EXPECT_FALSE(table.density(1000).clamped);
}

TEST(CtDensityTable, ClampsOutsideTheTableAndSaysSo) {
  // The format: below the first row the first row's density, above the last row the last's.
  EXPECT_DOUBLE_EQ(table.density(-1024).relative_electron_density, 0.001);
  EXPECT_TRUE(table.density(-1024).clamped);
  EXPECT_DOUBLE_EQ(table.density(3071).relative_electron_density, 1.5);
  EXPECT_TRUE(table.density(3071).clamped);
  EXPECT_TRUE(table.density(std::nan("")).clamped);
}

TEST(CtDensityTables, ChoosesTheStationTableElseTheDefault) {
  CtDensityTables tables;
  tables.tables.push_back(table);
  tables.tables.push_back(CtDensityTable{"ct/CT-NORTH.csv", "CT-NORTH", {-1000, 0, 2000}, {0.0, 1.0, 2.0}});
  ASSERT_NE(tables.for_station("CT-NORTH"), nullptr);
  EXPECT_EQ(tables.for_station("CT-NORTH")->file, "ct/CT-NORTH.csv");
  EXPECT_EQ(tables.for_station(" CT-NORTH  ")->file, "ct/CT-NORTH.csv");  // DICOM padding is not significant
  EXPECT_EQ(tables.for_station("ct-north")->file, "ct/default.csv");      // otherwise exact
  EXPECT_EQ(tables.for_station("")->file, "ct/default.csv");
  CtDensityTables stations_only;
  stations_only.tables.push_back(tables.tables.back());
  EXPECT_EQ(stations_only.for_station("CT-SOUTH"), nullptr);
}

TEST(CtDensityLibrary, DemoTableLoadsAndIsPlausible) {
  const auto library = load_library(testing::demo_library());
  ASSERT_TRUE(library) << library.error().message();
  const CtDensityTable* t = library->ct.for_station("ANY-SCANNER");
  ASSERT_NE(t, nullptr);
  EXPECT_EQ(t->file, "ct/default.csv");
  EXPECT_TRUE(t->station.empty());
  // Water 1.0 (the format's rule); air near 0 and cortical bone about 1.5 to 1.8 (from memory).
  EXPECT_NEAR(t->density(0).relative_electron_density, 1.0, 0.02);
  EXPECT_LT(t->density(-1000).relative_electron_density, 0.01);
  EXPECT_GT(t->density(1200).relative_electron_density, 1.5);
  EXPECT_LT(t->density(1200).relative_electron_density, 1.8);
}

TEST(CtDensityLibrary, StationTablesAreReadAndBelongToTheFingerprint) {
  const TempDir dir;
  testing::copy_demo_library(dir.path());
  const auto before = load_library(dir.path());
  ASSERT_TRUE(before);
  testing::write_text(dir.path() / "ct/CT-NORTH.csv",
                      "hu,relative_electron_density\r\n-1000,0.0\r\n0,1.01\r\n3000,2.4\r\n");
  const auto after = load_library(dir.path());
  ASSERT_TRUE(after) << after.error().message();
  EXPECT_NE(after->sha256_hex, before->sha256_hex);
  EXPECT_EQ(after->ct.for_station("CT-NORTH")->file, "ct/CT-NORTH.csv");
  // A library without a ct folder keeps its fingerprint: the tables only add to it.
  fs::remove_all(dir.path() / "ct");
  const auto without = load_library(dir.path());
  ASSERT_TRUE(without);
  EXPECT_EQ(without->sha256_hex, load_library(dir.path() / "FERN-LINAC-1")->sha256_hex);
  EXPECT_TRUE(without->ct.empty());
}

TEST(CtDensityLibrary, EveryRuleOfTheFormatIsChecked) {
  const std::vector<std::pair<std::string, std::string>> cases = {
      {"hu,relative_electron_density\n-1000,0\n0,1.05\n1000,1.5\n",
       "relative_electron_density: water (0 HU) maps to 1.05, expected 1 within 2 %"},
      {"hu,relative_electron_density\n-1000,0\n-500,0.5\n", "the table does not cover water (0 HU)"},
      {"hu,relative_electron_density\n-1000,0\n0,1\n0,1.01\n", "hu not strictly increasing (0 after 0)"},
      {"hu,density\n-1000,0\n0,1\n", "header must be 'hu,relative_electron_density'"},
      {"hu,relative_electron_density\n-1000,0\n0,1\n1000,150\n",
       "relative_electron_density 150 outside the plausible range [0, 5]: looks like a percentage"},
      {"hu,relative_electron_density\n-1000,0\n0,1\n1000,,\n", "3 cells, expected 2"},
  };
  for (const auto& [csv, expected] : cases) {
    SCOPED_TRACE(csv);
    const TempDir dir;
    testing::copy_demo_library(dir.path());
    testing::write_text(dir.path() / "ct/default.csv", csv);
    const auto report = validate_library(dir.path());
    EXPECT_NE(problems_of(report).find((dir.path() / "ct/default.csv").string()), std::string::npos);
    EXPECT_NE(problems_of(report).find(expected), std::string::npos) << problems_of(report);
    EXPECT_FALSE(load_library(dir.path()));
  }
  // Density falling as HU rises is valid but suspicious: a warning.
  const TempDir dir;
  testing::copy_demo_library(dir.path());
  testing::write_text(dir.path() / "ct/default.csv",
                      "hu,relative_electron_density\n-1000,0\n0,1\n500,1.3\n700,1.2\n");
  const auto report = validate_library(dir.path());
  EXPECT_EQ(report.error_count(), 0u) << problems_of(report);
  EXPECT_NE(problems_of(report).find(
                "warning: row 5, column 2: relative_electron_density: density falls from 1.3 to 1.2"),
            std::string::npos)
      << problems_of(report);
  // Something that is not a table in ct/ is named and ignored.
  testing::write_text(dir.path() / "ct/notes.txt", "calibrated 2026");
  EXPECT_NE(
      problems_of(validate_library(dir.path())).find("ct/notes.txt: warning: ct: not a .csv table, ignored"),
      std::string::npos);
}

}  // namespace
}  // namespace countersign::beamdata
