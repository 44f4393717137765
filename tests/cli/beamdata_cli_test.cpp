// `countersign beamdata ...` end to end, through the built program.
#include <countersign/beamdata/conversions.hpp>
#include <countersign/beamdata/csv.hpp>

#include "beamdata/library_fixture.hpp"
#include "support/paths.hpp"

#include <gtest/gtest.h>

#include <regex>
#include <string>

namespace countersign::cli {
namespace {

namespace fs = std::filesystem;
using countersign::test::quote;
using countersign::test::run_command;
namespace bt = countersign::beamdata::testing;

countersign::test::CommandOutput beamdata(const std::string& arguments) {
  return run_command(quote(countersign::test::program().string()) + " beamdata " + arguments);
}

const fs::path demo_6x() { return bt::demo_library() / "FERN-LINAC-1" / "6X"; }

TEST(BeamdataValidateCli, DemoLibraryIsCleanAndPrintsTheFingerprint) {
  const auto result = beamdata("validate " + quote(bt::demo_library().string()));
  EXPECT_EQ(result.exit_code, 0) << result.out << result.err;
  EXPECT_TRUE(std::regex_search(result.out, std::regex{"library SHA-256: [0-9a-f]{64}\n"})) << result.out;
  EXPECT_NE(result.out.find("clean"), std::string::npos);
}

TEST(BeamdataValidateCli, DamagedLibraryExitsThreeNamingFileRowAndColumn) {
  const bt::TempDir dir;
  const fs::path machine = bt::copy_demo_library(dir.path());
  const std::size_t row = bt::set_cell(machine / "10X/tmr.csv", "7", 5, "0.8x");
  const auto result = beamdata("validate " + quote(dir.path().string()));
  EXPECT_EQ(result.exit_code, 3);
  const std::string expected = (machine / "10X/tmr.csv").string() + ": row " + std::to_string(row) +
                               ", column 5: tmr: '0.8x' is not a number\n";
  EXPECT_NE(result.out.find(expected), std::string::npos) << result.out;
  EXPECT_TRUE(std::regex_search(result.out, std::regex{"library SHA-256: [0-9a-f]{64}"})) << result.out;
}

TEST(BeamdataValidateCli, ConsistencyWarningAlsoExitsThree) {
  const bt::TempDir dir;
  const fs::path machine = bt::copy_demo_library(dir.path());
  bt::set_cell(machine / "6X/tmr.csv", "15", 10, "0.7100");  // field 15 cm: about 5 % above the derived value
  const auto result = beamdata("validate " + quote((dir.path() / "FERN-LINAC-1").string()));
  EXPECT_EQ(result.exit_code, 3);
  EXPECT_NE(result.out.find("warning: row"), std::string::npos) << result.out;
  EXPECT_NE(result.out.find("depth 15 cm, field 15 cm"), std::string::npos) << result.out;
}

TEST(BeamdataValidateCli, MissingFolderExitsThree) {
  const auto result = beamdata("validate /nonexistent/countersign-library");
  EXPECT_EQ(result.exit_code, 3);
  EXPECT_NE(result.out.find("/nonexistent/countersign-library: not a folder"), std::string::npos)
      << result.out;
}

TEST(BeamdataCli, UsageErrorsExitThree) {
  EXPECT_EQ(beamdata("").exit_code, 3);
  EXPECT_EQ(beamdata("validate").exit_code, 3);
  EXPECT_EQ(beamdata("rescale-pdd --pdd x.csv --from-ssd-cm 100 --to-ssd-cm -5 --dmax-cm 1.5").exit_code, 3);
  EXPECT_EQ(beamdata("--help").exit_code, 0);
}

TEST(BeamdataDeriveTmrCli, ReproducesTheDemoTmrFromItsPdd) {
  const bt::TempDir dir;
  const fs::path out = dir.path() / "tmr.csv";
  const auto result = beamdata("derive-tmr --pdd " + quote((demo_6x() / "pdd.csv").string()) + " --sp " +
                               quote((demo_6x() / "sp.csv").string()) +
                               " --ssd-cm 100 --dmax-cm 1.5 --fields-cm 5,10,20 -o " + quote(out.string()));
  ASSERT_EQ(result.exit_code, 0) << result.err;
  const auto derived = beamdata::read_table2d(out, "tmr", "depth_cm", "field_cm");
  ASSERT_TRUE(derived) << derived.error().message();
  const auto demo = beamdata::read_table2d(demo_6x() / "tmr.csv", "tmr", "depth_cm", "field_cm");
  ASSERT_TRUE(demo);
  // The demo tables are consistent within 0.5 % (beamdata/FORMAT.md), so the derived TMR must be too.
  for (const double depth : {1.5, 5.0, 10.0, 20.0, 30.0}) {
    for (const double field : {10.0, 20.0}) {
      const double expected = demo->at(depth, field).value;
      EXPECT_NEAR(derived->at(depth, field).value, expected, 0.005 * expected) << depth << " " << field;
    }
  }
  // 5 cm fields at depth come from smaller surface fields: inside the 3 cm column here, no warning.
  EXPECT_EQ(result.err, "");
}

TEST(BeamdataDeriveTmrCli, CellsThatNeedExtrapolationAreLeftEmptyAndTheCommandFails) {
  // Without --fields-cm the PDD columns are used: the 3 cm field at depth comes from a surface field
  // below the PDD table's 3 cm column, so those cells would need extrapolation.
  const std::string inputs = "derive-tmr --pdd " + quote((demo_6x() / "pdd.csv").string()) + " --sp " +
                             quote((demo_6x() / "sp.csv").string()) + " --ssd-cm 100 --dmax-cm 1.5";
  const bt::TempDir dir;
  const fs::path out = dir.path() / "tmr.csv";
  const auto refused = beamdata(inputs + " -o " + quote(out.string()));
  EXPECT_EQ(refused.exit_code, 3);
  EXPECT_NE(refused.err.find("left empty"), std::string::npos) << refused.err;
  const std::string text = bt::read_text(out);
  EXPECT_NE(
      text.find("# EMPTY (would need extrapolation) at depth_cm 10.00, field_cm 3.0: pdd field_cm 2.727"),
      std::string::npos)
      << text.substr(0, 800);
  EXPECT_NE(text.find("\n10,,"), std::string::npos);  // the depth-10 row starts with an empty 3 cm cell
  // The empty cells are what validate reports as missing: the table cannot be used by mistake.
  EXPECT_FALSE(beamdata::read_table2d(out, "tmr", "depth_cm", "field_cm"));

  // With --allow-extrapolation the cells are filled and the provenance note lists each one.
  const auto allowed = beamdata(inputs + " --allow-extrapolation -o " + quote(out.string()));
  EXPECT_EQ(allowed.exit_code, 0) << allowed.err;
  EXPECT_NE(allowed.err.find("warning:"), std::string::npos);
  const std::string note = bt::read_text(dir.path() / "tmr.csv.provenance.toml");
  EXPECT_NE(
      note.find("[[cell]]\ndepth_cm = 10\nfield_cm = 3\nextrapolated = true\nhow = \"pdd field_cm 2.727"),
      std::string::npos)
      << note.substr(0, 1200);
  EXPECT_NE(note.find("output_sha256 = "), std::string::npos);
  EXPECT_TRUE(beamdata::read_table2d(out, "tmr", "depth_cm", "field_cm"));
}

TEST(BeamdataRescalePddCli, AppliesTheMayneordFactor) {
  const auto result = beamdata("rescale-pdd --pdd " + quote((demo_6x() / "pdd.csv").string()) +
                               " --from-ssd-cm 100 --to-ssd-cm 120 --dmax-cm 1.5");
  ASSERT_EQ(result.exit_code, 0) << result.err;
  const bt::TempDir dir;
  bt::write_text(dir.path() / "pdd120.csv", result.out);
  const auto rescaled = beamdata::read_table2d(dir.path() / "pdd120.csv", "pdd", "depth_cm", "field_cm");
  ASSERT_TRUE(rescaled) << rescaled.error().message();
  const auto original = beamdata::read_table2d(demo_6x() / "pdd.csv", "pdd", "depth_cm", "field_cm");
  ASSERT_TRUE(original);
  // F(120 vs 100, dm 1.5, d 10) = 1.025932 (hand value, see conversions_test.cpp); 2 decimals written.
  EXPECT_NEAR(rescaled->at(10.0, 10.0).value, original->at(10.0, 10.0).value * 1.025932, 0.006);
  EXPECT_NEAR(rescaled->at(1.5, 10.0).value, 100.0, 1e-9);
}

TEST(BeamdataCompareTmrCli, ReportsPerDepthAndFieldAndExitsByTolerance) {
  const std::string inputs = "--pdd " + quote((demo_6x() / "pdd.csv").string()) + " --sp " +
                             quote((demo_6x() / "sp.csv").string()) + " --ssd-cm 100 --dmax-cm 1.5";
  const auto clean = beamdata("compare-tmr " + inputs + " --tmr " + quote((demo_6x() / "tmr.csv").string()));
  EXPECT_EQ(clean.exit_code, 0) << clean.out << clean.err;
  EXPECT_NE(clean.out.find("depth_cm,field_cm,measured_tmr,derived_tmr,difference_percent,status\n"),
            std::string::npos);
  EXPECT_NE(clean.out.find("\n10.00,10.0,0.7747,"), std::string::npos) << clean.out.substr(0, 600);

  const bt::TempDir dir;
  bt::write_text(dir.path() / "tmr.csv", bt::read_text(demo_6x() / "tmr.csv"));
  bt::set_cell(dir.path() / "tmr.csv", "10", 8, "0.7979");  // +3 % at depth 10 cm, field 10 cm
  const auto damaged =
      beamdata("compare-tmr " + inputs + " --tmr " + quote((dir.path() / "tmr.csv").string()));
  EXPECT_EQ(damaged.exit_code, 1);
  EXPECT_TRUE(std::regex_search(
      damaged.out, std::regex{"\n10\\.00,10\\.0,0\\.7979,0\\.77[0-9]{2},3\\.[0-9]{2},outside\n"}))
      << damaged.out;
}

TEST(BeamdataCompareTmrCli, UnreadableInputExitsThreeNamingTheFile) {
  const auto result = beamdata(
      "compare-tmr --pdd /nonexistent/pdd.csv --tmr /nonexistent/tmr.csv --sp /nonexistent/sp.csv "
      "--ssd-cm 100 --dmax-cm 1.5");
  EXPECT_EQ(result.exit_code, 3);
  EXPECT_NE(result.err.find("/nonexistent/pdd.csv"), std::string::npos) << result.err;
}

}  // namespace
}  // namespace countersign::cli
