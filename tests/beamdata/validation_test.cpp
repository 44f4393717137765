// Every validation rule, each against a copy of the demo library with one thing damaged.
#include <countersign/beamdata/library.hpp>
#include <countersign/beamdata/validation.hpp>

#include "beamdata/library_fixture.hpp"

#include <gtest/gtest.h>

#include <filesystem>
#include <string>

namespace countersign::beamdata {
namespace {

namespace fs = std::filesystem;
using testing::set_cell;

class DamagedDemo : public ::testing::Test {
 protected:
  void SetUp() override { machine_ = testing::copy_demo_library(dir_.path()); }

  [[nodiscard]] fs::path file(const std::string& relative) const { return machine_ / relative; }
  [[nodiscard]] ValidationReport validate() const { return validate_library(dir_.path()); }

  // The report has a problem in `relative` whose text contains every fragment.
  void expect_problem(const ValidationReport& report, const std::string& relative,
                      std::initializer_list<std::string> fragments,
                      Severity severity = Severity::error) const {
    const std::string path = file(relative).string();
    for (const auto& p : report.problems) {
      if (p.file != path || p.severity != severity) continue;
      bool all = true;
      for (const auto& f : fragments) all = all && p.text().find(f) != std::string::npos;
      if (all) return;
    }
    std::string listing;
    for (const auto& p : report.problems) listing += "\n  " + p.text();
    ADD_FAILURE() << "no matching problem in " << path << "; problems:" << listing;
  }

  // The damaged library is refused by the loader with an error naming the same file.
  void expect_refused(const std::string& relative) const {
    const auto library = load_library(dir_.path());
    ASSERT_FALSE(library) << "library loaded despite damage in " << relative;
    EXPECT_EQ(library.error().kind, ErrorKind::bad_beamdata);
    EXPECT_EQ(library.error().file, file(relative).string()) << library.error().message();
  }

