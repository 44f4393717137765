// `beamdata import`: the synthetic measured set (tools/demo_linac/make_measured_set: the demo model
// sampled with +-0.2 % noise on irregular positions, one field size left out) reproduces the demo
// tables within 0.5 %; gaps, extrapolation and inconsistent rows are refused with nothing written.
#include <countersign/beamdata/csv.hpp>
#include <countersign/beamdata/import.hpp>
#include <countersign/beamdata/library.hpp>
#include <countersign/beamdata/validation.hpp>

#include "beamdata/library_fixture.hpp"

#include <gtest/gtest.h>

#include <cmath>

namespace countersign::beamdata {
namespace {

namespace fs = std::filesystem;
using testing::TempDir;

fs::path measured_set() {
  return countersign::test::source_dir() / "testdata/measured/fern_linac_1_measured.csv";
}

ImportOptions options_for(const fs::path& machine, const std::string& beam,
                          const fs::path& measured = measured_set()) {
  ImportOptions o;
  o.measured_file = measured;
  o.machine_folder = machine;
  o.beam_id = beam;
  return o;
}

std::string problems_of(const std::vector<Problem>& problems) {
  std::string all;
  for (const auto& p : problems) all += p.text() + "\n";
  return all;
}

// Largest relative difference (percent) between two tables on the same grid.
double largest_difference_percent(const Table2D& a, const Table2D& b) {
  EXPECT_EQ(a.rows(), b.rows());
  EXPECT_EQ(a.columns(), b.columns());
  double worst = 0.0;
  for (std::size_t r = 0; r < a.rows().size(); ++r)
    for (std::size_t c = 0; c < a.columns().size(); ++c)
      worst = std::max(worst, std::abs(100.0 * (b.cell(r, c) - a.cell(r, c)) / a.cell(r, c)));
  return worst;
}

double largest_difference_percent(const Table1D& a, const Table1D& b) {
  EXPECT_EQ(a.axis(), b.axis());
  double worst = 0.0;
  for (std::size_t i = 0; i < a.axis().size(); ++i)
    worst = std::max(worst, std::abs(100.0 * (b.values()[i] - a.values()[i]) / a.values()[i]));
  return worst;
}

TEST(Import, SyntheticMeasuredSetReproducesTheDemoTablesWithinHalfAPercent) {
  const TempDir dir;
  const fs::path machine = testing::copy_demo_library(dir.path());
  const fs::path demo = testing::demo_library() / "FERN-LINAC-1";
  for (const std::string beam : {"6X", "10X"}) {
    SCOPED_TRACE(beam);
    const ImportResult result = import_measured_data(options_for(machine, beam));
    ASSERT_TRUE(result.ok()) << problems_of(result.problems);
    EXPECT_EQ(result.tables.size(), 6u);  // pdd, tmr, oar, sc, sp (= Scp / Sc), the W30 orientation table
    for (const auto& [file, quantity, row_axis, column_axis] :
         std::vector<std::tuple<std::string, std::string, std::string, std::string>>{
             {"pdd.csv", "pdd", "depth_cm", "field_cm"},
             {"tmr.csv", "tmr", "depth_cm", "field_cm"},
             {"oar.csv", "oar", "depth_cm", "off_axis_cm"},
             {"w30_profile.csv", "wedge_oar", "depth_cm", "wedge_axis_cm"}}) {
      const auto expected = read_table2d(demo / beam / file, quantity, row_axis, column_axis);
      const auto imported = read_table2d(machine / beam / file, quantity, row_axis, column_axis);
      ASSERT_TRUE(expected && imported) << file;
      EXPECT_LT(largest_difference_percent(*expected, *imported), 0.5) << file;
    }
    for (const std::string quantity : {"sc", "sp"}) {
      const auto expected = read_table1d(demo / beam / (quantity + ".csv"), quantity);
      const auto imported = read_table1d(machine / beam / (quantity + ".csv"), quantity);
      ASSERT_TRUE(expected && imported) << quantity;
      EXPECT_LT(largest_difference_percent(*expected, *imported), 0.5) << quantity;
    }
    // The measured wedge factor is compared with the manifest's constant, not written.
    bool wedge_note = false;
    for (const auto& note : result.notes)
      wedge_note = wedge_note || note.find("W30: measured wedge factor") == 0;
    EXPECT_TRUE(wedge_note);
  }
  // Provenance: the measured file's SHA-256 (GNU sha256sum as the independent hasher) and the method.
  const auto sha =
      countersign::test::run_command("sha256sum " + countersign::test::quote(measured_set().string()));
  ASSERT_EQ(sha.exit_code, 0);
  const std::string note = testing::read_text(machine / "6X/import-provenance-6X.toml");
  EXPECT_NE(note.find("measured_sha256 = \"" + sha.out.substr(0, 64) + "\""), std::string::npos) << note;
  EXPECT_NE(note.find("resampling = \"monotone-cubic\""), std::string::npos);
  EXPECT_NE(note.find("[[table]]\nfile = \"6X/pdd.csv\""), std::string::npos);
  EXPECT_NE(testing::read_text(machine / "6X/pdd.csv").find("(SHA-256 " + sha.out.substr(0, 64) + ")"),
            std::string::npos);
  // The imported library validates clean.
  const ValidationReport report = validate_library(dir.path());
  EXPECT_TRUE(report.clean()) << problems_of(report.problems);
}

TEST(Import, AGapWiderThanTheLimitIsRefusedAndNothingIsWritten) {
  const TempDir dir;
  const fs::path machine = testing::copy_demo_library(dir.path());
  const std::string before = testing::read_text(machine / "6X/pdd.csv");
  ImportOptions o = options_for(machine, "6X");
  o.gap_limits.push_back(*parse_gap_limit("pdd:depth_cm=0.05"));
  const ImportResult result = import_measured_data(o);
  ASSERT_FALSE(result.ok());
  EXPECT_TRUE(result.tables.empty());
  const std::string all = problems_of(result.problems);
  EXPECT_NE(all.find("pdd at depth_cm 0.25, field_cm 3: along depth_cm, the measured points"),
            std::string::npos)
      << all;
  EXPECT_NE(all.find("(limit 0.05)"), std::string::npos);
  EXPECT_EQ(testing::read_text(machine / "6X/pdd.csv"), before);
  EXPECT_FALSE(fs::exists(machine / "6X/import-provenance-6X.toml"));
  // Grouped, the refusals read as one line per table and rule.
  const auto groups = group_problems(result.problems);
  EXPECT_NE(groups.front().text().find("pdd: a gap between measured points is wider than the limit: "),
            std::string::npos)
      << groups.front().text();
}

TEST(Import, CellsOutsideTheMeasuredRangeAreRefusedNeverExtrapolated) {
  const TempDir dir;
  const fs::path machine = testing::copy_demo_library(dir.path());
  // TMR measured from 1 cm only: the build-up rows of the table cannot be filled.
  std::string text = "quantity,field_cm,depth_cm,value\n";
  for (const double field : {3.0, 5.0, 10.0, 20.0, 40.0})
    for (double d = 1.0; d <= 30.0; d += 0.5)
      text += "tmr," + std::to_string(field) + "," + std::to_string(d) + ",1\n";
  testing::write_text(dir.path() / "m.csv", text);
  const ImportResult result = import_measured_data(options_for(machine, "6X", dir.path() / "m.csv"));
  ASSERT_FALSE(result.ok());
  const std::string all = problems_of(result.problems);
  EXPECT_NE(
      all.find(
          "tmr at depth_cm 0, field_cm 3: along depth_cm, no measurement at or below it (measured from 1)"),
      std::string::npos)
      << all;
}

TEST(Import, InconsistentOrUnusableRowsAreRefusedNamingTheLine) {
  const std::vector<std::pair<std::string, std::string>> cases = {
      {"quantity,field_cm,depth_cm,value\nscp,10,10,1\n", "scp: scp rows need sc rows: Sp = Scp / Sc"},
      {"quantity,field_cm,value\nsp,10,1\nscp,10,1\nsc,10,1\n", "sp: both sp and scp rows"},
      {"quantity,field,value\n", "column 2: header: unknown column 'field'"},
      {"quantity,field_cm,value\nsc,10,1\nsc,10\n", "row 3: measured: 2 cells, the header has 3"},
      {"quantity,field_cm,value\ndose,10,1\n", "row 2, column 1: measured: unknown quantity 'dose'"},
      {"quantity,field_cm,value\nsc,10,x\n", "row 2, column 3: measured: value 'x' is not a finite number"},
      {"quantity,field_cm,depth_cm,ssd_cm,value\npdd,10,1.5,90,100\n",
       "row 2: pdd: measured at SSD 90 cm; the manifest's pdd_ssd_cm is 100 cm"},
      {"quantity,field_cm,value\npdd,10,100\n", "row 2: pdd: a pdd row needs a depth"},
      {"quantity,field_cm,depth_cm,off_axis_cm,value\noar,10,5,0,1\noar,40,5,0,1\n",
       "oar rows come from 2 field sizes"},
      {"quantity,value\n", "no measured rows for beam 6X could be imported"},
      {"quantity,value,Value\n", "column 3: header: column 'value' appears twice"},
      {"quantity,depth_cm,depth_mm,value\n", "column 3: header: a second column for depth"},
      {"field_cm,value\nsc,1\n", "header: no 'quantity' column"},
      {"# only a comment\n", "no header row"},
      {"quantity,field_cm,depth_cm,value\npdd,10,1.5x,100\n",
       "row 2, column 3: measured: '1.5x' is not a finite number"},
  };
  for (const auto& [csv, expected] : cases) {
    SCOPED_TRACE(csv);
    const TempDir dir;
    const fs::path machine = testing::copy_demo_library(dir.path());
    testing::write_text(dir.path() / "m.csv", csv);
    const ImportResult result = import_measured_data(options_for(machine, "6X", dir.path() / "m.csv"));
    EXPECT_FALSE(result.ok());
    EXPECT_NE(problems_of(result.problems).find(expected), std::string::npos) << problems_of(result.problems);
  }
}

TEST(Import, TheManifestMustKnowTheBeamAndDmax) {
  const TempDir dir;
  const fs::path machine = testing::copy_demo_library(dir.path());
  EXPECT_NE(problems_of(import_measured_data(options_for(machine, "18X")).problems)
                .find("no [[beam]] with id = \"18X\""),
            std::string::npos);
  testing::replace_in_file(machine / "machine.toml", "dmax_cm = 1.5", "dmax_cm = nan");
  const ImportResult result = import_measured_data(options_for(machine, "6X"));
  EXPECT_NE(problems_of(result.problems)
                .find("normalising pdd needs dmax: the manifest's dmax_cm is not filled in"),
            std::string::npos);
  ImportOptions given = options_for(machine, "6X");
  given.dmax_cm = 1.5;
  EXPECT_TRUE(import_measured_data(given).ok());
}

TEST(Import, TheMethodIsStatedInEveryTable) {
  const TempDir dir;
  const fs::path machine = testing::copy_demo_library(dir.path());
  ImportOptions o = options_for(machine, "10X");
  o.method = ResamplingMethod::linear;
  ASSERT_TRUE(import_measured_data(o).ok());
  EXPECT_NE(testing::read_text(machine / "10X/tmr.csv")
                .find("linear interpolation between measured points; each "
                      "measured field normalised to 1 at dmax 2.4 cm"),
            std::string::npos);
  EXPECT_NE(testing::read_text(machine / "10X/sp.csv").find("Sp = Scp / Sc at each field"),
            std::string::npos);
}

TEST(Import, AManifestPathLeadingOutIsNotWritten) {
  const TempDir dir;
  const fs::path machine = testing::copy_demo_library(dir.path());
  testing::replace_in_file(machine / "machine.toml", "sc = \"6X/sc.csv\"", "sc = \"../sc.csv\"");
  const ImportResult result = import_measured_data(options_for(machine, "6X"));
  ASSERT_FALSE(result.ok());
  EXPECT_NE(problems_of(result.problems)
                .find("machine.toml: sc: names '../sc.csv' leads out of the folder with '..'"),
            std::string::npos)
      << problems_of(result.problems);
  EXPECT_FALSE(fs::exists(dir.path() / "sc.csv"));
  EXPECT_FALSE(fs::exists(machine / "6X/import-provenance-6X.toml"));
}

TEST(Import, GapLimitsParse) {
  EXPECT_DOUBLE_EQ(parse_gap_limit("oar:depth_cm=10")->max_gap_cm, 10.0);
  EXPECT_FALSE(parse_gap_limit("oar:field_cm=10"));  // oar has no field axis
  EXPECT_FALSE(parse_gap_limit("pdd:depth_cm=-1"));
  EXPECT_FALSE(parse_gap_limit("pdd:depth_cm=1cm"));
  EXPECT_FALSE(parse_gap_limit("pdd=1"));
}

}  // namespace
}  // namespace countersign::beamdata
