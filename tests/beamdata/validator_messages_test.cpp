// Every message of `beamdata validate`, each provoked by one damage to a copy of the demo library
// (or of the small hand-written library), with the file it must name and its severity. Messages
// already covered in validation_test.cpp, additions_test.cpp, ct_density_test.cpp,
// electron_test.cpp and library_paths_test.cpp are not repeated here.
#include <countersign/beamdata/library.hpp>
#include <countersign/beamdata/validation.hpp>

#include "beamdata/library_fixture.hpp"

#include <gtest/gtest.h>

#include <functional>
#include <sstream>
#include <string>
#include <vector>

namespace countersign::beamdata {
namespace {

namespace fs = std::filesystem;
using testing::TempDir;

std::string problems_of(const std::vector<Problem>& problems) {
  std::string all;
  for (const auto& p : problems) all += p.text() + "\n";
  return all;
}

struct Case {
  std::string name;
  std::function<void(const fs::path& machine)> damage;
  std::string file;      // relative to the machine folder
  std::string expected;  // a fragment of one finding's text
  Severity severity = Severity::error;
};

void run_case(const Case& c) {
  SCOPED_TRACE(c.name);
  const TempDir dir;
  const fs::path machine = testing::copy_demo_library(dir.path());
  c.damage(machine);
  const ValidationReport report = validate_library(dir.path());
  const std::string path = (machine / c.file).string();
  bool found = false;
  for (const auto& p : report.problems)
    found = found ||
            (p.file == path && p.severity == c.severity && p.text().find(c.expected) != std::string::npos);
  EXPECT_TRUE(found) << "expected in " << path << ": " << c.expected << "\nfound:\n"
                     << problems_of(report.problems);
  // Errors refuse the library; warnings travel with it.
  const auto library = load_library(dir.path());
  EXPECT_EQ(library.has_value(), c.severity == Severity::warning) << c.name;
}

void replace(const fs::path& file, const std::string& from, const std::string& to) {
  testing::replace_in_file(file, from, to);
}

// Removes every data line of a CSV whose first cell is one of `keys`.
void drop_rows(const fs::path& file, const std::vector<std::string>& keys) {
  std::istringstream in(testing::read_text(file));
  std::string out, line;
  while (std::getline(in, line)) {
    bool drop = false;
    for (const auto& k : keys) drop = drop || line.rfind(k + ",", 0) == 0;
    if (!drop) out += line + "\n";
  }
  testing::write_text(file, out);
}

TEST(ValidatorMessages, Manifest) {
  const std::vector<Case> cases = {
      {"no beams",
       [](const fs::path& m) { testing::write_text(m / "machine.toml", "machine = \"X\"\nsad_cm = 100\n"); },
       "machine.toml", "beam: the manifest defines no [[beam]]"},
      {"tables not a table",
       [](const fs::path& m) {
         replace(m / "machine.toml", "pdd_ssd_cm = 100.0\n", "pdd_ssd_cm = 100.0\ntables = 3\n");
         replace(m / "machine.toml", "[beam.tables]", "[beam.x]");
       },
       "machine.toml", "beam[1].tables: not a table"},
      {"beam not an array of tables",
       [](const fs::path& m) {
         testing::write_text(m / "machine.toml", "machine = \"X\"\nsad_cm = 100\nbeam = 5\n");
       },
       "machine.toml", "beam: not an array of tables"},
      {"wedge element not a table",
       [](const fs::path& m) {
         testing::write_text(m / "machine.toml",
                             "machine = \"X\"\nsad_cm = 100\n[[beam]]\nid = \"6X\"\n"
                             "radiation = \"PHOTON\"\nwedge = [1]\n");
       },
       "machine.toml", "beam[1].wedge: element is not a table"},
      {"aliases not strings",
       [](const fs::path& m) {
         replace(m / "machine.toml", "sad_cm = 100.0", "sad_cm = 100.0\naliases = 7");
       },
       "machine.toml", "aliases: not an array of strings"},
      {"alias twice",
       [](const fs::path& m) {
         replace(m / "machine.toml", "sad_cm = 100.0", "sad_cm = 100.0\naliases = [\"F1\", \"F1\"]");
       },
       "machine.toml", "aliases: 'F1' is listed twice"},
      {"alias equals name",
       [](const fs::path& m) {
         replace(m / "machine.toml", "sad_cm = 100.0", "sad_cm = 100.0\naliases = [\"FERN-LINAC-1\"]");
       },
       "machine.toml", "aliases: 'FERN-LINAC-1' is listed twice"},
      {"same energy twice",
       [](const fs::path& m) { replace(m / "machine.toml", "energy_mv = 10.0", "energy_mv = 6.0"); },
       "machine.toml", "beam[2].energy_mv: beams '6X' and '10X' have the same radiation and energy"},
      {"placeholder number",
       [](const fs::path& m) { replace(m / "machine.toml", "dmax_cm = 1.5", "dmax_cm = nan"); },
       "machine.toml", "beam[1].dmax_cm: nan: not filled in yet (template placeholder)"},
      {"placeholder text",
       [](const fs::path& m) { replace(m / "machine.toml", "kind = \"PHYSICAL\"", "kind = \"?\""); },
       "machine.toml", "beam[1].wedge[1].kind: \"?\": not filled in yet"},
      {"not a number",
       [](const fs::path& m) { replace(m / "machine.toml", "dmax_cm = 1.5", "dmax_cm = \"1.5\""); },
       "machine.toml", "beam[1].dmax_cm: not a number"},
      {"empty string", [](const fs::path& m) { replace(m / "machine.toml", "id = \"6X\"", "id = \"\""); },
       "machine.toml", "beam[1].id: not a non-empty string"},
      {"alias not a string",
       [](const fs::path& m) {
         replace(m / "machine.toml", "sad_cm = 100.0", "sad_cm = 100.0\naliases = [1]");
       },
       "machine.toml", "aliases: element is not a non-empty string"},
      {"electron without applicators",
       [](const fs::path& m) {
         testing::write_text(
             m / "machine.toml",
             testing::read_text(m / "machine.toml") +
                 "\n[[beam]]\nid = \"18E\"\nradiation = \"ELECTRON\"\nenergy_mv = 18\n"
                 "dmax_cm = 1.3\npdd_ssd_cm = 100\n[beam.calibration]\n"
                 "output_cgy_per_mu = 1\napplicator = \"A10\"\nssd_cm = 100\ndepth_cm = 1.3\n");
       },
       "machine.toml", "beam[6].applicator: an electron beam needs at least one [[beam.applicator]]"},  // after 2 photon and 3 electron demo beams
  };
  for (const auto& c : cases) run_case(c);
}

TEST(ValidatorMessages, Tables) {
  const std::vector<Case> cases = {
      {"no header", [](const fs::path& m) { testing::write_text(m / "6X/sc.csv", "# nothing\n"); },
       "6X/sc.csv", "sc: no header row and no data"},
      {"header only", [](const fs::path& m) { testing::write_text(m / "6X/sc.csv", "field_cm,sc\n"); },
       "6X/sc.csv", "sc: header only, no data rows"},
      {"no columns", [](const fs::path& m) { testing::write_text(m / "6X/tmr.csv", "depth_cm\n1\n"); },
       "6X/tmr.csv", "tmr: header names no field_cm columns"},
      {"wrong row axis", [](const fs::path& m) { replace(m / "6X/pdd.csv", "depth_cm,", "depth_mm,"); },
       "6X/pdd.csv", "column 1: pdd: first header cell is 'depth_mm', expected 'depth_cm'"},
      {"dmax outside the table",
       [](const fs::path& m) {
         drop_rows(m / "6X/tmr.csv", {"0", "0.25", "0.5", "0.75", "1", "1.25", "1.5"});
       },
       "6X/tmr.csv", "tmr at dmax: depth_cm 1.5 lies outside the table"},
      {"reference field not covered",
       [](const fs::path& m) {
         drop_rows(m / "10X/sc.csv", {"10", "12", "15", "20", "25", "30", "35", "40"});
       },
       "10X/sc.csv", "the table does not cover field_cm 10 (sc(10))"},
      {"depth in millimetres", [](const fs::path& m) { testing::set_cell(m / "6X/oar.csv", "30", 1, "300"); },
       "6X/oar.csv",
       "column 1: oar: depth_cm 300 outside the plausible range [0, 50]: looks like millimetres, not "
       "centimetres"},
      {"pdd as a fraction", [](const fs::path& m) { testing::set_cell(m / "6X/pdd.csv", "20", 5, "0.39"); },
       "6X/pdd.csv",
       "pdd 0.39 outside the plausible range [1, 100.5]: looks like a fraction of 1 where a percentage is "
       "expected"},
  };
  for (const auto& c : cases) run_case(c);
}

TEST(ValidatorMessages, SuspiciousButValidDataIsAWarning) {
  const std::vector<Case> cases = {
      {"output far from 1 cGy/MU",
       [](const fs::path& m) {
         replace(m / "machine.toml", "output_cgy_per_mu = 1.000", "output_cgy_per_mu = 0.650");
       },
       "machine.toml",
       "beam[1].calibration.output_cgy_per_mu: 0.65 cGy/MU is more than 20 % from the usual 1 cGy/MU",
       Severity::warning},
      {"sp falling with field",
       [](const fs::path& m) { testing::set_cell(m / "6X/sp.csv", "25", 2, "1.0100"); }, "6X/sp.csv",
       "sp falls from 1.0", Severity::warning},
      {"sc falling with field",
       [](const fs::path& m) { testing::set_cell(m / "10X/sc.csv", "5", 2, "0.9990"); }, "10X/sc.csv",
       "sc falls from 0.999 to 0.9", Severity::warning},
      {"pdd rising beyond dmax",
       [](const fs::path& m) { testing::set_cell(m / "6X/pdd.csv", "12", 8, "70.00"); }, "6X/pdd.csv",
       "pdd rises from", Severity::warning},
      {"ssd range without the pdd ssd",
       [](const fs::path& m) {
         replace(m / "machine.toml", "ssd_range_cm = [80.0, 130.0]", "ssd_range_cm = [105.0, 130.0]");
       },
       "machine.toml", "beam[1].ssd_range_cm: does not contain the beam's own pdd_ssd_cm 100 cm",
       Severity::warning},
      {"wedge profile without mirrored columns",
       [](const fs::path& m) {
         testing::write_text(m / "6X/w30_profile.csv", "depth_cm,0,5\n5,1,0.9\n10,1,0.9\n");
       },
       "6X/w30_profile.csv", "wedge W30: no pair of columns at -x and +x", Severity::warning},
      {"ssd range without the calibration ssd",
       [](const fs::path& m) {
         replace(m / "machine.toml", "ssd_range_cm = [80.0, 130.0]", "ssd_range_cm = [60.0, 99.0]");
       },
       "machine.toml", "beam[1].ssd_range_cm: does not contain the calibration SSD 100 cm",
       Severity::warning},
      {"extrapolated derived cells",
       [](const fs::path& m) {
         testing::write_text(
             m / "6X/tmr.csv.provenance.toml",
             "[[cell]]\ndepth_cm = 1\nfield_cm = 3\nextrapolated = true\nhow = \"pdd field_cm 2.9\"\n");
       },
       "6X/tmr.csv", "tmr: 1 cell(s) were filled by extrapolation when the table was derived",
       Severity::warning},
      {"unreadable provenance note",
       [](const fs::path& m) { testing::write_text(m / "6X/tmr.csv.provenance.toml", "[[cell\n"); },
       "6X/tmr.csv.provenance.toml", "provenance note is not valid TOML", Severity::warning},
  };
  for (const auto& c : cases) run_case(c);
}

TEST(ValidatorMessages, TrayIdTwice) {
  const TempDir dir;
  const fs::path machine = testing::copy_demo_library(dir.path());
  testing::replace_in_file(
      machine / "machine.toml", "[[beam.tray]]\nid = \"TRAY-A\"\nfactor = 0.970\n",
      "[[beam.tray]]\nid = \"TRAY-A\"\nfactor = 0.970\n\n[[beam.tray]]\nid = \"TRAY-A\"\nfactor = 0.9\n");
  EXPECT_NE(
      problems_of(validate_library(dir.path()).problems).find("beam[1].tray: tray id 'TRAY-A' appears twice"),
      std::string::npos);
}

TEST(ValidatorMessages, ElectronBeamWarningsAndClashes) {
  const TempDir dir;
  fs::copy(countersign::test::source_dir() / "tests/beamdata/fixtures/electron", dir.path(),
           fs::copy_options::recursive);
  const fs::path manifest = dir.path() / "TEST-LINAC-E/machine.toml";
  testing::replace_in_file(manifest, "output_cgy_per_mu = 1.000", "output_cgy_per_mu = 1.300");
  testing::replace_in_file(manifest, "field_cm = 15.0", "field_cm = 20.0");  // beyond the A15 PDD columns
  auto all = problems_of(validate_library(dir.path()).problems);
  EXPECT_NE(all.find("warning: line 14: beam[1].calibration.output_cgy_per_mu: 1.3 cGy/MU is more than 20 %"),
            std::string::npos)
      << all;
  EXPECT_NE(all.find("9E/pdd_a15.csv: warning: row 3: pdd: applicator A15: the columns do not cover its open "
                     "field (20 cm)"),
            std::string::npos)
      << all;
  // A second electron beam of the same energy.
  const std::string text = testing::read_text(manifest);
  const auto beam = text.find("[[beam]]");
  std::string second = text.substr(beam);
  second.replace(second.find("id = \"9E\""), 9, "id = \"9E-B\"");
  testing::write_text(manifest, text + "\n" + second);
  all = problems_of(validate_library(dir.path()).problems);
  EXPECT_NE(all.find("beam: electron beams '9E' and '9E-B' have the same energy"), std::string::npos) << all;
}

TEST(ValidatorMessages, AliasNamingAnotherMachineIsRefused) {
  const TempDir dir;
  const fs::path machine = testing::copy_demo_library(dir.path());
  fs::copy(machine, dir.path() / "OTHER", fs::copy_options::recursive);
  testing::replace_in_file(dir.path() / "OTHER/machine.toml", "machine = \"FERN-LINAC-1\"",
                           "machine = \"OTHER\"\naliases = [\"FERN-LINAC-1\"]");
  const auto report = validate_library(dir.path());
  EXPECT_NE(problems_of(report.problems)
                .find("OTHER/machine.toml: machine: alias 'FERN-LINAC-1' also names machine 'FERN-LINAC-1'"),
            std::string::npos)
      << problems_of(report.problems);
}

TEST(ValidatorMessages, UnknownMachineListsTheLibrarysMachines) {
  const TempDir dir;
  const fs::path machine = testing::copy_demo_library(dir.path());
  testing::replace_in_file(machine / "machine.toml", "sad_cm = 100.0",
                           "sad_cm = 100.0\naliases = [\"FERN1\"]");
  const auto library = load_library(dir.path());
  ASSERT_TRUE(library) << library.error().message();
  const BeamMatch m = library->match("Fern-Linac-1", "PHOTON", 6.0);
  EXPECT_EQ(m.failure, MatchFailure::unknown_machine);
  EXPECT_EQ(
      m.explanation,
      "The beam-data library has no machine named 'Fern-Linac-1' (names are exact and case-sensitive; the "
      "library has 'FERN-LINAC-1' (also 'FERN1')).");
}

TEST(ValidatorMessages, StructuralProblemsDoNotHidePhysicsOnes) {
  // One beam loses a table, the other has Sp typed in percent: both are reported in one run, and
  // the repeated slip is one group.
  const TempDir dir;
  const fs::path machine = testing::copy_demo_library(dir.path());
  fs::remove(machine / "6X/tmr.csv");
  std::istringstream in(testing::read_text(machine / "10X/sp.csv"));
  std::string out, line;
  while (std::getline(in, line)) {
    const auto comma = line.find(',');
    if (line.empty() || line[0] == '#' || line.rfind("field_cm", 0) == 0 || comma == std::string::npos) {
      out += line + "\n";
      continue;
    }
    out += line.substr(0, comma + 1) + std::to_string(100.0 * std::stod(line.substr(comma + 1))) + "\n";
  }
  testing::write_text(machine / "10X/sp.csv", out);
  const auto report = validate_library(dir.path());
  EXPECT_EQ(report.beam_count, 5u);  // the demo library's 6X, 10X, 6E, 9E, 12E
  const std::string all = problems_of(report.problems);
  EXPECT_NE(all.find("beam[1].tables.tmr: names '6X/tmr.csv', which does not exist"), std::string::npos)
      << all;
  // The other tables of the incomplete beam are still checked (its PDD is fine, its Sp too).
  const auto groups = group_problems(report.problems);
  bool grouped = false;
  for (const auto& g : groups) {
    if (g.members.size() == 14 &&
        g.text().find("10X/sp.csv: sp: looks like a percentage (about 100 where about 1 is "
                      "expected): 14 cells: rows ") != std::string::npos)
      grouped = true;
  }
  EXPECT_TRUE(grouped) << all;
  EXPECT_NE(all.find("sp(10) = 100, expected 1 within 0.5 %"), std::string::npos) << all;
}

TEST(ValidatorMessages, AnIncompleteBeamsPhysicsIsStillChecked) {
  const TempDir dir;
  const fs::path machine = testing::copy_demo_library(dir.path());
  testing::replace_in_file(machine / "machine.toml", "energy_mv = 6.0\n", "");  // 6X is now incomplete
  testing::set_cell(machine / "6X/pdd.csv", "1.5", 5, "98.00");
  const auto all = problems_of(validate_library(dir.path()).problems);
  EXPECT_NE(all.find("beam[1].energy_mv: missing"), std::string::npos) << all;
  EXPECT_NE(all.find("pdd at dmax: 98 at depth_cm 1.5, field 6 cm"), std::string::npos) << all;
}

}  // namespace
}  // namespace countersign::beamdata