  testing::TempDir dir_;
  fs::path machine_;
};

TEST_F(DamagedDemo, UndamagedCopyIsClean) {
  const ValidationReport report = validate();
  EXPECT_TRUE(report.clean());
  EXPECT_EQ(report.machine_count, 1u);
  EXPECT_EQ(report.beam_count, 5u);  // 6X, 10X and the electron beams 6E, 9E, 12E
  EXPECT_GT(report.consistency_nodes_compared, 500u);
  EXPECT_EQ(report.sha256_hex.size(), 64u);
  EXPECT_EQ(report.sha256_hex, validate_library(testing::demo_library()).sha256_hex);
}

TEST_F(DamagedDemo, AxisNotStrictlyIncreasing) {
  const std::size_t row = set_cell(file("6X/tmr.csv"), "12", 1, "9.5");  // 9, 10, 11, 9.5, 13 ...
  const auto report = validate();
  expect_problem(report, "6X/tmr.csv",
                 {"row " + std::to_string(row) + ", column 1", "not strictly increasing"});
  expect_refused("6X/tmr.csv");
}

TEST_F(DamagedDemo, ColumnAxisNotStrictlyIncreasing) {
  testing::replace_in_file(file("10X/pdd.csv"), "depth_cm,3,4,5", "depth_cm,3,5,4");
  const auto line = testing::line_of(file("10X/pdd.csv"), "depth_cm,");
  expect_problem(validate(), "10X/pdd.csv",
                 {"row " + std::to_string(line) + ", column 4", "field_cm not strictly increasing"});
}

TEST_F(DamagedDemo, MissingCell) {
  const std::size_t row = set_cell(file("6X/pdd.csv"), "10", 8, "");
  expect_problem(validate(), "6X/pdd.csv", {"row " + std::to_string(row) + ", column 8", "missing value"});
  expect_refused("6X/pdd.csv");
}

TEST_F(DamagedDemo, NonFiniteCell) {
  const std::size_t row = set_cell(file("6X/sp.csv"), "20", 2, "inf");
  expect_problem(validate(), "6X/sp.csv",
                 {"row " + std::to_string(row) + ", column 2", "not a finite number"});
}

TEST_F(DamagedDemo, UnequalRowLength) {
  // Drop the last cell of the depth-15 row.
  const auto path = file("10X/tmr.csv");
  const std::size_t row = testing::line_of(path, "15,");
  std::string text = testing::read_text(path);
  const auto end = text.find('\n', text.find("\n15,") + 1);
  const auto last_comma = text.rfind(',', end);
  text.erase(last_comma, end - last_comma);
  testing::write_text(path, text);
  expect_problem(validate(), "10X/tmr.csv", {"row " + std::to_string(row), "14 cells, the header has 15"});
  expect_refused("10X/tmr.csv");
}

TEST_F(DamagedDemo, PddNotHundredAtDmax) {
  const std::size_t row = set_cell(file("6X/pdd.csv"), "1.5", 5, "99.20");
  expect_problem(validate(), "6X/pdd.csv",
                 {"row " + std::to_string(row) + ", column 5", "pdd at dmax", "99.2"});
  expect_refused("6X/pdd.csv");
}

TEST_F(DamagedDemo, TmrNotOneAtDmax) {
  const std::size_t row = set_cell(file("10X/tmr.csv"), "2.4", 2, "1.0100");
  expect_problem(validate(), "10X/tmr.csv",
                 {"row " + std::to_string(row) + ", column 2", "tmr at dmax", "1.01"});
}

TEST_F(DamagedDemo, DmaxOutsideTheDepthAxisIsReported) {
  testing::replace_in_file(file("machine.toml"), "dmax_cm = 1.5", "dmax_cm = 0.1");
  // 0.1 cm is below the plausible range: the manifest is refused with the key named.
  const auto report = validate();
  expect_problem(report, "machine.toml", {"beam[1].dmax_cm", "outside the plausible range"});
}

TEST_F(DamagedDemo, ScNotOneAtTen) {
  const std::size_t row = set_cell(file("6X/sc.csv"), "10", 2, "1.0100");
  expect_problem(validate(), "6X/sc.csv", {"row " + std::to_string(row) + ", column 2", "sc(10) = 1.01"});
  expect_refused("6X/sc.csv");
}

TEST_F(DamagedDemo, SpNotOneAtTen) {
  const std::size_t row = set_cell(file("10X/sp.csv"), "10", 2, "0.9900");
  expect_problem(validate(), "10X/sp.csv", {"row " + std::to_string(row) + ", column 2", "sp(10) = 0.99"});
}

TEST_F(DamagedDemo, ImplausibleTableValue) {
  // A PDD typed as a fraction, an Sc off by ten, a field in mm.
  const std::size_t pdd_row = set_cell(file("6X/pdd.csv"), "20", 3, "0.39");
  const std::size_t sc_row = set_cell(file("10X/sc.csv"), "30", 2, "10.41");
  testing::replace_in_file(file("6X/oar.csv"), ",19,20\n", ",19,200\n");
  const auto report = validate();
  expect_problem(report, "6X/pdd.csv",
                 {"row " + std::to_string(pdd_row) + ", column 3", "outside the plausible range"});
  expect_problem(report, "10X/sc.csv",
                 {"row " + std::to_string(sc_row) + ", column 2", "sc 10.41 outside the plausible range"});
  expect_problem(report, "6X/oar.csv", {"column 22", "off_axis_cm 200 outside the plausible range"});
}

TEST_F(DamagedDemo, ImplausibleManifestValue) {
  testing::replace_in_file(file("machine.toml"), "sad_cm = 100.0", "sad_cm = 1000.0");  // mm typed as cm
  const auto line = testing::line_of(file("machine.toml"), "sad_cm");
  expect_problem(validate(), "machine.toml", {"line " + std::to_string(line), "sad_cm", "1000 is outside"});
  expect_refused("machine.toml");
}

TEST_F(DamagedDemo, OarOffOneOnTheCentralAxis) {
  const std::size_t row = set_cell(file("6X/oar.csv"), "10", 2, "1.0200");
  expect_problem(validate(), "6X/oar.csv", {"row " + std::to_string(row) + ", column 2", "central axis"});
}

TEST_F(DamagedDemo, NamedTableMissing) {
  fs::remove(file("10X/sp.csv"));
  const auto report = validate();
  expect_problem(report, "machine.toml", {"beam[2].tables.sp", "10X/sp.csv", "does not exist"});
  expect_refused("machine.toml");
}

TEST_F(DamagedDemo, TableKeyMissing) {
  testing::replace_in_file(file("machine.toml"), "tmr = \"6X/tmr.csv\"\n", "");
  expect_problem(validate(), "machine.toml", {"beam[1].tables.tmr", "missing"});
}

TEST_F(DamagedDemo, WedgeIncomplete) {
  testing::replace_in_file(file("machine.toml"), "factor = 0.660\n", "");  // 6X W30 loses its factor
  expect_problem(validate(), "machine.toml",
                 {"beam[1].wedge[2].factor", "exactly one of 'factor' and 'table'"});
  expect_refused("machine.toml");
}

TEST_F(DamagedDemo, WedgeKindUnknown) {
  testing::replace_in_file(file("machine.toml"), "kind = \"PHYSICAL\"", "kind = \"MOTORISED\"");
  expect_problem(validate(), "machine.toml",
                 {"beam[1].wedge[1].kind", "\"MOTORISED\" is not one of \"PHYSICAL\", \"DYNAMIC\""});
}

TEST_F(DamagedDemo, WedgeIdTwice) {
  testing::replace_in_file(file("machine.toml"), "id = \"W45\"", "id = \"W30\"");
  expect_problem(validate(), "machine.toml", {"wedge id 'W30' appears twice"});
}

TEST_F(DamagedDemo, TrayIncomplete) {
  testing::replace_in_file(file("machine.toml"), "factor = 0.975\n", "");  // 10X TRAY-A
  expect_problem(validate(), "machine.toml", {"beam[2].tray[1].factor", "missing"});
  expect_refused("machine.toml");
}

TEST_F(DamagedDemo, MisspeltOptionalKeyIsAWarning) {
  // A typing error in an optional key would otherwise leave the value silently absent.
  testing::replace_in_file(file("machine.toml"), "mlc_transmission = 0.017", "mlc_transmision = 0.017");
  const auto line = testing::line_of(file("machine.toml"), "mlc_transmision");
  const auto report = validate();
  expect_problem(report, "machine.toml",
                 {"line " + std::to_string(line), "beam[2].mlc_transmision", "unknown key"},
                 Severity::warning);
  EXPECT_EQ(report.error_count(), 0u);
  const auto library = load_library(dir_.path());
  ASSERT_TRUE(library) << library.error().message();
  EXPECT_FALSE(library->match("FERN-LINAC-1", "PHOTON", 10.0).beam->mlc_transmission.has_value());
  EXPECT_EQ(library->warnings.size(), 1u);
}

TEST_F(DamagedDemo, SwappedOneAxisFile) {
  testing::replace_in_file(file("6X/sc.csv"), "field_cm,sc", "field_cm,sp");
  expect_problem(validate(), "6X/sc.csv", {"header must be 'field_cm,sc'"});
}

TEST_F(DamagedDemo, TomlSyntax) {
  testing::replace_in_file(file("machine.toml"), "[beam.calibration]", "[beam.calibration");
  expect_problem(validate(), "machine.toml", {"line ", "not valid TOML"});
}

TEST_F(DamagedDemo, PddTmrInconsistencyIsAWarningPerDepthAndField) {
  // TMR 3 % high at depth 10 cm, field 10 cm (column 8): reported there, with the difference.
  const auto path = file("6X/tmr.csv");
  std::string text = testing::read_text(path);
  const std::size_t row = set_cell(path, "10", 8, "0.7979");  // 0.7747 * 1.03
  const auto report = validate();
  expect_problem(report, "6X/tmr.csv",
                 {"row " + std::to_string(row) + ", column 8", "depth 10 cm, field 10 cm", "differs by 3."},
                 Severity::warning);
  EXPECT_EQ(report.error_count(), 0u);
  EXPECT_EQ(report.warning_count(), 1u);
  // Warnings do not stop the calculation; they travel with the library for the report.
  const auto library = load_library(dir_.path());
  ASSERT_TRUE(library) << library.error().message();
  ASSERT_EQ(library->warnings.size(), 1u);
  EXPECT_EQ(library->warnings.front().severity, Severity::warning);
}

TEST_F(DamagedDemo, OneDamagedMachineDoesNotHideAnothersProblems) {
  // A second, broken machine: its problems and the first machine's physics are both reported.
  fs::copy(machine_, dir_.path() / "OTHER", fs::copy_options::recursive);
  testing::replace_in_file(dir_.path() / "OTHER/machine.toml", "machine = \"FERN-LINAC-1\"",
                           "machine = \"OTHER\"");
  fs::remove(dir_.path() / "OTHER/6X/pdd.csv");
  set_cell(file("6X/sc.csv"), "10", 2, "1.0100");
  const auto report = validate();
  EXPECT_EQ(report.machine_count, 2u);
  expect_problem(report, "6X/sc.csv", {"sc(10)"});
  bool other_reported = false;
  for (const auto& p : report.problems)
    other_reported = other_reported || p.text().find("6X/pdd.csv") != std::string::npos;
  EXPECT_TRUE(other_reported);
}

TEST_F(DamagedDemo, SameMachineNameTwice) {
  fs::copy(machine_, dir_.path() / "COPY", fs::copy_options::recursive);
  const auto report = validate();
  bool found = false;
  for (const auto& p : report.problems) found = found || p.text().find("defined twice") != std::string::npos;
  EXPECT_TRUE(found);
  EXPECT_FALSE(load_library(dir_.path()));
}

}  // namespace
}  // namespace countersign::beamdata
